package ui

import (
	"errors"
	"fmt"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/dialog"
	"fyne.io/fyne/v2/widget"

	"teeter/control"
	"teeter/models"
	"teeter/sim/rig"
)

// Editing the controller graph works on the controller section as a value
// tree: a change is made to a copy, the copy is parsed and built against the
// robot, and only a controller that passes both replaces the running one.

func scalar(text string) models.Value { return models.Value{Kind: models.Scalar, Text: text} }

// blockList returns the blocks list of a controller section.
func blockList(ctrl *models.Value) (*models.Value, error) {
	f, ok := ctrl.Get("blocks")
	if !ok || f.Value.Kind != models.List {
		return nil, errors.New("the controller has no list of blocks")
	}
	return &f.Value, nil
}

func blockIndex(blocks *models.Value, name string) int {
	for i := range blocks.Items {
		if f, ok := blocks.Items[i].Get("name"); ok && f.Value.Text == name {
			return i
		}
	}
	return -1
}

// removeBlock drops the named block.
func removeBlock(ctrl *models.Value, name string) error {
	blocks, err := blockList(ctrl)
	if err != nil {
		return err
	}
	i := blockIndex(blocks, name)
	if i < 0 {
		return fmt.Errorf("no block %q", name)
	}
	blocks.Items = append(blocks.Items[:i], blocks.Items[i+1:]...)
	return nil
}

// rewire sets the source of one input port of a block, writing the block's
// wiring as a mapping of every wired port.
func rewire(ctrl *models.Value, b *control.BlockSpec, port, source string) error {
	blocks, err := blockList(ctrl)
	if err != nil {
		return err
	}
	i := blockIndex(blocks, b.Name)
	if i < 0 {
		return fmt.Errorf("no block %q", b.Name)
	}
	input := models.Value{Kind: models.Map}
	found := false
	for _, p := range b.Inputs {
		src := p.Source
		if p.Name == port {
			src, found = strings.TrimSpace(source), true
		}
		if src != "" {
			input.Fields = append(input.Fields, models.Field{Key: p.Name, Value: scalar(src)})
		}
	}
	if !found {
		return fmt.Errorf("block %s has no input %q", b.Name, port)
	}
	blk := &blocks.Items[i]
	if f, ok := blk.Get("input"); ok {
		f.Value = input
	} else {
		blk.Fields = append(blk.Fields, models.Field{Key: "input", Value: input})
	}
	return nil
}

// addBlock appends a block written as YAML fields (name, kind, input and
// its settings).
func addBlock(ctrl *models.Value, text string) error {
	v, err := models.ParseValue("(new block)", []byte(text))
	if err != nil {
		return err
	}
	if v.Kind != models.Map {
		return errors.New("(new block): write the block as fields, one per line: name, kind, input and settings")
	}
	blocks, err := blockList(ctrl)
	if err != nil {
		return err
	}
	blocks.Items = append(blocks.Items, v)
	return nil
}

// checkController parses and builds an edited controller for the robot.
func checkController(r *models.Robot, ctrl *models.Value) (*control.Spec, error) {
	spec, err := control.Parse(ctrl)
	if err != nil {
		return nil, err
	}
	if _, err := control.Build(spec, models.Channels(r), models.ActuatorNames(r)); err != nil {
		return nil, err
	}
	return spec, nil
}

// editController applies an edit to the running controller, or shows why
// it cannot be applied and changes nothing. Gains tuned in the window are
// kept for the parameters that still exist.
func (w *Window) editController(edit func(ctrl *models.Value) error) error {
	ctrl, err := rig.ControllerSection(w.robot)
	if err == nil {
		err = edit(ctrl)
	}
	return w.replaceController(ctrl, err)
}

// replaceController runs ctrl in place of the robot's controller, unless
// err (from making ctrl) or the check of ctrl says why not.
func (w *Window) replaceController(ctrl *models.Value, err error) error {
	var spec *control.Spec
	if err == nil {
		spec, err = checkController(w.robot, ctrl)
	}
	next := w.robot.Clone()
	next.Controller = ctrl
	if err == nil {
		run := next.Clone()
		for _, p := range w.rorder {
			_ = models.SetParam(run, p, w.rparam[p])
		}
		err = <-w.run.SetRobot(run)
	}
	if err != nil {
		w.showError("The controller was not changed", err)
		return err
	}
	tuned := w.gains
	w.robot, w.spec = next, spec
	w.live = w.currentRobot()
	w.params = nil
	if g, err := control.Build(spec, models.Channels(next), models.ActuatorNames(next)); err == nil {
		w.params = g.Params()
	}
	w.gains = map[string]float64{}
	for _, p := range w.params {
		w.gains[p.Path] = p.Value
		if v, ok := tuned[p.Path]; ok && v != p.Value {
			w.gains[p.Path] = v
			w.after(w.run.SetGain(p.Path, v))
		}
	}
	w.hist = history{}
	w.buildGainRows()
	w.buildStepButtons()
	for path, v := range w.gains {
		if row := w.gainRows[path]; row != nil {
			row.show(v)
		}
	}
	w.graph.setSpec(w.drawnSpec())
	w.blockBox.Objects = []fyne.CanvasObject{widget.NewLabel("Select a block to see its parameters.")}
	w.blockBox.Refresh()
	w.lastVer = 0
	w.notice.SetText("Controller changed: the run restarted")
	w.autosave()
	return nil
}

// blockEditor is the part of the block panel that removes and rewires.
func (w *Window) blockEditor(b *control.BlockSpec) fyne.CanvasObject {
	box := container.NewVBox()
	for _, in := range b.Inputs {
		in := in
		e := widget.NewEntry()
		e.SetText(in.Source)
		e.SetPlaceHolder("block.output, block or a number")
		e.OnSubmitted = func(src string) {
			w.editController(func(c *models.Value) error { return rewire(c, b, in.Name, src) })
		}
		box.Add(container.NewBorder(nil, nil, widget.NewLabel("input "+in.Name+" ←"), nil, e))
	}
	if len(b.Inputs) > 0 {
		box.Add(widget.NewLabel("Press Enter in an input to rewire it."))
	}
	remove := widget.NewButton("Remove block "+b.Name, func() {
		w.editController(func(c *models.Value) error { return removeBlock(c, b.Name) })
	})
	box.Add(remove)
	return box
}

// addBlockDialog asks for a new block written as YAML fields.
func (w *Window) addBlockDialog() {
	text := widget.NewMultiLineEntry()
	text.SetText("name: new_loop\nkind: pid\ninput: {setpoint: 0, measurement: torso_tilt}\nkp: 1\n")
	text.SetMinRowsVisible(6)
	kinds := widget.NewLabel("Kinds: " + strings.Join(control.KindNames(), ", "))
	kinds.Wrapping = fyne.TextWrapWord
	d := dialog.NewCustomConfirm("Add a block", "Add", "Cancel", container.NewBorder(nil, kinds, nil, nil, text), func(ok bool) {
		if ok {
			w.editController(func(c *models.Value) error { return addBlock(c, text.Text) })
		}
	}, w.win)
	d.Resize(fyne.NewSize(520, 360))
	d.Show()
}
