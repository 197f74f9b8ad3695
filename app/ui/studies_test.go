package ui

import (
	"encoding/csv"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"
)

// uiThread stands in for the UI thread in tests: the studies hand their
// updates to it, and pump runs them on the test's goroutine until the
// study's result is shown, as the window's event loop would.
func uiThread(w *Window) (pump func(done <-chan struct{})) {
	queue := make(chan func(), 64)
	w.study.do = func(f func()) { queue <- f }
	return func(done <-chan struct{}) {
		for {
			select {
			case f := <-queue:
				f()
			case <-done:
				return
			}
		}
	}
}

// openStudies opens the pendulum's window for a study test: the window,
// its study panel and the pump of its UI thread.
func openStudies(t *testing.T) (*Window, *studiesPanel, func(done <-chan struct{})) {
	t.Helper()
	w, _ := openTest(t, "builtin:pendulum")
	return w, w.study, uiThread(w)
}

func labels(o fyne.CanvasObject) []string {
	var out []string
	var walk func(o fyne.CanvasObject)
	walk = func(o fyne.CanvasObject) {
		switch v := o.(type) {
		case *widget.Label:
			out = append(out, v.Text)
		case *fyne.Container:
			for _, c := range v.Objects {
				walk(c)
			}
		case *container.Scroll:
			walk(v.Content)
		}
	}
	walk(o)
	return out
}

func readCSV(t *testing.T, pattern string) [][]string {
	t.Helper()
	files, _ := filepath.Glob(filepath.Join(studiesDir(), pattern))
	if len(files) != 1 {
		t.Fatalf("saved files %v, want one %s", files, pattern)
	}
	f, err := os.Open(files[0])
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	return rows
}

func TestMarginStudyFromTheWindow(t *testing.T) {
	_, p, pump := openStudies(t)
	p.mDirs.SetText("left, right")
	p.mSettle.Entry.SetText("0.5 s")
	p.mTol.Entry.SetText("1")
	p.mMax.Entry.SetText("4")
	p.mSeeds.Entry.SetText("2")
	test.Tap(p.margin.startBtn)
	if !p.margin.running() || !p.margin.startBtn.Disabled() {
		t.Fatalf("the study did not start: %q", p.margin.status.Text)
	}
	pump(p.margin.done)
	if p.margin.running() || p.margin.startBtn.Disabled() || !p.margin.cancelBtn.Disabled() {
		t.Fatal("the buttons were not put back after the study")
	}
	if v := p.margin.bar.Value; v != 1 {
		t.Errorf("a finished study's meter reads %.0f %%, want 100 %%", v*100)
	}
	if len(p.lastMargin) != 2 {
		t.Fatalf("%d directions in the result, want 2 (%s)", len(p.lastMargin), p.margin.status.Text)
	}
	t.Logf("margin: %+v", p.lastMargin)
	shown := strings.Join(labels(p.margin.result), "|")
	for _, r := range p.lastMargin {
		if len(r.Seeds) != 2 {
			t.Errorf("%s: %d seeds searched, asked for 2", r.Dir, len(r.Seeds))
		}
		for _, e := range r.Seeds {
			// The bracket the margin study promises (sim/study/margin
			// Edge): survived below fell and no more than the tolerance
			// apart, unless the search stopped at the limit or the robot
			// falls unpushed.
			if !e.Capped && !e.Unpushed && !(e.Survived < e.Fell && e.Fell-e.Survived <= 1+1e-9) {
				t.Errorf("%s, seed %d: survived %g, fell %g", r.Dir, e.Seed, e.Survived, e.Fell)
			}
		}
		if !strings.Contains(shown, r.Dir) {
			t.Errorf("the table does not show %s: %s", r.Dir, shown)
		}
	}
	if !strings.Contains(shown, "Over 2 noise seeds") {
		t.Errorf("the seed count is not shown: %s", shown)
	}
	if !hasImage(p.margin.result) {
		t.Error("no margin plot is shown")
	}
	rows := readCSV(t, "margin-*.csv")
	if len(rows) != 7 || rows[1][0] != "left" || rows[2][0] != "right" || rows[1][1] != "all" {
		t.Fatalf("margin CSV %v", rows)
	}
	if v, _ := strconv.ParseFloat(rows[1][2], 64); v != p.lastMargin[0].Trusted {
		t.Fatalf("CSV says %s survived by every seed, the table %g", rows[1][2], p.lastMargin[0].Trusted)
	}
}

// hasImage tells whether a container holds an image.
func hasImage(o fyne.CanvasObject) bool {
	switch v := o.(type) {
	case *canvas.Image:
		return true
	case *fyne.Container:
		for _, c := range v.Objects {
			if hasImage(c) {
				return true
			}
		}
	}
	return false
}

func TestSweepStudyShowsItsPlotAndCancelKeepsPoints(t *testing.T) {
	_, p, pump := openStudies(t)
	p.sAxis1.SetText("actuators.backlash=0:1mm:2")
	p.sAxis2.SetText("")
	p.sMetric.SetSelected("peak_tilt")
	p.sDuration.Entry.SetText("0.2 s")
	p.sShove.SetText("")
	p.sSeeds.Entry.SetText("3")
	test.Tap(p.sweep.startBtn)
	pump(p.sweep.done)
	res := p.lastSweep
	if res == nil || len(res.Points) != 2 || res.Total != 2 || res.Seeds != 3 {
		t.Fatalf("sweep result %+v (%s)", res, p.sweep.status.Text)
	}
	if !strings.Contains(p.sweep.status.Text, "3 seeds each") {
		t.Errorf("the seed count is not shown: %q", p.sweep.status.Text)
	}
	// The two grid values, 0 and 1 mm, in SI.
	if res.Points[0].Values[0] != 0 || res.Points[1].Values[0] != 0.001 {
		t.Fatalf("points at %v and %v, want 0 and 0.001 m", res.Points[0].Values, res.Points[1].Values)
	}
	var img *canvas.Image
	for _, o := range p.sweep.result.Objects {
		if i, ok := o.(*canvas.Image); ok {
			img = i
		}
	}
	if img == nil || img.Image == nil || img.Image.Bounds().Dx() < 100 {
		t.Fatalf("no plot shown: %v", labels(p.sweep.result))
	}
	if rows := readCSV(t, "sweep-*.csv"); len(rows) != 3 {
		t.Fatalf("sweep CSV has %d rows, want a header and 2 points", len(rows))
	}
	if pngs, _ := filepath.Glob(filepath.Join(studiesDir(), "sweep-*.png")); len(pngs) != 1 {
		t.Fatalf("plot files %v", pngs)
	}

	// A long sweep cancelled at once keeps what it finished.
	p.sAxis1.SetText("actuators.backlash=0:2mm:40")
	p.sAxis2.SetText("sensors.noise=0:2:20")
	p.sDuration.Entry.SetText("3 s")
	test.Tap(p.sweep.startBtn)
	test.Tap(p.sweep.cancelBtn)
	pump(p.sweep.done)
	res = p.lastSweep
	if res == nil || res.Total != 800 || len(res.Points) >= 800 {
		t.Fatalf("cancelled sweep: %+v", res)
	}
	if !strings.HasPrefix(p.sweep.status.Text, "Cancelled") || p.sweep.startBtn.Disabled() {
		t.Fatalf("after cancel: %q", p.sweep.status.Text)
	}
}

func TestTuneStudyAppliesItsGains(t *testing.T) {
	w, p, pump := openStudies(t)
	if p.tPaths.Text == "" {
		t.Fatal("no gains proposed for tuning")
	}
	p.tIterations.Entry.SetText("2")
	p.tShove.SetText("at=0.2s,impulse=0.2N*s,dir=left")
	test.Tap(p.tune.startBtn)
	pump(p.tune.done)
	res := p.lastTune
	if res == nil {
		t.Fatalf("no tuning result: %s", p.tune.status.Text)
	}
	var apply *widget.Button
	for _, o := range p.tune.result.Objects {
		if c, ok := o.(*fyne.Container); ok {
			for _, b := range c.Objects {
				if b, ok := b.(*widget.Button); ok && strings.HasPrefix(b.Text, "Apply") {
					apply = b
				}
			}
		}
	}
	if apply == nil {
		t.Fatal("no apply button")
	}
	test.Tap(apply)
	for i, path := range res.Paths {
		if got, err := w.run.Gain(path); err != nil || got != res.Best[i] {
			t.Fatalf("%s in the running graph is %g (%v), want the tuned %g", path, got, err, res.Best[i])
		}
	}
	if files, _ := filepath.Glob(filepath.Join(studiesDir(), "tune-*.yaml")); len(files) != 1 {
		t.Fatalf("tuned gain files %v", files)
	}
}
