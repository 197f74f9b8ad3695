package ui

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fyne.io/fyne/v2/test"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// TestFitFromTheWindow: a log of the frontal robot whose torso IMU lags 2
// samples (the file says 1) is opened beside the running robot; its
// columns become the traces' reference, number for number as the file has
// them, and Fit… finds the latency exactly (the bound: whole
// samples), shows the overlay, and Apply puts the value in the window's
// robot.
func TestFitFromTheWindow(t *testing.T) {
	w, _ := openTest(t, "builtin:frontal")
	pump := uiThread(w)
	hidden, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		t.Fatal(err)
	}
	if err := models.SetParam(hidden.Robot, "sensors.torso_imu.latency", 2); err != nil {
		t.Fatal(err)
	}
	shoves := []sim.Shove{{At: 0.5, Impulse: models.Vec2{X: 1}}, {At: 1.5, Impulse: models.Vec2{X: -1}}}
	o, err := hidden.Run(2, sim.Options{Seed: 9, Shoves: shoves})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := o.Rec.WriteCSV(&buf); err != nil {
		t.Fatal(err)
	}
	file := filepath.Join(t.TempDir(), "bench.csv")
	if err := os.WriteFile(file, buf.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}

	bad := filepath.Join(t.TempDir(), "bad.csv")
	os.WriteFile(bad, []byte("tilt\n1\n"), 0o644)
	if w.OpenLog(bad) == nil || w.fit != nil {
		t.Fatal("a log without a time column was opened")
	}
	if err := w.OpenLog(file); err != nil {
		t.Fatal(err)
	}
	w.shown = []string{"torso_imu.tilt"}
	w.lastVer = 0
	w.refresh()
	tv := w.traces
	c := o.Rec.Index("torso_imu.tilt")
	if !tv.hasRef || len(tv.ref.Values) != 1 || len(tv.ref.Time) != o.Rec.Len() {
		t.Fatalf("the log is not the traces' reference: %v, %d signals, %d samples of %d", tv.hasRef, len(tv.ref.Values), len(tv.ref.Time), o.Rec.Len())
	}
	for i := 0; i < o.Rec.Len(); i += 37 {
		// The CSV writes each number in full, so it reads back as written.
		if got, want := tv.ref.Values[0][i], o.Rec.At(i, c); got != want {
			t.Fatalf("reference sample %d: %g, the log has %g", i, got, want)
		}
	}

	w.showFit()
	p := w.fit
	p.paths.SetText("sensors.torso_imu.latency")
	p.shoves.SetText("at=0.5s,impulse=1N*s,dir=right; at=1.5s,impulse=1N*s,dir=left")
	test.Tap(p.job.startBtn)
	if !p.job.running() {
		t.Fatalf("the fit did not start: %q", p.job.status.Text)
	}
	pump(p.job.done)
	if p.last == nil || len(p.last.Params) != 1 {
		t.Fatalf("no fit result: %q", p.job.status.Text)
	}
	q := p.last.Params[0]
	t.Logf("%s: %g (identifiable %v); %s", q.Path, q.Value, q.Identifiable, p.job.status.Text)
	if q.Value != 2 || !q.Identifiable {
		t.Errorf("latency %g, want exactly 2 samples", q.Value)
	}
	if shown := strings.Join(labels(p.job.result), "|"); !strings.Contains(shown, "sensors.torso_imu.latency: 1 → 2") {
		t.Errorf("the fitted value is not shown: %s", shown)
	}
	if !hasImage(p.job.result) {
		t.Error("no overlay is shown")
	}
	apply := findButton(t, w.win.Canvas(), "Apply to the robot")
	if apply == nil {
		t.Fatal("the fit dialog has no Apply button")
	}
	test.Tap(apply)
	if v, _ := models.GetParam(w.currentRobot(), "sensors.torso_imu.latency"); v != 2 {
		t.Errorf("after Apply the window's robot has latency %g, want 2", v)
	}
}
