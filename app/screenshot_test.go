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

// torsoColour and groundColour are fills of the robot view
// (app/ui/look.go). The torso's colour is also the first trace's, but a
// trace is a line: only the robot view paints a solid block of it, with
// the ground's fill below.
var (
	torsoColour  = color.RGBA{0x2f, 0x6d, 0x9e, 0xff}
	groundColour = color.RGBA{0x8a, 0x7f, 0x6c, 0xff}
)

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
	colours := map[color.RGBA]bool{}
	torso := make([][]bool, b.Dy())
	ground := make([][]bool, b.Dy())
	for y := range torso {
		torso[y], ground[y] = make([]bool, b.Dx()), make([]bool, b.Dx())
		for x := range torso[y] {
			c := color.RGBAModel.Convert(img.At(b.Min.X+x, b.Min.Y+y)).(color.RGBA)
			colours[c] = true
			torso[y][x], ground[y][x] = near(c, torsoColour), near(c, groundColour)
		}
	}
	// The torso is 320 mm wide and 350 mm tall: drawn to scale at any
	// sensible zoom it holds a solid 20-pixel square, which no trace line
	// does; the ground is a band across the view below the feet.
	tx, ty, ok := solidBlock(torso, 20, 20, 0)
	if !ok {
		t.Fatal("no solid block of torso colour: the robot is not in the picture")
	}
	gx, gy, ok := solidBlock(ground, 60, 8, ty+20)
	if !ok {
		t.Fatalf("no solid band of ground colour below the torso at (%d, %d): the robot view is not drawn", tx, ty)
	}
	if len(colours) < 20 {
		t.Errorf("the picture has %d colours: a blank window", len(colours))
	}
	t.Logf("screenshot %dx%d, torso block at (%d, %d), ground at (%d, %d), %d colours", b.Dx(), b.Dy(), tx, ty, gx, gy, len(colours))
}

// solidBlock finds the top-left corner of a w x h block of true cells at or
// below row y0, scanning rows from the top.
func solidBlock(mask [][]bool, w, h, y0 int) (x, y int, ok bool) {
	// run[x] counts the true cells ending at the current row in column x.
	run := make([]int, len(mask[0]))
	for y := range mask {
		width := 0
		for x := range mask[y] {
			if mask[y][x] {
				run[x]++
			} else {
				run[x] = 0
			}
			if run[x] >= h && y-h+1 >= y0 {
				width++
			} else {
				width = 0
			}
			if width >= w {
				return x - w + 1, y - h + 1, true
			}
		}
	}
	return 0, 0, false
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
