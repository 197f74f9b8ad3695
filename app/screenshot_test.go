package main

import (
	"context"
	"image/color"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"
)

// torsoColour is the fill of the torso in the robot view (app/ui/scene.go).
var torsoColour = color.RGBA{0x2f, 0x6d, 0x9e, 0xff}

// TestScreenshotShowsRobot builds teeter, runs the real window for three
// seconds under the X display in DISPLAY (make test starts a virtual one with
// xvfb-run) and checks that the picture shows the robot, not a blank window.
func TestScreenshotShowsRobot(t *testing.T) {
	if os.Getenv("DISPLAY") == "" {
		if os.Getenv("TEETER_NEED_DISPLAY") != "" {
			t.Fatal("TEETER_NEED_DISPLAY is set but there is no DISPLAY")
		}
		t.Skip("no X display; make test runs this under xvfb-run")
	}
	if testing.Short() {
		t.Skip("builds the windowed binary")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "teeter")
	build := exec.Command("go", "build", "-o", bin, ".")
	if out, err := build.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	shot := filepath.Join(dir, "shot.png")
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, "--screenshot", shot, "--after", "3s")
	cmd.Env = append(os.Environ(), "FYNE_SCALE=1")
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("teeter --screenshot: %v\n%s", err, out)
	}
	f, err := os.Open(shot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("screenshot is not a PNG: %v", err)
	}
	b := img.Bounds()
	if b.Dx() < 640 || b.Dy() < 400 {
		t.Fatalf("screenshot is %dx%d, too small for the window", b.Dx(), b.Dy())
	}
	torso, colours := 0, map[color.RGBA]bool{}
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			c := color.RGBAModel.Convert(img.At(x, y)).(color.RGBA)
			colours[c] = true
			if near(c, torsoColour) {
				torso++
			}
		}
	}
	// The torso is 320 mm wide and 350 mm tall; drawn to scale it covers
	// well over a thousand pixels at any sensible zoom.
	if torso < 1000 {
		t.Errorf("only %d torso-coloured pixels: the robot is not in the picture", torso)
	}
	if len(colours) < 20 {
		t.Errorf("the picture has %d colours: a blank window", len(colours))
	}
	t.Logf("screenshot %dx%d, %d torso pixels, %d colours", b.Dx(), b.Dy(), torso, len(colours))
}

func near(a, b color.RGBA) bool {
	d := func(x, y uint8) int {
		if x > y {
			return int(x - y)
		}
		return int(y - x)
	}
	return d(a.R, b.R) < 8 && d(a.G, b.G) < 8 && d(a.B, b.B) < 8
}
