package ui

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"sync"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
	"fyne.io/fyne/v2/widget"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/live"
)

// shoveLog wraps the real plant and keeps every shove that reaches it,
// given at once or scheduled.
type shoveLog struct {
	live.Plant[sim.Snapshot]
	mu     *sync.Mutex
	shoves *[]sim.Shove
}

func (s shoveLog) Schedule(list []sim.Shove) error {
	s.mu.Lock()
	*s.shoves = append(*s.shoves, list...)
	s.mu.Unlock()
	return s.Plant.Schedule(list)
}

func (s shoveLog) Shove(sh sim.Shove) error {
	s.mu.Lock()
	*s.shoves = append(*s.shoves, sh)
	s.mu.Unlock()
	return s.Plant.Shove(sh)
}

// openTest opens the window on a built-in robot with the test driver; the
// plant's shoves are logged.
func openTest(t testing.TB, model string) (*Window, func() []sim.Shove) {
	t.Helper()
	// Studies save their results beside the autosave directory: keep both
	// out of the user's configuration.
	t.Setenv(AutosaveEnv, filepath.Join(t.TempDir(), "autosave"))
	a := test.NewTempApp(t)
	var mu sync.Mutex
	var got []sim.Shove
	build := func(r *models.Robot) (live.Plant[sim.Snapshot], live.Tuner, error) {
		p, tu, err := buildPlant(r)
		if err != nil {
			return nil, nil, err
		}
		return shoveLog{p, &mu, &got}, tu, nil
	}
	w, err := newWindow(a, Options{Model: model}, build)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(w.Close)
	w.win.Resize(fyne.NewSize(1280, 800))
	w.refresh()
	return w, func() []sim.Shove {
		mu.Lock()
		defer mu.Unlock()
		return append([]sim.Shove(nil), got...)
	}
}

// torsoPose is where the model puts the root link at the start.
func torsoPose(t testing.TB, w *Window) (models.Pose, *models.Link) {
	t.Helper()
	poses, err := w.robot.InitialPoses()
	if err != nil {
		t.Fatal(err)
	}
	return poses[w.robot.Root], w.robot.Link(w.robot.Root)
}

func TestDragOnTheRobotShovesIt(t *testing.T) {
	w, shoves := openTest(t, "builtin:frontal")
	w.win.Canvas().Capture() // lays out and renders the view once
	// Press on the root link's centre of mass as drawn now.
	_, torso := torsoPose(t, w)
	var pose models.Pose
	for _, l := range w.scene.Links {
		if l.Name == w.robot.Root {
			pose = l.Pose
		}
	}
	c := pose.Apply(torso.CenterOfMass())
	rv := w.view
	px, py := rv.v.toPixel(c)
	s := rv.pixelScale()
	start := fyne.NewPos(float32(px/s), float32(py/s))
	const dx, dy = 40, -15 // right and up on the screen
	// As the desktop driver does: two moves, each event carrying where the
	// pointer is and how far it moved since the last one, then the release.
	rv.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: start.Add(fyne.NewPos(dx/2, dy/2))}, Dragged: fyne.Delta{DX: dx / 2, DY: dy / 2}})
	rv.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: start.Add(fyne.NewPos(dx, dy))}, Dragged: fyne.Delta{DX: dx / 2, DY: dy / 2}})
	rv.DragEnd()
	if err := <-w.run.StepOnce(); err != nil {
		t.Fatal(err)
	}
	got := shoves()
	if len(got) != 1 {
		t.Fatalf("%d shoves reached the plant, want 1", len(got))
	}
	sh := got[0]
	// The impulse is the stated scale (help: N*s per metre dragged) times the
	// world distance dragged; screen y grows downwards, world y upwards.
	metres := float64(s) / rv.v.Scale
	want := models.Vec2{X: shoveScale * dx * metres, Y: -shoveScale * dy * metres}
	if sh.Link != w.robot.Root || math.Abs(sh.Impulse.X-want.X) > 1e-6 || math.Abs(sh.Impulse.Y-want.Y) > 1e-6 {
		t.Fatalf("shove %+v on %q, want %+v on %q", sh.Impulse, sh.Link, want, w.robot.Root)
	}
	if sh.Impulse.X <= 0 || sh.Impulse.Y <= 0 {
		t.Fatalf("a drag right and up gave %+v", sh.Impulse)
	}
	// Applied where the drag started: the torso's centre of mass in its frame.
	com := torso.CenterOfMass()
	if sh.Point == nil || math.Hypot(sh.Point.X-com.X, sh.Point.Y-com.Y) > 1e-3 {
		t.Fatalf("shove point %v, want %v", sh.Point, com)
	}

	// Through the canvas: the drag finds the view under the pointer.
	origin := fyne.CurrentApp().Driver().AbsolutePositionForObject(rv)
	test.Drag(w.win.Canvas(), origin.Add(start).Add(fyne.NewPos(dx, dy)), dx, dy)
	<-w.run.StepOnce()
	if got := shoves(); len(got) != 2 || got[1].Link != w.robot.Root || math.Abs(got[1].Impulse.X-want.X) > 1e-6 {
		t.Fatalf("a drag through the canvas gave %+v, want %+v", got[1:], want)
	}

	// Keyboard shoves go left and right by the set size.
	w.keyShove = 3
	w.typedKey(&fyne.KeyEvent{Name: fyne.KeyLeft})
	<-w.run.StepOnce()
	if got := shoves(); len(got) != 3 || got[2].Impulse.X != -3 || got[2].Impulse.Y != 0 {
		t.Fatalf("keyboard shove: %+v", got)
	}
}

func TestGainSliderTunesTheRunningGraphAndUndoRestores(t *testing.T) {
	w, _ := openTest(t, "builtin:frontal")
	if len(w.params) == 0 {
		t.Fatal("the frontal robot's controller has no tunable parameters")
	}
	p := w.params[0]
	for _, q := range w.params {
		if strings.HasSuffix(q.Path, ".kp") {
			p = q
			break
		}
	}
	row := w.gainRows[p.Path]
	want := p.Value + (row.slider.Max-row.slider.Min)/4
	if want > row.slider.Max {
		want = p.Value - (row.slider.Max-row.slider.Min)/4
	}
	want = math.Round(want/row.slider.Step) * row.slider.Step
	row.slider.SetValue(want)
	if got, err := w.run.Gain(p.Path); err != nil || math.Abs(got-want) > 1e-12 {
		t.Fatalf("%s in the running graph is %g (%v), want %g", p.Path, got, err, want)
	}
	w.Undo()
	if got, _ := w.run.Gain(p.Path); got != p.Value {
		t.Fatalf("after undo %s is %g, want the file value %g", p.Path, got, p.Value)
	}
	if row.slider.Value != math.Max(row.slider.Min, math.Min(row.slider.Max, p.Value)) {
		t.Fatalf("slider shows %g after undo", row.slider.Value)
	}
	w.Redo()
	if got, _ := w.run.Gain(p.Path); math.Abs(got-want) > 1e-12 {
		t.Fatalf("after redo %s is %g, want %g", p.Path, got, want)
	}
	// The entry refuses a wrong unit and says why; nothing is applied.
	row.field.Entry.SetText("3 kg")
	if row.field.submit(row.field.Entry.Text) || !row.field.Reason.Visible() {
		t.Fatal("a mass was accepted for a gain")
	}
	if got, _ := w.run.Gain(p.Path); math.Abs(got-want) > 1e-12 {
		t.Fatalf("a refused entry changed the gain to %g", got)
	}
}

func TestEntriesRefuseBadText(t *testing.T) {
	var applied []float64
	f := newNumberField("m", 0, 0.01, func(v float64) { applied = append(applied, v) })
	for _, bad := range []string{"abc", "5 deg", "2 cm", "-1 mm", "NaN"} {
		// 2 cm is 0.02 m, above the 0.01 m limit; 5 deg is an angle, not a length.
		if f.submit(bad) {
			t.Errorf("%q was accepted", bad)
		}
		if f.Reason.Text == "" || !f.Reason.Visible() {
			t.Errorf("%q refused without a reason", bad)
		}
	}
	if !f.submit("2 mm") || len(applied) != 1 || math.Abs(applied[0]-0.002) > 1e-15 {
		t.Fatalf("2 mm gave %v, want 0.002 m (SI: 1 mm = 0.001 m)", applied)
	}
	if f.Reason.Visible() {
		t.Fatal("the reason stayed after a good entry")
	}
	// An integral gain in 1/s: shown as "0.4 1/s", which must read back, and
	// the same dimension written in hertz (1 Hz = 1/s, SI) is accepted too.
	applied = nil
	ki := newNumberField("1/s", 0, 100, func(v float64) { applied = append(applied, v) })
	ki.show(0.4)
	if !ki.submit(ki.Entry.Text) || !ki.submit("2 Hz") || ki.submit("2 m") {
		t.Fatalf("1/s entry: applied %v, reason %q", applied, ki.Reason.Text)
	}
	if len(applied) != 2 || applied[0] != 0.4 || applied[1] != 2 {
		t.Fatalf("1/s entry applied %v, want 0.4 and 2", applied)
	}
}

func TestBadRobotFileShowsEveryProblemAndKeepsTheSession(t *testing.T) {
	w, _ := openTest(t, "builtin:frontal")
	src, err := models.BuiltinSource("frontal")
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(string(src), "\n")
	// Break two fields on two known lines: a negative mass and a number
	// that is not one.
	var broken []int
	for i, l := range lines {
		if strings.Contains(l, "mass:") && len(broken) < 2 {
			indent := l[:len(l)-len(strings.TrimLeft(l, " "))]
			if len(broken) == 0 {
				lines[i] = indent + "mass: -3 kg"
			} else {
				lines[i] = indent + "mass: heavy"
			}
			broken = append(broken, i+1)
		}
	}
	path := filepath.Join(t.TempDir(), "bad.yaml")
	if err := os.WriteFile(path, []byte(strings.Join(lines, "\n")), 0o644); err != nil {
		t.Fatal(err)
	}
	before := w.robot
	if err := w.OpenRobot(path); err == nil {
		t.Fatal("a bad file opened")
	}
	if w.robot != before {
		t.Fatal("the session's robot was replaced")
	}
	text := dialogText(t, w.win.Canvas())
	for _, line := range broken {
		if !strings.Contains(text, fmt.Sprintf("bad.yaml:%d:", line)) {
			t.Errorf("the error does not point at line %d:\n%s", line, text)
		}
	}
	if err := <-w.run.StepOnce(); err != nil {
		t.Fatalf("the kept session does not run: %v", err)
	}
	// The good file opens, replaces the session and joins the recent files.
	good := filepath.Join(t.TempDir(), "good.yaml")
	if err := os.WriteFile(good, src, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := w.OpenRobot(good); err != nil {
		t.Fatal(err)
	}
	if w.robot == before || w.path != good {
		t.Fatal("the good file did not replace the session")
	}
	if recent := w.app.Preferences().StringList(recentKey); len(recent) == 0 || recent[0] != good {
		t.Fatalf("recent files %v, want %s first", recent, good)
	}
	if err := <-w.run.StepOnce(); err != nil {
		t.Fatalf("the opened robot does not run: %v", err)
	}
}

// dialogText gathers the text of the labels shown over the window.
func dialogText(t *testing.T, c fyne.Canvas) string {
	var b strings.Builder
	var walk func(o fyne.CanvasObject)
	walk = func(o fyne.CanvasObject) {
		switch v := o.(type) {
		case *widget.Label:
			b.WriteString(v.Text + "\n")
		case fyne.Widget:
			r := test.TempWidgetRenderer(t, v)
			for _, ch := range r.Objects() {
				walk(ch)
			}
			return
		case *fyne.Container:
			for _, ch := range v.Objects {
				walk(ch)
			}
		}
	}
	for _, o := range c.Overlays().List() {
		walk(o)
	}
	return b.String()
}

func near(a, b color.RGBA, tol int) bool {
	d := func(x, y uint8) bool { return int(x)-int(y) <= tol && int(y)-int(x) <= tol }
	return d(a.R, b.R) && d(a.G, b.G) && d(a.B, b.B)
}

func TestRobotViewDrawsTheRobotWhereTheModelSays(t *testing.T) {
	for _, model := range []string{"builtin:frontal", "builtin:sagittal", "builtin:pendulum"} {
		w, _ := openTest(t, model)
		img := w.view.render(640, 480).(*image.RGBA)
		colours := map[color.RGBA]bool{}
		for y := 0; y < 480; y += 4 {
			for x := 0; x < 640; x += 4 {
				colours[img.RGBAAt(x, y)] = true
			}
		}
		if len(colours) < 6 {
			t.Errorf("%s: the view has %d colours: blank", model, len(colours))
		}
		// The root link's shape centre, placed by the model's own initial
		// poses, projected with the view, must be painted in the root colour.
		pose, root := torsoPose(t, w)
		c := pose.Apply(root.Shape.Center)
		px, py := w.view.v.toPixel(c)
		hits, total := 0, 0
		for dy := -3; dy <= 3; dy++ {
			for dx := -3; dx <= 3; dx++ {
				total++
				if near(img.RGBAAt(int(px)+dx, int(py)+dy), pal.Torso, 8) {
					hits++
				}
			}
		}
		if hits < total*3/4 {
			t.Errorf("%s: %d of %d pixels around the root centre (%.0f, %.0f) have the root colour", model, hits, total, px, py)
		}
		// And the ground line is below it.
		gx, gy := w.view.v.toPixel(models.Vec2{X: c.X, Y: -0.01})
		if !near(img.RGBAAt(int(gx), int(gy)+3), pal.Ground, 8) {
			t.Errorf("%s: no ground under the robot at (%.0f, %.0f)", model, gx, gy)
		}
	}
}

func TestHelpHasTheSafetyNotes(t *testing.T) {
	h := helpText()
	for _, s := range []string{"not a certificate", "crush fingers", "tethered", "emergency stop", "local codes"} {
		if !strings.Contains(h, s) {
			t.Errorf("help lacks %q", s)
		}
	}
}

// BenchmarkFrame draws one frame: the robot view and six traces over a
// 10 s window of a run, as the window's refresh does.
func BenchmarkFrame(b *testing.B) {
	w, _ := openTest(b, "builtin:frontal")
	<-w.run.SetSpeed(0)
	<-w.run.Run()
	for w.run.Status().Time < 10 && w.run.Status().Err == nil && !w.run.Status().Fallen {
		runtime.Gosched()
	}
	<-w.run.Pause()
	w.lastVer = 0
	w.refresh()
	if len(w.traces.shown) != 6 {
		b.Fatalf("%d traces shown, want 6", len(w.traces.shown))
	}
	b.ResetTimer()
	for range b.N {
		w.lastVer = 0
		w.refresh()
		w.view.render(800, 500)
		w.traces.render(800, 420)
	}
}

func TestGainFilesRoundTripAndBadOnesChangeNothing(t *testing.T) {
	w, _ := openTest(t, "builtin:frontal")
	p := w.params[0]
	dir := t.TempDir()
	path := filepath.Join(dir, "gains.yaml")
	if err := w.SaveGains(path); err != nil {
		t.Fatal(err)
	}
	w.setGain(p.Path, p.Value+0.5, false)
	if err := w.LoadGains(path); err != nil {
		t.Fatal(err)
	}
	if got, _ := w.run.Gain(p.Path); got != p.Value {
		t.Fatalf("after loading the saved set %s is %g, want %g", p.Path, got, p.Value)
	}
	// A set naming a missing parameter is refused whole.
	w.setGain(p.Path, p.Value+1, false)
	bad := filepath.Join(dir, "bad.yaml")
	if err := w.SaveGains(bad); err != nil {
		t.Fatal(err)
	}
	w.setGain(p.Path, p.Value, false)
	data, _ := os.ReadFile(bad)
	data = append(data, []byte("  \"no_such_block.kp\": 1\n")...)
	if err := os.WriteFile(bad, data, 0o644); err != nil {
		t.Fatal(err)
	}
	if err := w.LoadGains(bad); err == nil {
		t.Fatal("a gain set with an unknown parameter loaded")
	}
	if got, _ := w.run.Gain(p.Path); got != p.Value {
		t.Fatalf("a refused gain set changed %s to %g", p.Path, got)
	}
}

func TestExportsWriteWholeFiles(t *testing.T) {
	w, _ := openTest(t, "builtin:pendulum")
	for range 20 {
		if err := <-w.run.StepOnce(); err != nil {
			t.Fatal(err)
		}
	}
	dir := t.TempDir()
	csv := filepath.Join(dir, "t.csv")
	if err := w.ExportCSV(csv); err != nil {
		t.Fatal(err)
	}
	data, _ := os.ReadFile(csv)
	lines := strings.Split(strings.TrimSpace(string(data)), "\n")
	// A header and a row at the start and then every k-th tick, where k
	// ticks of the controller (rate from its file) make at least the
	// trace's 5 ms sample interval.
	k := int(math.Ceil(w.spec.Rate/200 - 1e-9))
	if want := 1 + 20/max(k, 1) + 1; len(lines) != want || !strings.HasPrefix(lines[0], "time [s],") {
		t.Fatalf("CSV has %d lines, header %q; want %d and a time column", len(lines), lines[0], want)
	}
	if n := strings.Count(lines[0], ","); strings.Count(lines[len(lines)-1], ",") != n {
		t.Fatal("rows and header have different numbers of columns")
	}
	header := filepath.Join(dir, "g.h")
	if err := w.ExportHeader(header); err != nil {
		t.Fatal(err)
	}
	if h, _ := os.ReadFile(header); !strings.Contains(string(h), "static const float") {
		t.Fatalf("firmware header without constants:\n%s", h)
	}
	png := filepath.Join(dir, "p.png")
	if err := w.ExportPlotPNG(png); err != nil {
		t.Fatal(err)
	}
	if fi, err := os.Stat(png); err != nil || fi.Size() < 1000 {
		t.Fatalf("plot PNG: %v", err)
	}
	if left, _ := filepath.Glob(filepath.Join(dir, ".*.tmp")); len(left) != 0 {
		t.Fatalf("temporary files left: %v", left)
	}
}

func TestEditingTheGraphValidatesBeforeApplying(t *testing.T) {
	w, _ := openTest(t, "builtin:pendulum")
	blocks := len(w.spec.Blocks)
	// Removing a block that others read from is refused: the wiring check
	// names the missing source, and the running controller stays.
	var used string
	for _, b := range w.spec.Blocks {
		for _, in := range b.Inputs {
			if name, _, _ := strings.Cut(in.Source, "."); name != "" && used == "" {
				for _, c := range w.spec.Blocks {
					if c.Name == name {
						used = name
					}
				}
			}
		}
	}
	if used == "" {
		t.Fatal("no wired block in the pendulum controller")
	}
	if err := w.editController(func(c *models.Value) error { return removeBlock(c, used) }); err == nil {
		t.Fatalf("removing %s, which other blocks read, was accepted", used)
	} else if !strings.Contains(err.Error(), used) {
		t.Fatalf("the refusal does not name %s: %v", used, err)
	}
	if len(w.spec.Blocks) != blocks {
		t.Fatal("a refused edit changed the graph")
	}
	// Adding a block wired to an existing one is accepted and runs.
	src := w.spec.Blocks[0].Name
	err := w.editController(func(c *models.Value) error {
		return addBlock(c, "name: watch\nkind: pid\ninput: {setpoint: 0, measurement: "+src+"}\nkp: 2\n")
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(w.spec.Blocks) != blocks+1 || w.gainRows["watch.kp"] == nil {
		t.Fatalf("the new block is not in the graph and gains (%d blocks)", len(w.spec.Blocks))
	}
	if v, err := w.run.Gain("watch.kp"); err != nil || v != 2 {
		t.Fatalf("watch.kp in the running graph: %g, %v", v, err)
	}
	// Rewiring to a block that does not exist is refused.
	var watch *control.BlockSpec
	for _, b := range w.spec.Blocks {
		if b.Name == "watch" {
			watch = b
		}
	}
	if err := w.editController(func(c *models.Value) error { return rewire(c, watch, "measurement", "nowhere") }); err == nil {
		t.Fatal("wiring to a missing block was accepted")
	}
	if err := <-w.run.StepOnce(); err != nil {
		t.Fatal(err)
	}
}

func TestPlotsFreezeAndDrawThePinnedRunBehind(t *testing.T) {
	w, _ := openTest(t, "builtin:pendulum")
	for range 100 {
		<-w.run.StepOnce()
	}
	w.run.PinReference()
	<-w.run.Reset()
	<-w.run.StepOnce()
	w.refresh()
	if !w.traces.hasRef || len(w.traces.ref.Time) < 20 {
		t.Fatalf("the pinned run is not in the plots (%d samples)", len(w.traces.ref.Time))
	}
	img := w.traces.render(600, 400).(*image.RGBA)
	grey := 0
	for y := 0; y < 400; y++ {
		for x := 0; x < 600; x++ {
			if img.RGBAAt(x, y) == pal.Reference {
				grey++
			}
		}
	}
	if grey < 50 {
		t.Fatalf("%d pixels of the reference colour: the pinned run is not drawn", grey)
	}
	// Frozen plots keep their data while the run goes on.
	w.frozen = true
	n := len(w.traces.data.Time)
	for range 10 {
		<-w.run.StepOnce()
	}
	w.refresh()
	if len(w.traces.data.Time) != n {
		t.Fatalf("frozen plots changed from %d to %d samples", n, len(w.traces.data.Time))
	}
	w.frozen = false
	w.lastVer = 0
	w.refresh()
	if len(w.traces.data.Time) <= n {
		t.Fatal("unfrozen plots did not catch up")
	}
}

func TestZoomAndPanMoveTheView(t *testing.T) {
	w, _ := openTest(t, "builtin:frontal")
	w.view.render(600, 400)
	before := w.view.v
	w.view.Scrolled(&fyne.ScrollEvent{Scrolled: fyne.Delta{DY: 10}})
	w.view.render(600, 400)
	// One scroll step zooms by 1.1 (the view's stated step).
	if r := w.view.v.Scale / before.Scale; math.Abs(r-1.1) > 1e-9 {
		t.Fatalf("zoom ratio %g, want 1.1", r)
	}
	// A drag on empty sky pans: the world point under the pointer follows it.
	at := fyne.NewPos(20, 20) // top left: sky, away from the robot
	grabbed := w.view.toWorld(at)
	w.view.Dragged(&fyne.DragEvent{PointEvent: fyne.PointEvent{Position: at.Add(fyne.NewPos(30, 0))}, Dragged: fyne.Delta{DX: 30}})
	w.view.DragEnd()
	w.view.render(600, 400)
	now := w.view.toWorld(at.Add(fyne.NewPos(30, 0)))
	if math.Abs(now.X-grabbed.X) > 1e-9 || math.Abs(now.Y-grabbed.Y) > 1e-9 {
		t.Fatalf("the grabbed point moved to %v, want %v under the pointer", now, grabbed)
	}
	w.view.resetView()
	w.view.render(600, 400)
	if w.view.v.Scale != before.Scale {
		t.Fatal("fit did not return to the fitted view")
	}
}

func TestScheduledShovesFromThePanelReachThePlant(t *testing.T) {
	// The plant times them (sim's tests); the panel's list must reach it.
	w, shoves := openTest(t, "builtin:frontal")
	w.shoves.list = sim.FirstRandomShoves(4, 7, trainStart, 0.5, 0.6, 2, nil)
	train := slices.Clone(w.shoves.list)
	w.shoves.changed()
	<-w.run.StepOnce() // after the schedule, in the runner's order
	if got := shoves(); !slices.Equal(got, train) {
		t.Fatalf("plant got %+v, want %+v", got, train)
	}
}
