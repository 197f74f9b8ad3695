package main

import (
	"context"
	"fmt"
	"image/color"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"
)

// TestScreenshotsAtTheScreenSizes runs the real window at a laptop's
// 1280 x 800 and a desktop's 1920 x 1080 under the X display and checks
// the pictures: the window keeps the size it was given (it never grows to
// fit its content) and shows the robot view with the robot and its floor.
// The pictures are kept in $TEETER_SHOTS when set, to look at.
func TestScreenshotsAtTheScreenSizes(t *testing.T) {
	if os.Getenv("DISPLAY") == "" {
		t.Skip("no X display; make test runs this under xvfb-run")
	}
	if testing.Short() {
		t.Skip("builds the windowed binary")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "teeter")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	keep := os.Getenv("TEETER_SHOTS")
	for _, size := range [][2]int{{1280, 800}, {1920, 1080}} {
		name := fmt.Sprintf("%dx%d", size[0], size[1])
		shot := filepath.Join(dir, name+".png")
		if keep != "" {
			shot = filepath.Join(keep, name+".png")
		}
		ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
		cmd := exec.CommandContext(ctx, bin, "window", "--screenshot", shot, "--after", "2s", "--size", name)
		cmd.Env = append(os.Environ(), "FYNE_SCALE=1", "TEETER_AUTOSAVE_DIR="+filepath.Join(dir, "autosave"))
		out, err := cmd.CombinedOutput()
		cancel()
		if err != nil {
			t.Fatalf("%s: %v\n%s", name, err, out)
		}
		f, err := os.Open(shot)
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(f)
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		b := img.Bounds()
		if b.Dx() != size[0] || b.Dy() != size[1] {
			t.Errorf("%s: the window is %dx%d: it did not keep its size", name, b.Dx(), b.Dy())
			continue
		}
		torso := make([][]bool, b.Dy())
		for y := range torso {
			torso[y] = make([]bool, b.Dx())
			for x := range torso[y] {
				torso[y][x] = near(color.RGBAModel.Convert(img.At(x, y)).(color.RGBA), torsoColour)
			}
		}
		// The torso drawn to scale holds a solid 20-pixel square in the
		// left part of the window, where the robot view is.
		if x, _, ok := solidBlock(torso, 20, 20, 0); !ok || x > b.Dx()*2/3 {
			t.Errorf("%s: no robot in the robot view (torso block found %v at x %d)", name, ok, x)
		}
	}
}
