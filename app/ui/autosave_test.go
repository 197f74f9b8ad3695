package ui

import (
	"bufio"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"teeter/control"
)

// childEnv makes the test binary run TestAutosaveChild as the window that
// gets killed.
const childEnv = "TEETER_UI_AUTOSAVE_CHILD"

// The gain and robot parameter the child changes, and their new values.
const (
	childGain  = "ankle_loop.kp"
	childParam = "sensors.noise"
	childNoise = 0.25
)

// changedGain is the child's new value for childGain: a little above the
// file's value, within range.
func changedGain(file float64) float64 { return file*1.5 + 0.125 }

// sessionUnder finds a window's autosave under the autosave directory,
// whether its window is still open or not.
func sessionUnder(root string) (dir string, s session, found bool) {
	entries, _ := os.ReadDir(root)
	for _, e := range entries {
		d := filepath.Join(root, e.Name())
		if got, ok, err := readSession(d); ok && err == nil {
			return d, got, true
		}
	}
	return "", session{}, false
}

// waitFor polls until ok holds; the test binary's own timeout bounds it.
func waitFor(ok func() bool) {
	for !ok() {
		time.Sleep(20 * time.Millisecond)
	}
}

// TestAutosaveChild is the child's side of
// TestKilledWindowIsRestored: it changes a gain and a robot parameter,
// waits until both are in the autosave, says so and blocks until killed.
func TestAutosaveChild(t *testing.T) {
	if os.Getenv(childEnv) == "" {
		t.Skip("run by TestKilledWindowIsRestored")
	}
	dir := os.Getenv(AutosaveEnv)
	w, err := newWindow(test.NewTempApp(t), Options{Model: "builtin:pendulum", Autosave: true}, buildPlant)
	if err != nil {
		t.Fatal(err)
	}
	row := w.gainRows[childGain]
	if row == nil {
		t.Fatalf("no gain %s", childGain)
	}
	want := changedGain(row.info.Value)
	w.applyRobotParam(childParam, childNoise)
	w.setGain(childGain, want, false)
	waitFor(func() bool {
		own, s, found := sessionUnder(dir)
		gs, err := control.ReadGains(filepath.Join(own, gainsFile))
		if !found || err != nil || len(s.Params) == 0 {
			return false
		}
		for _, g := range gs.Gains {
			if g.Path == childGain && g.Value == want {
				return true
			}
		}
		return false
	})
	fmt.Println("AUTOSAVED")
	select {}
}

func TestKilledWindowIsRestored(t *testing.T) {
	if os.Getenv(childEnv) != "" {
		t.Skip("in the child")
	}
	dir := filepath.Join(t.TempDir(), "autosave")
	cmd := exec.Command(os.Args[0], "-test.run=^TestAutosaveChild$", "-test.count=1")
	cmd.Env = append(os.Environ(), childEnv+"=1", AutosaveEnv+"="+dir)
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	lines := bufio.NewScanner(out)
	ready := false
	for !ready && lines.Scan() {
		ready = strings.Contains(lines.Text(), "AUTOSAVED")
	}
	// SIGKILL: no handler, no deferred cleanup, as in a crash.
	if err := cmd.Process.Kill(); err != nil {
		t.Fatal(err)
	}
	cmd.Wait()
	if !ready {
		t.Fatal("the child ended before its autosave was written")
	}
	if _, _, found := sessionUnder(dir); !found {
		t.Fatal("no autosave left by the killed window")
	}

	t.Setenv(AutosaveEnv, dir)
	w, err := newWindow(test.NewTempApp(t), Options{Model: "builtin:frontal", Restore: true}, buildPlant)
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	row := w.gainRows[childGain]
	if row == nil {
		t.Fatalf("the restored window has no gain %s: the robot was not restored", childGain)
	}
	want := changedGain(fileGains(t, "builtin:pendulum")[childGain])
	if got, err := w.run.Gain(childGain); err != nil || got != want || w.gains[childGain] != want {
		t.Fatalf("restored %s: running %g (%v), shown %g; want %g", childGain, got, err, w.gains[childGain], want)
	}
	if w.rparam[childParam] != childNoise || w.path != "builtin:pendulum" {
		t.Fatalf("restored robot changes %v from %q", w.rparam, w.path)
	}
	if robot := w.run.Robot(); robot.Name != w.robot.Name || len(w.spec.Blocks) == 0 {
		t.Fatal("the restored robot does not run its controller")
	}
	// A normal close removes the autosave: nothing is offered next time.
	w.Close()
	if d, _, found := sessionUnder(dir); found {
		t.Fatalf("an autosave outlived a normal close and a restore: %s", d)
	}
}

func TestUncleanAutosaveIsOfferedAndDiscardKeepsTheStart(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "autosave")
	t.Setenv(AutosaveEnv, dir)
	a := test.NewTempApp(t)
	first, err := newWindow(a, Options{Model: "builtin:pendulum", Autosave: true}, buildPlant)
	if err != nil {
		t.Fatal(err)
	}
	p := first.params[0]
	first.setGain(p.Path, p.Value+0.5, false)
	waitFor(func() bool { _, _, found := sessionUnder(dir); return found })
	// Left open, as a crashed window would be: its autosave stays. Its
	// goroutine is stopped without the clean-exit removal.
	close(first.saver.quit)
	<-first.saver.done
	first.saver = nil
	first.Close()

	w, err := newWindow(a, Options{Model: "builtin:frontal", Autosave: true}, buildPlant)
	if err != nil {
		t.Fatal(err)
	}
	defer w.Close()
	if text := dialogText(t, w.win.Canvas()); !strings.Contains(text, "did not close normally") {
		t.Fatalf("no restore offer shown: %q", text)
	}
	if w.saver != nil {
		t.Fatal("autosaving began before the user chose, over the old session")
	}
	if w.robot.Source != "builtin:frontal" {
		t.Fatalf("the offer changed the robot before an answer: %s", w.robot.Source)
	}
	discard := findButton(t, w.win.Canvas(), "Discard")
	if discard == nil {
		t.Fatal("the offer has no Discard button")
	}
	test.Tap(discard)
	if w.saver == nil || w.robot.Source != "builtin:frontal" {
		t.Fatal("after Discard the window does not autosave its own session")
	}
	// The window's own session replaces the discarded one.
	waitFor(func() bool { _, s, found := sessionUnder(dir); return found && s.Path == "builtin:frontal" })
}

// findButton finds a button by its text among the canvas's overlays.
func findButton(t *testing.T, c fyne.Canvas, text string) *widget.Button {
	var found *widget.Button
	var walk func(o fyne.CanvasObject)
	walk = func(o fyne.CanvasObject) {
		switch v := o.(type) {
		case *widget.Button:
			if v.Text == text {
				found = v
			}
		case fyne.Widget:
			for _, ch := range test.TempWidgetRenderer(t, v).Objects() {
				walk(ch)
			}
		case *fyne.Container:
			for _, ch := range v.Objects {
				walk(ch)
			}
		}
	}
	for _, o := range c.Overlays().List() {
		walk(o)
	}
	return found
}
