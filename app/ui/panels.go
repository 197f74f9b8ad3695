package ui

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"

	"teeter/control"
	"teeter/models"
)

// gainRow is one tunable parameter: a slider, a numeric entry, and a
// button back to the file's value.
type gainRow struct {
	info     control.ParamInfo
	slider   *widget.Slider
	field    *numberField
	updating bool // set while the window moves the slider itself
	// onOff is the loop switch of a PID (its parameter "on"), shown as a
	// check box in place of a slider.
	onOff *widget.Check
}

// blockKind is the kind of a block of the controller, or "".
func (w *Window) blockKind(name string) string {
	if w.spec != nil {
		for _, b := range w.spec.Blocks {
			if b.Name == name {
				return b.Kind
			}
		}
	}
	return ""
}

// isLoopSwitch tells a PID's on/off parameter (control/SCHEMA.md).
func isLoopSwitch(p control.ParamInfo, kind string) bool { return kind == "pid" && p.Name == "on" }

// gainTier orders the gains panel: the loops a builder tunes first (PIDs,
// splits, gains), then the other blocks, then sequences.
func gainTier(kind string) int {
	switch kind {
	case "pid", "split", "gain":
		return 0
	case "sequencer":
		return 2
	}
	return 1
}

// gainBlocks lists the blocks with tunable parameters in the panel's
// order: by tier, and in the controller's order within a tier.
func (w *Window) gainBlocks() (blocks []string, kind map[string]string) {
	kind = map[string]string{}
	order := map[string]int{}
	if w.spec != nil {
		for i, b := range w.spec.Blocks {
			kind[b.Name], order[b.Name] = b.Kind, i
		}
	}
	for _, p := range w.params {
		if !slices.Contains(blocks, p.Block) {
			blocks = append(blocks, p.Block)
		}
	}
	slices.SortStableFunc(blocks, func(a, b string) int {
		return cmp.Or(cmp.Compare(gainTier(kind[a]), gainTier(kind[b])), cmp.Compare(order[a], order[b]))
	})
	return blocks, kind
}

func (w *Window) buildGainRows() {
	w.gainRows = map[string]*gainRow{}
	w.gainBox.Objects = nil
	switch {
	case w.spec == nil:
		w.gainBox.Add(wrapped(w.noGraphText()))
		if name := fittingController(w.robot); name != "" {
			w.gainBox.Add(widget.NewButton("Use the built-in "+name+" controller", func() { w.useBuiltinController(name) }))
		}
	case len(w.params) == 0:
		w.gainBox.Add(widget.NewLabel("This robot's controller has no tunable parameters."))
	}
	undo := widget.NewButtonWithIcon("Undo", theme.ContentUndoIcon(), w.Undo)
	redo := widget.NewButtonWithIcon("Redo", theme.ContentRedoIcon(), w.Redo)
	w.gainBox.Add(container.NewHBox(undo, redo, widget.NewLabel("Changes apply at the next controller tick.")))
	blocks, kind := w.gainBlocks()
	for _, block := range blocks {
		rows := container.NewVBox()
		var onOff *widget.Check
		for _, p := range w.params {
			if p.Block != block {
				continue
			}
			if isLoopSwitch(p, kind[block]) {
				row := w.newSwitchRow(p)
				w.gainRows[p.Path], onOff = row, row.onOff
				continue
			}
			row := w.newGainRow(p)
			w.gainRows[p.Path] = row
			rows.Add(row.object(w))
		}
		if gainTier(kind[block]) == 2 {
			// Sequences have many timings and set points: folded away.
			w.gainBox.Add(widget.NewAccordion(widget.NewAccordionItem(block+" (sequence)", rows)))
			continue
		}
		w.gainBox.Add(widget.NewSeparator())
		title := fyne.CanvasObject(widget.NewLabelWithStyle(block, fyne.TextAlignLeading, fyne.TextStyle{Bold: true}))
		if onOff != nil {
			title = container.NewBorder(nil, nil, title, onOff)
		}
		w.gainBox.Add(title)
		w.gainBox.Add(rows)
	}
	w.gainBox.Refresh()
}

func (w *Window) newGainRow(p control.ParamInfo) *gainRow {
	row := &gainRow{info: p}
	lo, hi := p.SliderMin, p.SliderMax
	if !(hi > lo) {
		lo, hi = p.Value-1, p.Value+1
	}
	row.slider = widget.NewSlider(lo, hi)
	row.slider.Step = (hi - lo) / 1000
	row.slider.Value = math.Max(lo, math.Min(hi, p.Value))
	row.slider.OnChanged = func(v float64) {
		if row.updating {
			return
		}
		w.setGain(p.Path, v, true)
	}
	row.slider.OnChangeEnded = func(float64) { w.hist.close() }
	row.field = newNumberField(p.Unit, p.Min, p.Max, func(v float64) {
		w.setGain(p.Path, v, false)
	})
	row.field.show(p.Value)
	return row
}

// newSwitchRow is a loop's on/off switch; it acts at the next tick and is
// undone like any gain.
func (w *Window) newSwitchRow(p control.ParamInfo) *gainRow {
	row := &gainRow{info: p}
	row.onOff = widget.NewCheck("loop on", func(on bool) {
		if row.updating {
			return
		}
		v := 0.0
		if on {
			v = 1
		}
		w.setGain(p.Path, v, false)
	})
	row.show(p.Value)
	return row
}

func (row *gainRow) object(w *Window) fyne.CanvasObject {
	p := row.info
	back := widget.NewButtonWithIcon("", theme.HistoryIcon(), func() { w.setGain(p.Path, p.Value, false) })
	title := p.Name
	if short := shortPIDName(p.Name); short != "" && w.blockKind(p.Block) == "pid" {
		title += " · " + short
	}
	name := widget.NewLabel(title)
	name.Truncation = fyne.TextTruncateEllipsis
	unit, _ := friendlyUnit(p.Unit)
	if unit == "" {
		unit = "—"
	}
	entry := container.NewGridWrap(fyne.NewSize(120, row.field.Entry.MinSize().Height), row.field.Entry)
	nameBox := container.NewGridWrap(fyne.NewSize(180, name.MinSize().Height), name)
	unitLabel := widget.NewLabel(unit)
	unitBox := container.NewGridWrap(fyne.NewSize(64, unitLabel.MinSize().Height), unitLabel)
	top := container.NewBorder(nil, nil, nameBox, container.NewHBox(entry, unitBox, back), row.slider)
	return container.NewVBox(top, row.field.Reason)
}

// show moves the row's controls to v without sending anything.
func (row *gainRow) show(v float64) {
	if row.onOff != nil {
		row.updating = true
		row.onOff.SetChecked(v >= 0.5)
		row.updating = false
		return
	}
	row.updating = true
	row.slider.SetValue(math.Max(row.slider.Min, math.Min(row.slider.Max, v)))
	row.updating = false
	row.field.show(v)
}

// setGain sends a gain to the runner and records it for undo; drag says
// that a slider is still moving.
func (w *Window) setGain(path string, v float64, drag bool) {
	old, ok := w.gains[path]
	if !ok {
		return
	}
	if v == old {
		return
	}
	w.hist.record(change{Kind: "gain", Path: path, Old: old, New: v, open: drag})
	w.applyGain(path, v)
}

func (w *Window) applyGain(path string, v float64) {
	w.gains[path] = v
	w.after(w.run.SetGain(path, v))
	if row := w.gainRows[path]; row != nil {
		row.show(v)
	}
	w.autosave()
}

// Undo reverts the last gain or robot change.
func (w *Window) Undo() {
	if c, ok := w.hist.undo(); ok {
		w.applyChange(c, c.Old)
	}
}

// Redo applies the last undone change again.
func (w *Window) Redo() {
	if c, ok := w.hist.redo(); ok {
		w.applyChange(c, c.New)
	}
}

func (w *Window) applyChange(c change, v float64) {
	if c.Kind == "gain" {
		w.applyGain(c.Path, v)
	} else {
		w.applyRobotParam(c.Path, v)
	}
}

// showBlock lists a block's parameters under the graph, tunable like the
// gains tab.
func (w *Window) showBlock(block string) {
	w.blockBox.Objects = nil
	w.blockBox.Add(widget.NewLabelWithStyle(block, fyne.TextAlignLeading, fyne.TextStyle{Bold: true}))
	var editor fyne.CanvasObject
	if w.spec != nil {
		for _, b := range w.spec.Blocks {
			if b.Name != block {
				continue
			}
			w.blockBox.Add(widget.NewLabel("kind: " + b.Kind))
			for k, v := range b.Options {
				w.blockBox.Add(widget.NewLabel(fmt.Sprintf("%s: %s", k, v)))
			}
			editor = w.blockEditor(b)
		}
	}
	any := false
	for _, p := range w.params {
		if p.Block != block {
			continue
		}
		any = true
		// A second row on the same gain; the gains tab follows its changes.
		row := w.newGainRow(p)
		row.show(w.gains[p.Path])
		w.blockBox.Add(row.object(w))
	}
	if !any {
		w.blockBox.Add(widget.NewLabel("No tunable parameters."))
	}
	if editor != nil {
		w.blockBox.Add(widget.NewSeparator())
		w.blockBox.Add(editor)
	}
	w.blockBox.Refresh()
}

// robotParam is one robot parameter the window offers.
type robotParam struct {
	Label, Path, Unit string
}

// robotParams lists what the robot tab offers for r.
func robotParams(r *models.Robot) []robotParam {
	var out []robotParam
	unitOf := func(a *models.Actuator, lin, rot string) string {
		if a.Linear {
			return lin
		}
		return rot
	}
	if len(r.Actuators) > 0 {
		u := unitOf(&r.Actuators[0], "m", "rad")
		for _, a := range r.Actuators[1:] {
			if unitOf(&a, "m", "rad") != u {
				u = "" // mixed: a plain number in SI
			}
		}
		out = append(out, robotParam{"Backlash, every actuator", "actuators.backlash", u})
	}
	for i := range r.Actuators {
		a := &r.Actuators[i]
		out = append(out, robotParam{"Backlash, " + a.Name, "actuators." + a.Name + ".backlash", unitOf(a, "m", "rad")})
	}
	for i := range r.Actuators {
		a := &r.Actuators[i]
		out = append(out, robotParam{"Speed, " + a.Name, "actuators." + a.Name + ".no_load_speed", unitOf(a, "m/s", "rad/s")})
	}
	if r.Ballast != nil {
		out = append(out, robotParam{"Ballast mass", "ballast.mass", "kg"}, robotParam{"Ballast start position", "ballast.position", "m"})
	}
	if len(r.Feet) > 0 {
		out = append(out, robotParam{"Pad stiffness", "feet.pad_stiffness", "N/m"},
			robotParam{"Pad damping", "feet.pad_damping", "N*s/m"},
			robotParam{"Pad travel", "feet.pad_travel", "m"})
	}
	if r.Battery != nil {
		out = append(out, robotParam{"Battery voltage (full)", "battery.voltage", "V"})
	}
	out = append(out, robotParam{"Sensor noise (1 = as written)", "sensors.noise", ""})
	return out
}

func (w *Window) buildRobotRows() {
	w.robotBox.Objects = nil
	w.robotBox.Add(widget.NewLabel("Changing these rebuilds the robot: the run restarts, the gains are kept."))
	current := w.currentRobot()
	for _, rp := range robotParams(current) {
		rp := rp
		v, err := models.GetParam(current, rp.Path)
		if err != nil {
			continue
		}
		f := newNumberField(rp.Unit, math.Inf(-1), math.Inf(1), nil)
		f.apply = func(v float64) {
			// Check against the model first, so a bad value shows beside
			// the entry and is never applied.
			probe := w.currentRobot()
			if err := models.SetParam(probe, rp.Path, v); err != nil {
				f.Reason.SetText(inEntryUnit(err, rp.Path, v, rp.Unit))
				f.Reason.Show()
				return
			}
			old, ok := w.rparam[rp.Path]
			if !ok {
				old, _ = models.GetParam(w.robot, rp.Path)
			}
			w.hist.record(change{Kind: "robot", Path: rp.Path, Old: old, New: v})
			w.applyRobotParam(rp.Path, v)
		}
		f.show(v)
		w.robotBox.Add(container.NewBorder(nil, nil, widget.NewLabel(rp.Label), nil, f.object()))
	}
	w.robotBox.Refresh()
}

// inEntryUnit words an error of models.SetParam, which gives the value in
// SI ("parameter P: V reason"), with the value in the entry's own unit.
func inEntryUnit(err error, path string, v float64, unit string) string {
	if reason, ok := strings.CutPrefix(err.Error(), fmt.Sprintf("parameter %q: %g ", path, v)); ok {
		return formatValue(v, unit) + " " + reason
	}
	return err.Error()
}

func (w *Window) applyRobotParam(path string, v float64) {
	w.rparam[path] = v
	w.rorder = append(slices.DeleteFunc(w.rorder, func(p string) bool { return p == path }), path)
	w.live = w.currentRobot()
	w.after(w.run.SetParam(path, v))
	w.lastVer = 0
	// A group path (every actuator, every pad) changes the members shown.
	w.buildRobotRows()
	w.autosave()
}
