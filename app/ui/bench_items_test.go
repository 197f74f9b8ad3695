package ui

import (
	"image"
	"math"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/test"

	"teeter/control"
	"teeter/models"
	"teeter/sim/rig"
)

// fileGains builds a robot file's own controller and lists its parameters.
func fileGains(t *testing.T, path string) map[string]float64 {
	t.Helper()
	r, err := models.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	spec, err := rig.Spec(r)
	if err != nil || spec == nil {
		t.Fatalf("%s: no controller (%v)", path, err)
	}
	g, err := control.Build(spec, models.Channels(r), models.ActuatorNames(r))
	if err != nil {
		t.Fatal(err)
	}
	out := map[string]float64{}
	for _, p := range g.Params() {
		out[p.Path] = p.Value
	}
	return out
}

func TestSaveRobotKeepsTheTunedGains(t *testing.T) {
	// The gains a builder applied are the ones the saved file runs: the
	// values typed in (the issue's own example, body_loop kp 1.2179 and ki
	// 0.472, a limit in degrees, a sequencer ramp, a derivative gain the
	// file leaves out) come back exactly when the file is opened again.
	w, _ := openTest(t, "builtin:frontal")
	tuned := map[string]float64{
		"body_loop.kp":                   1.2179,
		"body_loop.ki":                   0.472,
		"body_loop.kd":                   0.05,
		"body_loop.max":                  7.5 * degree,
		"stepper.first_shift_right.ramp": 1.25,
		"stepper.shift_left.next1.below": 12,
	}
	for path, v := range tuned {
		if _, ok := w.gains[path]; !ok {
			t.Fatalf("no gain %s", path)
		}
		w.setGain(path, v, false)
	}
	path := filepath.Join(t.TempDir(), "tuned.yaml")
	if err := w.SaveRobot(path); err != nil {
		t.Fatal(err)
	}
	got := fileGains(t, path)
	for p, v := range tuned {
		if got[p] != v {
			t.Errorf("saved file: %s = %g, want %g", p, got[p], v)
		}
	}
	// An untouched gain keeps the built-in's value.
	if base := fileGains(t, "builtin:frontal"); got["leg_angle_left.kp"] != base["leg_angle_left.kp"] {
		t.Errorf("leg_angle_left.kp changed to %g", got["leg_angle_left.kp"])
	}
	if err := w.OpenRobot(path); err != nil {
		t.Fatal(err)
	}
	for p, v := range tuned {
		if g, _ := w.run.Gain(p); g != v {
			t.Errorf("reopened: the running %s is %g, want %g", p, g, v)
		}
	}
}

const degree = 3.141592653589793 / 180

func TestTwoWindowsKeepTwoAutosavesAndNeitherIsACrash(t *testing.T) {
	// Each window autosaves on its own; a window still open is not a
	// window that crashed (the report: each offered the other's
	// session as a crash). A window that really went away is offered.
	root := filepath.Join(t.TempDir(), "autosave")
	t.Setenv(AutosaveEnv, root)
	a := test.NewTempApp(t)
	first, err := newWindow(a, Options{Model: "builtin:pendulum", Autosave: true}, buildPlant)
	if err != nil {
		t.Fatal(err)
	}
	defer first.Close()
	waitFor(func() bool { _, found, _ := readSession(first.saver.dir); return found })
	second, err := newWindow(a, Options{Model: "builtin:frontal", Autosave: true}, buildPlant)
	if err != nil {
		t.Fatal(err)
	}
	defer second.Close()
	if top := second.win.Canvas().Overlays().Top(); top != nil {
		t.Fatalf("the second window offers a restore while the first is open: %q", dialogText(t, second.win.Canvas()))
	}
	if second.saver == nil || second.saver.dir == first.saver.dir {
		t.Fatal("the two windows do not keep separate autosaves")
	}
	waitFor(func() bool { s, found, _ := readSession(second.saver.dir); return found && s.Path == "builtin:frontal" })
	if s, _, _ := readSession(first.saver.dir); s.Path != "builtin:pendulum" {
		t.Fatalf("the first window's autosave now holds %q", s.Path)
	}

	// The first window's goroutine stops without the clean-exit removal,
	// as a killed process would leave it: its lock goes with it.
	close(first.saver.quit)
	<-first.saver.done
	first.saver = nil
	third, err := newWindow(a, Options{Model: "builtin:frontal", Autosave: true}, buildPlant)
	if err != nil {
		t.Fatal(err)
	}
	defer third.Close()
	if text := dialogText(t, third.win.Canvas()); !strings.Contains(text, "builtin:pendulum") {
		t.Fatalf("the window that went away is not offered: %q", text)
	}
}

// typeShortcut hands a shortcut to the window in the order fyne's desktop
// driver does (fyne v2.7.1, internal/driver/glfw/window.go,
// triggersShortcut): an item of the main menu with that shortcut first,
// else the focused widget if it takes shortcuts, else the canvas.
func typeShortcut(w *Window, sc fyne.Shortcut) {
	var inMenu func(items []*fyne.MenuItem) bool
	inMenu = func(items []*fyne.MenuItem) bool {
		for _, it := range items {
			if it.Shortcut != nil && it.Shortcut.ShortcutName() == sc.ShortcutName() && it.Action != nil {
				it.Action()
				return true
			}
			if it.ChildMenu != nil && inMenu(it.ChildMenu.Items) {
				return true
			}
		}
		return false
	}
	for _, m := range w.win.MainMenu().Items {
		if inMenu(m.Items) {
			return
		}
	}
	c := w.win.Canvas()
	if f, ok := c.Focused().(fyne.Shortcutable); ok {
		f.TypedShortcut(sc)
		return
	}
	c.(fyne.Shortcutable).TypedShortcut(sc)
}

func TestUndoRedoKeysWinOverAFocusedEntry(t *testing.T) {
	// Ctrl+Z, Ctrl+Y and Ctrl+Shift+Z undo and redo the window's last
	// change (Help lists them) while a text entry has the focus, where the
	// entry's own text undo would take them first.
	w, _ := openTest(t, "builtin:pendulum")
	p := w.params[0]
	row := w.gainRows[p.Path]
	tuned := p.Value + 0.25
	w.setGain(p.Path, tuned, false)
	w.win.Canvas().Focus(row.field.Entry)
	if w.win.Canvas().Focused() == nil {
		t.Fatal("the entry did not take the focus")
	}
	ctrl := fyne.KeyModifierShortcutDefault
	for _, step := range []struct {
		sc   fyne.Shortcut
		want float64
	}{
		{&desktop.CustomShortcut{KeyName: fyne.KeyZ, Modifier: ctrl}, p.Value},
		{&desktop.CustomShortcut{KeyName: fyne.KeyY, Modifier: ctrl}, tuned},
		{&fyne.ShortcutUndo{}, p.Value},
		{&desktop.CustomShortcut{KeyName: fyne.KeyZ, Modifier: ctrl | fyne.KeyModifierShift}, tuned},
	} {
		sc := step.sc
		// The driver reports Ctrl+Z and Ctrl+Y as the toolkit's undo and redo.
		if c, ok := sc.(*desktop.CustomShortcut); ok && c.Modifier == ctrl {
			switch c.KeyName {
			case fyne.KeyZ:
				sc = &fyne.ShortcutUndo{}
			case fyne.KeyY:
				sc = &fyne.ShortcutRedo{}
			}
		}
		typeShortcut(w, sc)
		if got, _ := w.run.Gain(p.Path); got != step.want {
			t.Fatalf("after %s: %s is %g, want %g", sc.ShortcutName(), p.Path, got, step.want)
		}
	}
	// Ctrl+O over an open dialog does not open a second one.
	typeShortcut(w, &desktop.CustomShortcut{KeyName: fyne.KeyO, Modifier: ctrl})
	if n := len(w.win.Canvas().Overlays().List()); n != 1 {
		t.Fatalf("Ctrl+O shows %d dialogs, want 1", n)
	}
	typeShortcut(w, &desktop.CustomShortcut{KeyName: fyne.KeyS, Modifier: ctrl})
	if n := len(w.win.Canvas().Overlays().List()); n != 1 {
		t.Fatalf("Ctrl+S over the open dialog: %d dialogs, want 1", n)
	}
}

func TestBuiltinRobotsComeWithTheirControllers(t *testing.T) {
	// Every built-in robot is on the File menu and the robot chooser, and
	// runs with its own
	// controller (DEVELOPERS.md: one built-in controller per built-in
	// robot); a robot file without a controller says every screw is held
	// and offers the built-in controller that fits it.
	w, _ := openTest(t, "builtin:frontal")
	var menu *fyne.MenuItem
	for _, it := range w.win.MainMenu().Items[0].Items {
		if it.Label == "Built-in robots" {
			menu = it
		}
	}
	if menu == nil || menu.ChildMenu == nil {
		t.Fatal("no Built-in robots menu in File")
	}
	var names []string
	for _, it := range menu.ChildMenu.Items {
		names = append(names, it.Label)
	}
	if !slices.Equal(names, models.BuiltinNames()) {
		t.Fatalf("built-in robots offered: %v, want %v", names, models.BuiltinNames())
	}
	for _, it := range menu.ChildMenu.Items {
		it.Action()
		if w.robot.Source != "builtin:"+it.Label || w.spec == nil || len(w.gainRows) == 0 {
			t.Fatalf("built-in %s opened as %s with controller %v and %d gains", it.Label, w.robot.Source, w.spec != nil, len(w.gainRows))
		}
	}

	// The robot chooser beside the stepping buttons opens a built-in too.
	w.robotSel.SetSelected("pendulum")
	if w.robot.Source != "builtin:pendulum" || w.spec == nil {
		t.Fatalf("the robot chooser opened %s", w.robot.Source)
	}
	if err := w.OpenRobot("../../models/builtin/sagittal.yaml"); err != nil {
		t.Fatal(err)
	}
	text := dialogText(t, w.win.Canvas())
	if !strings.Contains(text, "every screw is held") || !strings.Contains(text, "sagittal") {
		t.Fatalf("opening a robot with no controller says %q", text)
	}
	// The banner over the robot says it while the robot runs so, in the
	// rig's words (rig.Rig.Notice).
	w.refresh()
	if !w.banner.Visible() || !strings.Contains(w.bannerT.Text, "every screw is held") {
		t.Fatalf("the banner over a robot without a controller: shown %v, %q", w.banner.Visible(), w.bannerT.Text)
	}
	use := findButton(t, w.win.Canvas(), "Use sagittal")
	if use == nil {
		t.Fatal("no offer of the sagittal controller")
	}
	test.Tap(use)
	if w.spec == nil || w.gainRows["body_loop.kp"] == nil {
		t.Fatal("the offered controller does not run")
	}
	if w.refresh(); w.banner.Visible() {
		t.Fatalf("the banner stays with a controller: %q", w.bannerT.Text)
	}
	if got, err := w.run.Gain("body_loop.kp"); err != nil || got != fileGains(t, "builtin:sagittal")["body_loop.kp"] {
		t.Fatalf("running body_loop.kp %g (%v)", got, err)
	}
}

func TestLoopSwitchesInTheGainsTab(t *testing.T) {
	// Each PID has an on/off switch in the Gains tab (control/SCHEMA.md:
	// pid.on); it acts on the running graph and undoes like a gain.
	w, _ := openTest(t, "builtin:sagittal")
	row := w.gainRows["ballast_loop.on"]
	if row == nil || row.onOff == nil {
		t.Fatal("no switch for the ballast loop")
	}
	for _, p := range w.params {
		if p.Name == "on" && w.gainRows[p.Path].onOff == nil {
			t.Errorf("%s shows as a slider, not a switch", p.Path)
		}
	}
	test.Tap(row.onOff)
	if got, _ := w.run.Gain("ballast_loop.on"); got != 0 || row.onOff.Checked {
		t.Fatalf("after unchecking the ballast loop runs with on = %g", got)
	}
	w.Undo()
	if got, _ := w.run.Gain("ballast_loop.on"); got != 1 || !row.onOff.Checked {
		t.Fatalf("after undo on = %g, checked %v", got, row.onOff.Checked)
	}
}

func TestTheViewShowsItsScaleAndWhichWayItLooks(t *testing.T) {
	// The scale bar is as long, in pixels, as its labelled length beside
	// the torso drawn to the same scale: the frontal torso is 320 mm wide
	// (models/builtin/frontal.yaml). The top right names the view: frontal
	// robots are seen from behind, sagittal ones from the side.
	w, _ := openTest(t, "builtin:frontal")
	img := w.view.render(900, 600).(*image.RGBA)
	ink := func(x, y int) bool { return near(img.RGBAAt(x, y), pal.Ink, 40) }
	bar := 0
	for x := 14; x < 400 && ink(x, 22); x++ {
		bar++
	}
	pose, root := torsoPose(t, w)
	c := pose.Apply(root.Shape.Center)
	_, py := w.view.v.toPixel(c)
	torso := 0
	for x := 0; x < 900; x++ {
		if near(img.RGBAAt(x, int(py)), pal.Torso, 8) {
			torso++
		}
	}
	var mm float64
	for _, l := range scaleBars {
		if l/1000*w.view.v.Scale >= 60 {
			mm = l
			break
		}
	}
	if bar == 0 || torso == 0 {
		t.Fatalf("bar %d px, torso %d px", bar, torso)
	}
	if got, want := float64(bar)/float64(torso), mm/320; math.Abs(got-want) > 0.08*want {
		t.Errorf("scale bar %d px for %g mm against the 320 mm torso's %d px: ratio %.3f, want %.3f", bar, mm, torso, got, want)
	}
	inkIn := func(img *image.RGBA, x0, x1 int) int {
		n := 0
		for y := 10; y < 34; y++ {
			for x := x0; x < x1; x++ {
				if near(img.RGBAAt(x, y), pal.Ink, 60) {
					n++
				}
			}
		}
		return n
	}
	if inkIn(img, 700, 890) < 30 {
		t.Error("no 'seen from behind' at the top right of the frontal view")
	}
}

func TestDefaultTracesAreTheLoopsAndResetRunsOn(t *testing.T) {
	// The traces a builder watches first: the outer loop's measurement
	// (the torso tilt estimate) and the loops' outputs, not raw gyro noise.
	w, _ := openTest(t, "builtin:sagittal")
	want := []string{"torso_tilt.out", "body_loop.out", "hip_loop.out"}
	for _, n := range want {
		if !slices.Contains(w.shown, n) {
			t.Errorf("default traces %v lack %s", w.shown, n)
		}
	}
	for _, n := range w.shown {
		if strings.HasSuffix(n, ".rate") {
			t.Errorf("default traces show the raw gyro %s", n)
		}
	}
	// Reset keeps a running robot running.
	<-w.run.Run()
	w.reset()
	<-w.run.SetSpeed(1) // handled after the reset's commands
	if !w.run.Status().Running {
		t.Fatal("reset paused a running robot")
	}
}

func TestSmallThingsReadRight(t *testing.T) {
	// A pad stiffness reads 100000 N/m, not 1e+05; Help names the PID
	// parameters (setpoint weight, derivative filter, tracking time, from
	// the PID's usual form, control/SCHEMA.md) and shows no empty unit.
	if got := formatValue(1e5, "N/m"); got != "100000 N/m" {
		t.Errorf("1e5 N/m shows as %q", got)
	}
	h := helpText()
	for _, want := range []string{"setpoint weight", "derivative filter time", "tracking time", "**.out**:"} {
		if !strings.Contains(h, want) {
			t.Errorf("Help lacks %q", want)
		}
	}
	if strings.Contains(h, "()") {
		t.Error("Help shows an empty unit ()")
	}
	// A trace at exactly zero spans one shown unit either side (and the
	// margin of 8 % of the span: 1 + 0.16 deg), not a radian (-66.5 to 66.5 deg).
	_, f := friendlyUnit("rad")
	if lo, hi := shownRange(0, 0, f); math.Abs(lo*f+1.16) > 1e-9 || math.Abs(hi*f-1.16) > 1e-9 {
		t.Errorf("an all-zero angle trace shows %.3g to %.3g deg", lo*f, hi*f)
	}
	// An impulse entry speaks N·s as the rest of the window and takes it
	// back; Help lists a pad's end-stop share.
	var got float64
	ns := newNumberField("N*s", 0, 100, func(v float64) { got = v })
	if ns.show(1.5); ns.Entry.Text != "1.5 N·s" || !ns.submit("2 N·s") || got != 2 {
		t.Errorf("an impulse entry shows %q and took %g for 2 N·s", ns.Entry.Text, got)
	}
	if !strings.Contains(h, "**.stop** (N)") {
		t.Error("Help does not explain a pad's .stop column")
	}
	// A refused pad travel in mm is refused in mm (1 mm = 0.001 m).
	r, err := models.Load("builtin:frontal")
	if err != nil {
		t.Fatal(err)
	}
	err = models.SetParam(r, "feet.pad_travel", -0.001)
	if got := inEntryUnit(err, "feet.pad_travel", -0.001, "m"); got != "-1 mm must not be negative" {
		t.Errorf("a negative pad travel is refused with %q", got)
	}
}
