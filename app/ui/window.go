// Package ui is teeter's desktop window: the robot drawn to scale and
// shoved with the mouse, live traces, gains and robot parameters tuned while
// it runs, the controller graph, files and help. The simulation runs in a
// sim/live runner; the window only reads its snapshots and sends commands.
package ui

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strings"
	"sync/atomic"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/layout"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/live"
	"teeter/sim/rig"
)

// Options say what the window opens with.
type Options struct {
	// Model is a robot file or "builtin:NAME" (default "builtin:frontal").
	Model string
	// Gains is an optional gain-set file applied at the start.
	Gains string
	// Speed is the starting speed: 1 real time (default), 0.1 to 10, or a
	// negative value for as fast as possible.
	Speed float64
	// Run starts the simulation at once instead of paused.
	Run bool
	// Autosave keeps a copy of the session in the autosave directory
	// (autosaveDir) and, at the start, offers back one left by a session
	// that did not close normally.
	Autosave bool
	// Restore restores such a session without asking (implies Autosave).
	Restore bool
	// Size is the window's size at the start (default 1280 x 800, the
	// smallest screen it is laid out for).
	Size fyne.Size
}

// runner is the live runner the window drives.
type runner = live.Runner[sim.Snapshot]

// Window is the main window.
type Window struct {
	app fyne.App
	win fyne.Window
	run *runner

	robot *models.Robot // the robot as loaded, before live parameter changes
	live  *models.Robot // the robot as run: with the window's parameter changes
	path  string        // the file it came from, for Save ("" for a built-in)
	spec  *control.Spec
	// program, when it holds one, is the controller program that drives
	// the robot in place of spec; the runner's builds read it.
	program *atomic.Pointer[rig.Program]
	params  []control.ParamInfo // file values
	gains   map[string]float64  // current values as set from the window
	rparam  map[string]float64  // robot parameter changes from the window
	rorder  []string            // their paths, in the order last changed
	hist    history

	view    *robotView
	traces  *tracesView
	scene   scene
	banner  *fyne.Container
	bannerT *widget.Label
	status  *widget.Label
	notice  *widget.Label
	runBtn  *widget.Button
	speed   *widget.Select
	stepBox *fyne.Container // start and stop buttons of the controller's sequences
	// robotSel picks a built-in robot; showingModel is set while it is
	// moved to the robot just opened.
	robotSel     *widget.Select
	showingModel bool

	tabs      *container.AppTabs
	gainRows  map[string]*gainRow
	gainBox   *fyne.Container
	blockBox  *fyne.Container
	graph     *cascadeView
	graphTab  *container.TabItem
	robotBox  *fyne.Container
	shoves    *shovePanel
	studies   *fyne.Container
	study     *studiesPanel
	fit       *fitPanel
	saver     *autosaver
	frozen    bool
	window    float64
	shown     []string
	lastVer   uint64
	lastNames int

	keyShove float64 // N·s of a keyboard shove
	tickStop chan struct{}
	// closing is set once the application loop is ending: late redraws
	// from the ticker are skipped rather than run off the UI thread.
	closing atomic.Bool
}

// New opens the robot of opts and builds the window (not yet shown).
func New(a fyne.App, opts Options) (*Window, error) {
	return newWindow(a, opts, buildPlant)
}

func newWindow(a fyne.App, opts Options, build live.Build[sim.Snapshot]) (*Window, error) {
	if opts.Model == "" {
		opts.Model = "builtin:frontal"
	}
	robot, err := models.Load(opts.Model)
	if err != nil {
		return nil, err
	}
	spec, err := rig.Spec(robot)
	if err != nil {
		return nil, err
	}
	program := new(atomic.Pointer[rig.Program])
	run, err := live.New(live.Config[sim.Snapshot]{Robot: robot.Clone(), Build: withProgram(program, build), TraceSeconds: 120})
	if err != nil {
		return nil, err
	}
	w := &Window{app: a, run: run, program: program, keyShove: 2, window: 10}
	w.win = a.NewWindow("teeter")
	w.applyLook()
	w.build()
	if opts.Size.Width > 0 && opts.Size.Height > 0 {
		w.win.Resize(opts.Size)
	}
	w.setModel(robot, opts.Model, spec)
	if opts.Gains != "" {
		if err := w.LoadGains(opts.Gains); err != nil {
			run.Close()
			return nil, err
		}
	}
	speed := opts.Speed
	if speed == 0 {
		speed = 1
	}
	if speed < 0 {
		speed = 0
	}
	if err := <-run.SetSpeed(speed); err != nil {
		run.Close()
		return nil, err
	}
	w.showSpeed(speed)
	if opts.Run {
		<-run.Run()
	}
	w.refresh()
	if opts.Autosave || opts.Restore {
		w.startAutosave(opts.Restore)
	}
	return w, nil
}

// Runner gives access to the live runner, for the studies tab and tests.
func (w *Window) Runner() *live.Runner[sim.Snapshot] { return w.run }

// FyneWindow is the underlying window.
func (w *Window) FyneWindow() fyne.Window { return w.win }

// SetStudies puts the studies panel into its tab.
func (w *Window) SetStudies(content fyne.CanvasObject) {
	w.studies.Objects = []fyne.CanvasObject{content}
	w.studies.Refresh()
}

// ShowAndRun shows the window and runs the application until it closes.
func (w *Window) ShowAndRun() {
	w.app.Lifecycle().SetOnStopped(func() { w.closing.Store(true) })
	w.startTicker()
	w.win.ShowAndRun()
	w.Close()
}

// Close stops the simulation and the studies; the autosave is removed, as
// this is a normal exit.
func (w *Window) Close() {
	w.closing.Store(true)
	for _, j := range []*studyJob{w.study.margin, w.study.sweep, w.study.tune} {
		if j.cancel != nil {
			j.cancel()
		}
	}
	if w.saver != nil {
		w.saver.closeClean()
		w.saver = nil
	}
	if w.tickStop != nil {
		close(w.tickStop)
		w.tickStop = nil
	}
	w.run.Close()
}

// startTicker redraws at about 30 frames a second when the run changed.
func (w *Window) startTicker() {
	w.tickStop = make(chan struct{})
	stop := w.tickStop
	go func() {
		t := time.NewTicker(33 * time.Millisecond)
		defer t.Stop()
		for frame := 1; ; frame++ {
			select {
			case <-stop:
				return
			case <-t.C:
				fyne.DoAndWait(func() {
					if !w.closing.Load() {
						w.refresh()
						if frame%150 == 0 { // about every 5 s
							w.autosave()
						}
					}
				})
			}
		}
	}()
}

func (w *Window) build() {
	w.view = newRobotView(w.shove)
	w.traces = newTracesView()
	// A wrapped label, so a long fall reason never widens the window.
	w.bannerT = widget.NewLabelWithStyle("", fyne.TextAlignCenter, fyne.TextStyle{Bold: true})
	w.bannerT.Wrapping = fyne.TextWrapWord
	bannerBack := canvas.NewRectangle(pal.SlackEdge)
	bannerBack.CornerRadius = 6
	w.banner = container.NewStack(bannerBack, container.NewThemeOverride(container.NewPadded(w.bannerT), onAlarm{}))
	w.banner.Hide()
	robotArea := container.NewStack(w.view, container.NewVBox(container.NewPadded(w.banner), layout.NewSpacer()))

	// Status and notice are cut short rather than widen the window; errors
	// worth reading whole go to a dialog (showError).
	w.status = widget.NewLabel("")
	w.status.Truncation = fyne.TextTruncateEllipsis
	w.notice = widget.NewLabel("")
	w.notice.Importance = widget.WarningImportance
	w.notice.Truncation = fyne.TextTruncateEllipsis
	w.runBtn = widget.NewButtonWithIcon("Run", theme.MediaPlayIcon(), w.toggleRun)
	stepBtn := widget.NewButtonWithIcon("Step", theme.MediaSkipNextIcon(), func() { w.after(w.run.StepOnce()) })
	resetBtn := widget.NewButtonWithIcon("Reset", theme.MediaReplayIcon(), w.reset)
	w.speed = widget.NewSelect(speedNames, func(s string) {
		if v, ok := speedValues[s]; ok {
			w.after(w.run.SetSpeed(v))
		}
	})
	w.speed.SetSelected("1x")
	pin := widget.NewButtonWithIcon("Pin reference", theme.ContentCopyIcon(), func() { w.run.PinReference(); w.lastVer = 0 })
	unpin := widget.NewButton("Clear reference", func() { w.run.ClearReference(); w.lastVer = 0 })
	freeze := widget.NewCheck("Freeze plots", func(on bool) { w.frozen = on; w.lastVer = 0 })
	windowSel := widget.NewSelect([]string{"5 s", "10 s", "30 s", "60 s", "120 s"}, func(s string) {
		w.window = map[string]float64{"5 s": 5, "10 s": 10, "30 s": 30, "60 s": 60, "120 s": 120}[s]
		w.traces.window = w.window
		w.lastVer = 0
	})
	windowSel.SetSelected("10 s")
	signals := widget.NewButtonWithIcon("Signals…", theme.ListIcon(), w.chooseSignals)
	fit := widget.NewButtonWithIcon("", theme.ZoomFitIcon(), w.view.resetView)
	zoomIn := widget.NewButtonWithIcon("", theme.ZoomInIcon(), func() { w.view.zoomBy(1.25) })
	zoomOut := widget.NewButtonWithIcon("", theme.ZoomOutIcon(), func() { w.view.zoomBy(0.8) })

	w.stepBox = container.NewHBox()
	bar := container.NewBorder(nil, nil, container.NewHBox(w.runBtn, stepBtn, resetBtn, widget.NewLabel("Speed"), w.speed,
		widget.NewSeparator(), zoomIn, zoomOut, fit, widget.NewSeparator()), nil, w.status)
	plotBar := container.NewHBox(signals, windowSel, freeze, pin, unpin)
	plots := container.NewBorder(plotBar, nil, nil, nil, w.traces)
	split := container.NewVSplit(robotArea, plots)
	split.Offset = 0.55
	// The built-in robots, each with its own controller, always at hand.
	w.robotSel = widget.NewSelect(models.BuiltinNames(), func(name string) {
		if !w.showingModel && name != "" {
			w.OpenRobot("builtin:" + name)
		}
	})
	w.robotSel.PlaceHolder = "robot file"
	left := container.NewBorder(bar, container.NewBorder(nil, nil, container.NewHBox(w.robotSel, w.stepBox), nil, w.notice), nil, nil, split)

	w.gainBox = container.NewVBox()
	w.blockBox = container.NewVBox()
	w.graph = newCascadeView(w.showBlock, w.noGraphText)
	w.robotBox = container.NewVBox()
	w.shoves = newShovePanel(w)
	w.study = newStudiesPanel(w)
	w.studies = container.NewStack(w.study.object())
	addBlock := widget.NewButtonWithIcon("Insert a block…", theme.ContentAddIcon(), w.addBlockDialog)
	fitCascade := widget.NewCheck("Fit to view", w.graph.setCompact)
	w.graphTab = container.NewTabItem("Controller", container.NewBorder(container.NewHBox(fitCascade, addBlock), nil, nil, nil,
		container.NewVSplit(container.NewVScroll(w.graph.content), container.NewVScroll(w.blockBox))))
	w.tabs = container.NewAppTabs(
		container.NewTabItem("Gains", container.NewVScroll(w.gainBox)),
		container.NewTabItem("Robot", container.NewVScroll(w.robotBox)),
		container.NewTabItem("Shoves", w.shoves.object()),
		w.graphTab,
		container.NewTabItem("Studies", w.studies),
		container.NewTabItem("Help", container.NewVScroll(helpContent())),
	)
	main := container.NewHSplit(left, w.tabs)
	main.Offset = 0.62
	w.win.SetContent(main)
	w.win.SetMainMenu(w.menu())
	w.win.Resize(fyne.NewSize(1280, 800))
	w.win.Canvas().SetOnTypedKey(w.typedKey)
	w.win.SetCloseIntercept(func() { w.win.Close() })
}

var speedNames = []string{"0.1x", "0.25x", "0.5x", "1x", "2x", "5x", "10x", "fastest"}
var speedValues = map[string]float64{"0.1x": 0.1, "0.25x": 0.25, "0.5x": 0.5, "1x": 1, "2x": 2, "5x": 5, "10x": 10, "fastest": 0}

func (w *Window) showSpeed(v float64) {
	for name, s := range speedValues {
		if s == v {
			w.speed.SetSelected(name)
		}
	}
}

// after shows a command's error, if any, once the runner has handled it,
// without making the window wait.
func (w *Window) after(c <-chan error) {
	select {
	case err := <-c:
		w.showErr(err)
	default:
		go func() {
			if err := <-c; err != nil {
				fyne.Do(func() { w.showErr(err) })
			}
		}()
	}
}

func (w *Window) showErr(err error) {
	if err != nil {
		w.notice.SetText(err.Error())
	}
}

func (w *Window) toggleRun() {
	if w.run.Status().Running {
		w.after(w.run.Pause())
	} else {
		w.after(w.run.Run())
	}
	w.lastVer = 0
}

// reset puts the robot back at its start and, if it was running, runs on.
func (w *Window) reset() {
	w.notice.SetText("")
	running := w.run.Status().Running
	w.after(w.run.Reset())
	if running {
		w.after(w.run.Run())
	}
	w.lastVer = 0
}

// shove sends a shove from the mouse or keyboard to the runner.
func (w *Window) shove(s sim.Shove) {
	w.after(w.run.Shove(s))
	link := s.Link
	if link == "" {
		link = "the watched link"
	}
	w.notice.SetText(fmt.Sprintf("Shove on %s: %.2f N·s", link, math.Hypot(s.Impulse.X, s.Impulse.Y)))
}

// keyboardShove pushes the watched link sideways by the set size.
func (w *Window) keyboardShove(dir float64) {
	w.shove(sim.Shove{Link: "", Impulse: models.Vec2{X: dir * w.keyShove}})
}

func (w *Window) typedKey(e *fyne.KeyEvent) {
	switch e.Name {
	case fyne.KeySpace:
		w.toggleRun()
	case fyne.KeyPeriod:
		w.after(w.run.StepOnce())
	case fyne.KeyR:
		w.reset()
	case fyne.KeyLeft:
		w.keyboardShove(-1)
	case fyne.KeyRight:
		w.keyboardShove(1)
	case fyne.KeyF:
		w.frozen = !w.frozen
	case fyne.KeyP:
		w.run.PinReference()
	case fyne.KeyEqual, fyne.KeyPlus:
		w.view.zoomBy(1.25)
	case fyne.KeyMinus:
		w.view.zoomBy(0.8)
	case fyne.Key0:
		w.view.resetView()
	}
}

// setModel installs a newly loaded robot: panels, graph, traces.
func (w *Window) setModel(r *models.Robot, path string, spec *control.Spec) {
	w.robot, w.live, w.path, w.spec = r, r, path, spec
	w.gains, w.rparam, w.rorder = map[string]float64{}, map[string]float64{}, nil
	w.hist = history{}
	w.params = nil
	if spec != nil {
		if g, err := control.Build(spec, models.Channels(r), models.ActuatorNames(r)); err == nil {
			w.params = g.Params()
		}
	}
	for _, p := range w.params {
		w.gains[p.Path] = p.Value
	}
	w.buildGainRows()
	w.buildStepButtons()
	w.graph.setSpec(w.drawnSpec())
	w.blockBox.Objects = []fyne.CanvasObject{widget.NewLabel("Select a block to see its parameters.")}
	w.blockBox.Refresh()
	w.buildRobotRows()
	w.shoves.setRobot(r)
	w.view.fitSc = nil
	w.shown = nil
	w.lastVer = 0
	title := r.Name
	if title == "" {
		title = path
	}
	w.win.SetTitle("teeter — " + title)
	w.showingModel = true
	if name, ok := strings.CutPrefix(r.Source, "builtin:"); ok {
		w.robotSel.SetSelected(name)
	} else {
		w.robotSel.ClearSelected()
	}
	w.showingModel = false
	blocks, _ := w.gainBlocks()
	w.study.setRobot(r, w.params, blocks)
	w.autosave()
}

// refresh redraws what changed since the last call.
func (w *Window) refresh() {
	st := w.run.Status()
	if st.Version == w.lastVer && w.lastVer != 0 {
		return
	}
	w.lastVer = st.Version
	snap := w.run.Latest()
	sceneFromSnapshot(&w.scene, w.live, snap)
	w.view.setScene(&w.scene)

	names := w.run.SignalNames()
	if w.shown == nil || len(names) != w.lastNames {
		w.lastNames = len(names)
		w.shown = defaultSignals(names, w.spec)
	}
	w.traces.names = names
	w.traces.units = blockUnits(w.spec, names, w.run.SignalUnits())
	idx := w.traces.shown[:0]
	for _, s := range w.shown {
		for i, n := range names {
			if n == s {
				idx = append(idx, i)
			}
		}
	}
	w.traces.shown = idx
	if w.tabs.Selected() == w.graphTab {
		w.graph.update(w.run, w.gains)
	}
	if !w.frozen {
		w.run.Recent(&w.traces.data, w.window, idx)
		w.traces.hasRef = w.run.ReferenceTrace(&w.traces.ref, st.Time-w.window, idx)
		w.fit.overlay(w.traces, st.Time-w.window)
		w.traces.now = math.Max(st.Time, w.window)
		w.traces.raster.Refresh()
	}

	state, label, icon := "paused", "Run", theme.MediaPlayIcon()
	if st.Running {
		state, label, icon = "running", "Pause", theme.MediaPauseIcon()
	}
	// Each Set refreshes the button; most frames the state is unchanged.
	if w.runBtn.Text != label {
		w.runBtn.Text, w.runBtn.Icon = label, icon
		w.runBtn.Refresh()
	}
	speed := ""
	if st.Running && st.Achieved > 0 {
		speed = fmt.Sprintf(", %.2gx real time", st.Achieved)
	}
	w.status.SetText(fmt.Sprintf("t = %.2f s, %s%s", st.Time, state, speed))
	switch {
	case st.Err != nil:
		w.showBanner("Simulation stopped: " + st.Err.Error() + " — Reset (R) to start again")
	case st.Fallen:
		w.showBanner(fmt.Sprintf("Fallen at %.2f s: %s — Reset (R) puts it back", st.FallTime, st.FallReason))
	default:
		if n := w.controllerNotice(); n != "" {
			w.showBanner(n)
		} else {
			w.banner.Hide()
		}
	}
	if st.Notice != "" && st.Restarts > 0 {
		w.notice.SetText(st.Notice)
	}
}

// showBanner shows text over the robot, redrawing it only when it changed.
func (w *Window) showBanner(text string) {
	if w.bannerT.Text != text {
		w.bannerT.Text = text
		w.bannerT.Refresh()
	}
	w.banner.Show()
}

// blockUnits fills in the units the recorder does not know for the
// controller's signals: a sensor block's is its channel's, a filter's its
// input's, a PID's outputs are in the unit of its limits (a loop without
// limits stays bare).
func blockUnits(spec *control.Spec, names, units []string) []string {
	if spec == nil {
		return units
	}
	units = slices.Clone(units)
	of := map[string]string{}
	for i, n := range names {
		of[n] = unitOf(units, i)
	}
	for _, b := range spec.Blocks {
		switch b.Kind {
		case "sensor":
			of[b.Name+".out"] = of[b.Options["channel"]]
		case "tilt_filter", "lowpass", "rate_limit", "limit", "deadband", "delay":
			// Filters keep their input's unit (a tilt filter its angle's).
			in := b.Inputs[len(b.Inputs)-1].Source
			of[b.Name+".out"] = of[signalOf(spec, in)]
		case "pid":
			for _, p := range b.Params {
				if p.Name == "min" {
					for _, o := range b.Outputs {
						of[b.Name+"."+o] = p.Unit
					}
				}
			}
		}
	}
	for i, n := range names {
		if i < len(units) && units[i] == "" {
			units[i] = of[n]
		}
	}
	return units
}

// defaultSignals picks up to six signals to plot at the start: what a
// builder watches of the controller, outermost loop first: the outer PID's
// measurement (the torso tilt estimate), then each PID's output in file
// order. A robot without PIDs shows its IMU tilts and first commands.
func defaultSignals(names []string, spec *control.Spec) []string {
	var out []string
	add := func(match func(string) bool) {
		for _, n := range names {
			if len(out) < 6 && match(n) && !slices.Contains(out, n) {
				out = append(out, n)
			}
		}
	}
	is := func(name string) func(string) bool {
		return func(n string) bool { return n == name }
	}
	if spec != nil {
		for _, b := range spec.Blocks {
			if b.Kind == "pid" && len(b.Inputs) > 1 && b.Inputs[1].Source != "" {
				add(is(signalOf(spec, b.Inputs[1].Source)))
				break
			}
		}
		for _, b := range spec.Blocks {
			if b.Kind == "pid" {
				add(is(b.Name + ".out"))
			}
		}
	}
	add(func(n string) bool { return strings.HasSuffix(n, ".tilt") })
	add(func(n string) bool { return strings.HasSuffix(n, ".command") })
	add(func(string) bool { return true })
	return out
}

// chooseSignals lets the user pick the plotted signals.
func (w *Window) chooseSignals() {
	names := w.run.SignalNames()
	chosen := append([]string(nil), w.shown...)
	check := widget.NewCheckGroup(names, func(sel []string) {})
	check.Selected = chosen
	// The search narrows the list; what is ticked stays ticked while hidden.
	search := widget.NewEntry()
	search.SetPlaceHolder("search: torso, .out, command…")
	keep := func() {
		visible := check.Options
		next := slices.DeleteFunc(slices.Clone(chosen), func(n string) bool { return slices.Contains(visible, n) })
		chosen = append(next, check.Selected...)
	}
	search.OnChanged = func(text string) {
		keep()
		var opts []string
		for _, n := range names {
			if strings.Contains(strings.ToLower(n), strings.ToLower(strings.TrimSpace(text))) {
				opts = append(opts, n)
			}
		}
		check.Options = opts
		check.Selected = slices.DeleteFunc(slices.Clone(chosen), func(n string) bool { return !slices.Contains(opts, n) })
		check.Refresh()
	}
	d := dialog.NewCustomConfirm("Signals to plot", "Show", "Cancel", container.NewBorder(search, nil, nil, nil, container.NewVScroll(check)), func(ok bool) {
		if ok {
			keep()
			w.shown = chosen
			w.lastNames = len(names)
			w.lastVer = 0
		}
	}, w.win)
	d.Resize(fyne.NewSize(420, 560))
	d.Show()
}

// showError shows a problem report in a dialog; every line is one problem.
func (w *Window) showError(title string, err error) {
	text := widget.NewLabel(err.Error())
	text.Wrapping = fyne.TextWrapWord
	var ps models.Problems
	if errors.As(err, &ps) {
		text.SetText(fmt.Sprintf("%d problem(s):\n%s", len(ps), err.Error()))
	}
	scroll := container.NewVScroll(text)
	scroll.SetMinSize(fyne.NewSize(560, 260))
	dialog.NewCustom(title, "Close", scroll, w.win).Show()
	w.notice.SetText(title)
}

// sequencers lists the controller's sequencer blocks that take both a
// start and a stop request.
func (w *Window) sequencers() []string {
	var out []string
	if w.spec == nil {
		return nil
	}
	for _, b := range w.spec.Blocks {
		if b.Kind == "sequencer" && b.Sequence != nil && slices.Contains(b.Sequence.Events, "start") && slices.Contains(b.Sequence.Events, "stop") {
			out = append(out, b.Name)
		}
	}
	return out
}

// buildStepButtons offers start and stop for each sequence of the
// controller (the frontal controller's stepper walks on the spot).
func (w *Window) buildStepButtons() {
	w.stepBox.Objects = nil
	seqs := w.sequencers()
	for _, name := range seqs {
		suffix := ""
		if len(seqs) > 1 {
			suffix = " (" + name + ")"
		}
		w.stepBox.Add(widget.NewButton("Start stepping"+suffix, func() { w.requestEvent(name, "start") }))
		w.stepBox.Add(widget.NewButton("Stop stepping"+suffix, func() { w.requestEvent(name, "stop") }))
	}
	w.stepBox.Refresh()
}

// requestEvent sends a start or stop to a sequence of the running graph.
func (w *Window) requestEvent(block, event string) {
	w.after(w.run.Request(block, event))
	switch event {
	case "start":
		w.notice.SetText(block + ": start requested")
	case "stop":
		w.notice.SetText(block + ": stop requested")
	}
}
