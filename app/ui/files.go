package ui

import (
	"bufio"
	"fmt"
	"image"
	"image/png"
	"io"
	"strconv"
	"strings"
	"time"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/driver/desktop"
	"fyne.io/fyne/v2/driver/software"
	"fyne.io/fyne/v2/storage"

	"teeter/control"
	"teeter/models"
	"teeter/sim/live"
	"teeter/sim/rig"
)

func savePNG(path string, img image.Image) error {
	return models.WriteFileAtomic(path, func(w io.Writer) error { return png.Encode(w, img) })
}

const recentKey = "recent_files"

func (w *Window) addRecent(path string) {
	prefs := w.app.Preferences()
	list := []string{path}
	for _, p := range prefs.StringList(recentKey) {
		if p != path && len(list) < 8 {
			list = append(list, p)
		}
	}
	prefs.SetStringList(recentKey, list)
	w.win.SetMainMenu(w.menu())
}

func (w *Window) menu() *fyne.MainMenu {
	var recent []*fyne.MenuItem
	for _, p := range w.app.Preferences().StringList(recentKey) {
		p := p
		recent = append(recent, fyne.NewMenuItem(p, func() { w.OpenRobot(p) }))
	}
	recentItem := fyne.NewMenuItem("Recent robots", nil)
	if len(recent) == 0 {
		recentItem.Disabled = true
	} else {
		recentItem.ChildMenu = fyne.NewMenu("", recent...)
	}
	// The window's shortcuts live on menu items: the desktop driver offers a
	// shortcut to the main menu before the focused widget, so Ctrl+Z undoes
	// the window's last change even while a text entry has the focus.
	open := fyne.NewMenuItem("Open robot…", w.unlessDialog(w.openDialog))
	open.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyO, Modifier: fyne.KeyModifierShortcutDefault}
	save := fyne.NewMenuItem("Save robot", w.unlessDialog(w.saveRobot))
	save.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyS, Modifier: fyne.KeyModifierShortcutDefault}
	undo := fyne.NewMenuItem("Undo", w.Undo)
	undo.Shortcut = &fyne.ShortcutUndo{}
	redo := fyne.NewMenuItem("Redo", w.Redo)
	redo.Shortcut = &fyne.ShortcutRedo{}
	redoShift := fyne.NewMenuItem("Redo", w.Redo)
	redoShift.Shortcut = &desktop.CustomShortcut{KeyName: fyne.KeyZ, Modifier: fyne.KeyModifierShortcutDefault | fyne.KeyModifierShift}
	var builtins []*fyne.MenuItem
	for _, name := range models.BuiltinNames() {
		builtins = append(builtins, fyne.NewMenuItem(name, func() { w.OpenRobot("builtin:" + name) }))
	}
	builtinItem := fyne.NewMenuItem("Built-in robots", nil)
	builtinItem.ChildMenu = fyne.NewMenu("", builtins...)
	file := fyne.NewMenu("File",
		builtinItem,
		open,
		recentItem,
		save,
		fyne.NewMenuItem("Save robot as…", w.saveRobotAs),
		fyne.NewMenuItemSeparator(),
		fyne.NewMenuItem("Load gains…", func() { w.openFile(w.LoadGains, ".yaml", ".yml", ".json") }),
		fyne.NewMenuItem("Save gains…", func() { w.saveFile("gains.yaml", w.SaveGains) }),
		fyne.NewMenuItem("Export firmware header…", func() { w.saveFile("gains.h", w.ExportHeader) }),
		fyne.NewMenuItem("Run a controller program…", func() { w.openFile(w.RunProgram) }),
		fyne.NewMenuItem("Use the robot's own controller", func() { w.report("Could not go back to the robot's own controller", w.UseOwnController()) }),
		fyne.NewMenuItemSeparator(),
		fyne.NewMenuItem("Export traces as CSV…", func() { w.saveFile("traces.csv", w.ExportCSV) }),
		fyne.NewMenuItem("Export plot as PNG…", func() { w.saveFile("plot.png", w.ExportPlotPNG) }),
	)
	edit := fyne.NewMenu("Edit", undo, redo, redoShift)
	sim := fyne.NewMenu("Run",
		fyne.NewMenuItem("Run / pause", w.toggleRun),
		fyne.NewMenuItem("Single step", func() { w.after(w.run.StepOnce()) }),
		fyne.NewMenuItem("Reset", w.reset),
		fyne.NewMenuItemSeparator(),
		fyne.NewMenuItem("Open log…", func() { w.openFile(w.OpenLog) }),
		fyne.NewMenuItem("Fit…", w.showFit),
	)
	return fyne.NewMainMenu(file, edit, sim)
}

// unlessDialog runs do only when no dialog is open: a file shortcut
// pressed over an open file dialog does not open a second one.
func (w *Window) unlessDialog(do func()) func() {
	return func() {
		if w.win.Canvas().Overlays().Top() == nil {
			do()
		}
	}
}

// report runs a file action and shows its error.
func (w *Window) report(title string, err error) {
	if err != nil {
		w.showError(title, err)
	}
}

func (w *Window) openDialog() {
	w.openFile(w.OpenRobot, ".yaml", ".yml")
}

// openFile asks for a file to open, of the given extensions (any when
// none), in a dialog large enough to show a good part of a folder.
func (w *Window) openFile(do func(string) error, exts ...string) {
	d := dialog.NewFileOpen(func(r fyne.URIReadCloser, err error) {
		if err != nil || r == nil {
			return
		}
		path := r.URI().Path()
		r.Close()
		do(path)
	}, w.win)
	if len(exts) > 0 {
		d.SetFilter(storage.NewExtensionFileFilter(exts))
	}
	d.Resize(fileDialogSize(w.win))
	d.Show()
}

// fileDialogSize is most of the window: fyne's own dialog size shows three
// or four rows of files.
func fileDialogSize(win fyne.Window) fyne.Size {
	s := win.Canvas().Size()
	return fyne.NewSize(s.Width*0.8, s.Height*0.85)
}

func (w *Window) saveFile(name string, do func(string) error) {
	d := dialog.NewFileSave(func(wc fyne.URIWriteCloser, err error) {
		if err != nil || wc == nil {
			return
		}
		path := wc.URI().Path()
		wc.Close()
		if err := do(path); err != nil {
			w.showError("Could not write "+path, err)
			return
		}
		w.notice.SetText("Wrote " + path)
	}, w.win)
	d.SetFileName(name)
	d.Resize(fileDialogSize(w.win))
	d.Show()
}

// OpenRobot loads a robot file. A bad file shows every problem with its
// line and leaves the current session as it was.
func (w *Window) OpenRobot(path string) error {
	r, err := models.Load(path)
	if err == nil {
		err = w.installRobot(r, path)
	}
	if err != nil {
		w.showError("Could not open "+path+"; the current robot is kept", err)
		return err
	}
	w.addRecent(path)
	w.offerController()
	return nil
}

// installRobot checks a loaded robot and its controller and, when both
// are good, runs it in place of the current one.
func (w *Window) installRobot(r *models.Robot, path string) error {
	spec, err := rig.Spec(r)
	if err == nil && spec != nil {
		_, err = control.Build(spec, models.Channels(r), models.ActuatorNames(r))
	}
	// A program speaks the channels of the robot it was started for.
	program := w.program.Swap(nil)
	if err == nil {
		err = <-w.run.SetRobot(r.Clone())
	}
	if err != nil {
		w.program.Store(program)
		return err
	}
	w.setModel(r, path, spec)
	w.refresh()
	return nil
}

// controllerNotice is what a user should know about what drives the robot
// (rig.Rig.Notice, as a sentence), or "".
func (w *Window) controllerNotice() string {
	n := (&rig.Rig{Robot: w.robot, Spec: w.spec, Program: w.program.Load()}).Notice()
	if n == "" {
		return ""
	}
	return strings.ToUpper(n[:1]) + n[1:] + "."
}

// noGraphText says why the robot has no controller graph: a program drives
// it, or nothing does.
func (w *Window) noGraphText() string {
	if p := w.program.Load(); p != nil {
		return "The controller program " + p.Path + " drives the robot."
	}
	return w.controllerNotice()
}

// fittingController names a built-in controller that builds against the
// robot's sensors and actuators, or "".
func fittingController(r *models.Robot) string {
	for _, name := range control.BuiltinNames() {
		spec, err := control.Builtin(name)
		if err == nil {
			if _, err = control.Build(spec, models.Channels(r), models.ActuatorNames(r)); err == nil {
				return name
			}
		}
	}
	return ""
}

// offerController tells, when a robot without a controller is opened, that
// every screw is held, and offers a built-in controller that fits it.
func (w *Window) offerController() {
	if w.spec != nil {
		return
	}
	name := fittingController(w.robot)
	if name == "" {
		dialog.NewInformation("No controller", w.controllerNotice()+" Add a controller section to the file to drive it.", w.win).Show()
		return
	}
	d := dialog.NewConfirm("No controller", w.controllerNotice()+"\n\nThe built-in "+name+" controller fits its sensors and actuators. Use it?", func(ok bool) {
		if ok {
			w.useBuiltinController(name)
		}
	}, w.win)
	d.SetConfirmText("Use " + name)
	d.SetDismissText("Keep every screw held")
	d.Show()
}

// useBuiltinController puts a built-in controller into the robot's
// controller section, as an edit of the controller.
func (w *Window) useBuiltinController(name string) {
	w.replaceController(rig.ControllerSection(&models.Robot{Name: w.robot.Name, Source: "builtin:" + name}))
}

// CurrentRobot is a copy of the robot as run: the file's robot with the
// window's parameter and controller changes.
func (w *Window) CurrentRobot() *models.Robot { return w.currentRobot() }

func (w *Window) currentRobot() *models.Robot {
	r := w.robot.Clone()
	for _, p := range w.rorder {
		_ = models.SetParam(r, p, w.rparam[p])
	}
	return r
}

// robotToSave is the robot as run, with the controller written out with
// the gains as set in the window: a built-in robot's built-in controller
// goes into the file, so the file runs the same controller when opened
// again.
func (w *Window) robotToSave() (*models.Robot, error) {
	r := w.currentRobot()
	if w.spec == nil {
		return r, nil
	}
	c, err := rig.ControllerSection(w.robot)
	if err == nil {
		err = writeGains(c, w.gains)
	}
	if err != nil {
		return nil, err
	}
	r.Controller = c
	return r, nil
}

// writeGains writes into a controller section every gain whose value
// differs from the section's: over the number where the file has one, else
// as a new field of its block. Each value is written in SI and read back, so
// the file gives exactly the value that runs.
func writeGains(ctrl *models.Value, gains map[string]float64) error {
	spec, err := control.Parse(ctrl)
	if err != nil {
		return err
	}
	blocks, err := blockList(ctrl)
	if err != nil {
		return err
	}
	var ps models.Problems
	for _, b := range spec.Blocks {
		blk := &blocks.Items[blockIndex(blocks, b.Name)]
		for _, p := range b.Params {
			v, ok := gains[b.Name+"."+p.Name]
			if !ok || v == p.Value {
				continue
			}
			at := scalarAt(blk, p.Pos)
			if at == nil && !strings.Contains(p.Name, ".") {
				blk.Fields = append(blk.Fields, models.Field{Key: p.Name, Value: scalar("")})
				at = &blk.Fields[len(blk.Fields)-1].Value
			}
			if at == nil || !writeNumber(ctrl, at, b.Name, p.Name, p.Unit, v) {
				ps.Add(p.Pos, b.Name+"."+p.Name, "the value %g cannot be written into the controller section", v)
			}
		}
	}
	return ps.Err()
}

// scalarAt finds the number read from pos within a block.
func scalarAt(v *models.Value, pos models.Pos) *models.Value {
	if v.Kind == models.Scalar && v.Pos == pos {
		return v
	}
	for i := range v.Items {
		if s := scalarAt(&v.Items[i], pos); s != nil {
			return s
		}
	}
	for i := range v.Fields {
		if s := scalarAt(&v.Fields[i].Value, pos); s != nil {
			return s
		}
	}
	return nil
}

// writeNumber sets at to the value, as a bare number or with its SI unit,
// whichever the controller reads back as exactly that value.
func writeNumber(ctrl, at *models.Value, block, name, unit string, v float64) bool {
	num := strconv.FormatFloat(v, 'g', -1, 64)
	texts := []string{num}
	if _, k, err := models.ParseQuantity("1 " + unit); err == nil && k.Unit != "" {
		texts = append(texts, num+" "+k.Unit)
	}
	for _, t := range texts {
		at.Text = t
		spec, err := control.Parse(ctrl)
		if err != nil {
			continue
		}
		for _, b := range spec.Blocks {
			if b.Name != block {
				continue
			}
			for _, p := range b.Params {
				if p.Name == name && p.Value == v {
					return true
				}
			}
		}
	}
	return false
}

func (w *Window) saveRobot() {
	if w.path == "" || strings.HasPrefix(w.path, "builtin:") {
		w.saveRobotAs()
		return
	}
	w.report("Could not save", w.SaveRobot(w.path))
}

func (w *Window) saveRobotAs() { w.saveFile("robot.yaml", w.SaveRobot) }

// SaveRobot writes the robot as it runs: the parameter changes made in the
// window, the controller and its gains as set.
func (w *Window) SaveRobot(path string) error {
	r, err := w.robotToSave()
	if err != nil {
		return err
	}
	if err := models.SaveFile(path, r); err != nil {
		return err
	}
	w.path = path
	w.addRecent(path)
	return nil
}

// Gains is the current gains as a gain set.
func (w *Window) Gains() control.GainSet {
	gs := control.GainSet{}
	if w.spec != nil {
		gs.Rate = w.spec.Rate
	}
	for _, p := range w.params {
		gs.Gains = append(gs.Gains, control.Gain{Path: p.Path, Value: w.gains[p.Path]})
	}
	return gs
}

// SaveGains writes the current gains (JSON for .json, else YAML).
func (w *Window) SaveGains(path string) error {
	return control.WriteGains(path, w.Gains())
}

// LoadGains reads a gain set and applies all of it, or nothing when any
// entry is unknown or out of range; each applied gain can be undone.
func (w *Window) LoadGains(path string) error {
	gs, err := control.ReadGains(path)
	if err == nil {
		err = w.ApplyGains(gs)
	}
	if err != nil {
		w.showError("Could not load gains from "+path, err)
		return err
	}
	w.notice.SetText(fmt.Sprintf("Loaded %d gains from %s", len(gs.Gains), path))
	return nil
}

// ApplyGains sets every gain of a set, each undoable, or none of them when
// any is unknown or out of range (a tuning study hands its result here).
func (w *Window) ApplyGains(gs control.GainSet) error {
	var ps models.Problems
	for _, g := range gs.Gains {
		row, ok := w.gainRows[g.Path]
		switch {
		case !ok:
			ps.Add(g.Pos, "gains."+g.Path, "this controller has no such parameter")
		case g.Value < row.info.Min || g.Value > row.info.Max:
			ps.Add(g.Pos, "gains."+g.Path, "%g is out of range %g to %g", g.Value, row.info.Min, row.info.Max)
		}
	}
	if err := ps.Err(); err != nil {
		return err
	}
	for _, g := range gs.Gains {
		w.setGain(g.Path, g.Value, false)
	}
	return nil
}

// ExportHeader writes the current gains as a C header for firmware.
func (w *Window) ExportHeader(path string) error {
	params := append([]control.ParamInfo(nil), w.params...)
	for i := range params {
		params[i].Value = w.gains[params[i].Path]
	}
	rate := 0.0
	if w.spec != nil {
		rate = w.spec.Rate
	}
	data := control.CHeader(params, rate, w.robot.Source)
	return models.WriteFileAtomic(path, func(wr io.Writer) error { _, err := wr.Write(data); return err })
}

// ExportCSV writes every recorded signal of the rolling trace.
func (w *Window) ExportCSV(path string) error {
	names, units := w.run.SignalNames(), w.run.SignalUnits()
	var idx []int
	for i, n := range names {
		if n != "time" { // the trace's own time comes first
			idx = append(idx, i)
		}
	}
	var tr live.Trace
	w.run.Recent(&tr, 1e9, idx)
	return models.WriteFileAtomic(path, func(wr io.Writer) error {
		bw := bufio.NewWriter(wr)
		bw.WriteString("time [s]")
		for _, i := range idx {
			bw.WriteString(",")
			bw.WriteString(names[i])
			if u := unitOf(units, i); u != "" {
				bw.WriteString(" [" + u + "]")
			}
		}
		bw.WriteString("\n")
		for i, t := range tr.Time {
			bw.WriteString(strconv.FormatFloat(t, 'g', -1, 64))
			for k := range idx {
				bw.WriteString(",")
				bw.WriteString(strconv.FormatFloat(tr.Values[k][i], 'g', -1, 64))
			}
			bw.WriteString("\n")
		}
		return bw.Flush()
	})
}

// ExportPlotPNG writes the plots as they are shown, at 1200 x 800 pixels.
func (w *Window) ExportPlotPNG(path string) error {
	img := image.NewRGBA(image.Rect(0, 0, 1200, 800))
	w.traces.draw(img)
	return savePNG(path, img)
}

// Capture writes a picture of the whole window as PNG. Where the graphics
// driver cannot read its frame back (a blank picture, as under a virtual X
// server), the window's content is drawn by fyne's software painter at the
// window's size instead.
func (w *Window) Capture(path string) error {
	img := w.win.Canvas().Capture()
	if uniform(img) {
		content := w.win.Content()
		size := w.win.Canvas().Size()
		c := software.NewCanvas()
		c.SetContent(content)
		c.Resize(size)
		img = c.Capture()
		w.win.SetContent(content)
	}
	return savePNG(path, img)
}

// uniform reports whether an image is one colour throughout.
func uniform(img image.Image) bool {
	b := img.Bounds()
	if b.Empty() {
		return true
	}
	first := img.At(b.Min.X, b.Min.Y)
	r0, g0, b0, a0 := first.RGBA()
	for y := b.Min.Y; y < b.Max.Y; y += 7 {
		for x := b.Min.X; x < b.Max.X; x += 7 {
			r, g, bl, a := img.At(x, y).RGBA()
			if r != r0 || g != g0 || bl != b0 || a != a0 {
				return false
			}
		}
	}
	return true
}

// ShowAndCapture shows the window, runs the simulation for the given wall
// time, writes a picture of the window to path and quits.
func (w *Window) ShowAndCapture(path string, after time.Duration) error {
	var result error
	<-w.run.Run()
	go func() {
		time.Sleep(after)
		fyne.DoAndWait(func() {
			// Wherever the pointer happens to rest, no readout in the picture.
			w.traces.pointer = -1
			w.lastVer = 0
			w.refresh()
		})
		// Let the driver paint the refreshed frame before capturing it.
		time.Sleep(300 * time.Millisecond)
		fyne.DoAndWait(func() {
			result = w.Capture(path)
			w.closing.Store(true)
			w.app.Quit()
		})
	}()
	w.ShowAndRun()
	return result
}
