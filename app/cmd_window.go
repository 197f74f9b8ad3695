package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"time"

	"fyne.io/fyne/v2"
	fyneapp "fyne.io/fyne/v2/app"

	"teeter/app/ui"
	"teeter/models"
)

func init() {
	commands = append(commands, command{"window", "open the window (the default when no command is given)", cmdWindow})
}

func cmdWindow(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("window", stderr)
	model := fs.String("model", "builtin:frontal", "robot: builtin:NAME or a robot file")
	gains := fs.String("gains", "", "gain set file applied at the start")
	screenshot := fs.String("screenshot", "", "render the window to this PNG file and exit")
	afterText := fs.String("after", "3s", "with --screenshot: how long to run before the picture")
	restore := fs.Bool("restore", false, "restore the session left by a window that did not close normally, without asking")
	sizeText := fs.String("size", "1280x800", "the window's size in pixels, WIDTHxHEIGHT")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	after, _, err := models.ParseQuantity(*afterText, models.Duration)
	if err != nil || after < 0 {
		return usageError{fmt.Errorf("--after %q: want a duration such as 3s", *afterText)}
	}
	var width, height float32
	if n, err := fmt.Sscanf(*sizeText, "%gx%g", &width, &height); n != 2 || err != nil || width < 320 || height < 240 {
		return usageError{fmt.Errorf("--size %q: want WIDTHxHEIGHT in pixels, at least 320x240, such as 1920x1080", *sizeText)}
	}
	if runtime.GOOS == "linux" && os.Getenv("DISPLAY") == "" && os.Getenv("WAYLAND_DISPLAY") == "" {
		// Without this, the graphics driver panics on the first window.
		return errors.New("no display to open the window on (DISPLAY is not set); " +
			"run it from a desktop session, under xvfb-run, or use 'teeter run' for a headless run")
	}
	a := fyneapp.NewWithID("org.teeter.sim")
	w, err := ui.New(a, ui.Options{Model: *model, Gains: *gains, Run: *screenshot == "",
		Autosave: *screenshot == "", Restore: *restore && *screenshot == "", Size: fyne.NewSize(width, height)})
	if err != nil {
		return err
	}
	defer w.Close()
	if *screenshot != "" {
		if err := w.ShowAndCapture(*screenshot, time.Duration(after*float64(time.Second))); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "wrote %s\n", *screenshot)
		return nil
	}
	w.ShowAndRun()
	return nil
}
