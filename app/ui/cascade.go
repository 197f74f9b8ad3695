package ui

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/container"
	"fyne.io/fyne/v2/widget"

	"teeter/control"
	"teeter/sim/live"
)

// The controller tab draws a controller the way its builder thinks of it:
// a cascade of loops, one level per loop depth, the outermost (the body's
// tilt) at the top and the screws at the bottom. Each loop's card says what
// it measures (the sensors tap in from the left of its level), where its
// setpoint comes from, what its output feeds (a split with its shares) and,
// while the robot runs, its error, output and whether it is saturated. A
// sequence shows its current state above the loops. Tapping a card selects
// its block, to tune, rewire or remove it below.

// cascadeCard is one block drawn as a card of text lines.
type cascadeCard struct {
	widget.BaseWidget
	block    string
	back     *canvas.Rectangle
	lines    []*canvas.Text
	onTapped func()
}

func newCascadeCard(block string, lines []string, onTapped func()) *cascadeCard {
	c := &cascadeCard{block: block, onTapped: onTapped}
	c.back = canvas.NewRectangle(pal.BlockFill)
	c.back.StrokeColor, c.back.StrokeWidth, c.back.CornerRadius = pal.BlockEdge, 1, 4
	for i, l := range lines {
		t := canvas.NewText(l, pal.Ink)
		t.TextSize = 12
		if i == 0 {
			t.TextStyle.Bold = true
		} else {
			t.Color = pal.Faint
		}
		c.lines = append(c.lines, t)
	}
	c.ExtendBaseWidget(c)
	return c
}

func (c *cascadeCard) Tapped(*fyne.PointEvent) {
	if c.onTapped != nil {
		c.onTapped()
	}
}

func (c *cascadeCard) setSelected(on bool) {
	c.back.StrokeColor, c.back.StrokeWidth = pal.BlockEdge, 1
	if on {
		c.back.StrokeColor, c.back.StrokeWidth = pal.BlockSelected, 2.5
	}
	c.back.Refresh()
}

// setLine changes one line's text, redrawing only when it changed.
func (c *cascadeCard) setLine(i int, text string, alarm bool) {
	t := c.lines[i]
	col := pal.Faint
	if alarm {
		col = pal.Alarm
	}
	if t.Text != text || t.Color != col {
		t.Text, t.Color = text, col
		t.Refresh()
	}
}

const cardLine = 15 // px per text line

func (c *cascadeCard) CreateRenderer() fyne.WidgetRenderer {
	objs := []fyne.CanvasObject{c.back}
	for _, t := range c.lines {
		objs = append(objs, t)
	}
	return &cardRenderer{c: c, objs: objs}
}

type cardRenderer struct {
	c    *cascadeCard
	objs []fyne.CanvasObject
}

func (r *cardRenderer) Layout(size fyne.Size) {
	r.c.back.Resize(size)
	for i, t := range r.c.lines {
		t.Move(fyne.NewPos(6, float32(4+i*cardLine)))
		t.Resize(fyne.NewSize(size.Width-12, cardLine))
	}
}

func (r *cardRenderer) MinSize() fyne.Size {
	return fyne.NewSize(cardWidth, float32(8+len(r.c.lines)*cardLine))
}
func (r *cardRenderer) Refresh()                     { r.c.back.Refresh() }
func (r *cardRenderer) Objects() []fyne.CanvasObject { return r.objs }
func (r *cardRenderer) Destroy()                     {}

const cardWidth = 170

// loopLive is where a loop card's live line reads its values.
type loopLive struct {
	card               *cascadeCard
	setpoint, measured string // signal names, or a number for a constant setpoint
	out, unit          string
	outUnit            string
	taps               []string // the sensor channels it measures
	lo, hi             float64
	limited            bool
}

// seqLive is where a sequence card reads its state.
type seqLive struct {
	card   *cascadeCard
	signal string
	states []string
}

// cascadeView is the controller tab's drawing.
type cascadeView struct {
	spec     *control.Spec
	content  *fyne.Container
	cards    map[string]*cascadeCard
	loops    []loopLive
	seqs     []seqLive
	selected string
	compact  bool
	onSelect func(block string)
	// noGraph says why there is no graph to draw.
	noGraph func() string

	// The live values: signal indexes in the runner, found once per set of
	// names, and the trace they are read into.
	names []string
	index map[string]int
	want  []int
	tr    live.Trace
}

func newCascadeView(onSelect func(string), noGraph func() string) *cascadeView {
	return &cascadeView{content: container.NewVBox(), onSelect: onSelect, noGraph: noGraph}
}

// signalOf is the signal a port's source names: "block.output" as is, a
// block's only output, or "" for a number.
func signalOf(spec *control.Spec, source string) string {
	if source == "" || strings.Contains(source, ".") {
		return source
	}
	if _, err := strconv.ParseFloat(source, 64); err == nil {
		return ""
	}
	for _, b := range spec.Blocks {
		if b.Name == source && len(b.Outputs) > 0 {
			return b.Name + "." + b.Outputs[0]
		}
	}
	return source
}

// cascadeDepth gives each block the number of PID loops on the longest path
// from it to an actuator, counting itself: the outermost loop is deepest.
func cascadeDepth(spec *control.Spec) []int {
	byName := map[string]int{}
	for i, b := range spec.Blocks {
		byName[b.Name] = i
	}
	users := make([][]int, len(spec.Blocks))
	for i, b := range spec.Blocks {
		for _, p := range b.Inputs {
			name, _, _ := strings.Cut(p.Source, ".")
			if j, ok := byName[name]; ok {
				users[j] = append(users[j], i)
			}
		}
	}
	depth := make([]int, len(spec.Blocks))
	state := make([]int, len(spec.Blocks)) // 0 new, 1 on the path, 2 done
	var visit func(i int) int
	visit = func(i int) int {
		if state[i] == 2 || state[i] == 1 { // done, or a feedback loop
			return depth[i]
		}
		state[i] = 1
		d := 0
		for _, u := range users[i] {
			d = max(d, visit(u))
		}
		if spec.Blocks[i].Kind == "pid" {
			d++
		}
		depth[i], state[i] = d, 2
		return d
	}
	for i := range spec.Blocks {
		visit(i)
	}
	return depth
}

// sensorsOf lists the sensor channels a source reads, through the blocks
// between (filters, sums), stopping at other loops.
func sensorsOf(spec *control.Spec, source string) []string {
	var out []string
	seen := map[string]bool{}
	var walk func(src string)
	walk = func(src string) {
		name, _, _ := strings.Cut(src, ".")
		if seen[name] {
			return
		}
		seen[name] = true
		for _, b := range spec.Blocks {
			if b.Name != name {
				continue
			}
			switch b.Kind {
			case "sensor":
				out = append(out, b.Options["channel"])
			case "pid", "sequencer":
			default:
				for _, p := range b.Inputs {
					walk(p.Source)
				}
			}
		}
	}
	walk(source)
	return out
}

// splitsFed describes the splits a block's output feeds, with their shares.
func splitsFed(spec *control.Spec, block string) []string {
	var out []string
	for _, b := range spec.Blocks {
		if b.Kind != "split" || len(b.Inputs) == 0 || signalOf(spec, b.Inputs[0].Source) != signalOf(spec, block) {
			continue
		}
		var shares []string
		for _, p := range b.Params {
			shares = append(shares, fmt.Sprintf("%s ×%g", p.Name, p.Value))
		}
		out = append(out, "→ "+strings.Join(shares, ", "))
	}
	return out
}

// setSpec draws the cascade of spec (nil: none).
func (g *cascadeView) setSpec(spec *control.Spec) {
	g.spec, g.cards, g.loops, g.seqs, g.names, g.want = spec, map[string]*cascadeCard{}, nil, nil, nil, nil
	g.content.Objects = nil
	if spec == nil || len(spec.Blocks) == 0 {
		g.content.Add(wrapped(g.noGraph()))
		g.content.Refresh()
		return
	}
	card := func(b *control.BlockSpec, lines []string) *cascadeCard {
		name := b.Name
		c := newCascadeCard(name, lines, func() { g.selectBlock(name) })
		g.cards[name] = c
		return c
	}
	heading := func(s string) fyne.CanvasObject {
		t := canvas.NewText(s, pal.Accent)
		t.TextSize, t.TextStyle.Bold = 12, true
		return t
	}
	for _, b := range spec.Blocks {
		if b.Kind == "sequencer" && b.Sequence != nil {
			var states []string
			for _, s := range b.Sequence.States {
				states = append(states, s.Name)
			}
			c := card(b, []string{"sequence " + b.Name, "state: " + states[0]})
			g.seqs = append(g.seqs, seqLive{card: c, signal: b.Name + ".state", states: states})
			g.content.Add(container.NewBorder(nil, nil, heading("Sequence"), nil, container.NewGridWrap(fyne.NewSize(cardWidth, c.MinSize().Height), c)))
		}
	}
	depth := cascadeDepth(spec)
	deepest := slices.Max(depth)
	for level := deepest; level >= 1; level-- {
		var cards []fyne.CanvasObject
		var taps []string
		for i, b := range spec.Blocks {
			if b.Kind != "pid" || depth[i] != level || len(b.Inputs) < 2 {
				continue
			}
			sp, meas := b.Inputs[0].Source, b.Inputs[1].Source
			lines := []string{b.Name, "measures " + meas, "setpoint " + sp}
			if !g.compact {
				lines = append(lines, splitsFed(spec, b.Name)...)
			} else {
				lines = lines[:1]
			}
			lines = append(lines, "")
			c := card(b, lines)
			l := loopLive{card: c, setpoint: signalOf(spec, sp), measured: signalOf(spec, meas), out: b.Name + ".out", taps: sensorsOf(spec, meas)}
			if l.setpoint == "" {
				l.setpoint = sp
			}
			for _, p := range b.Params {
				switch p.Name {
				case "min":
					l.lo, l.limited, l.outUnit = p.Value, true, p.Unit
				case "max":
					l.hi = p.Value
				}
			}
			g.loops = append(g.loops, l)
			cards = append(cards, c)
			for _, s := range l.taps {
				if !slices.Contains(taps, s) {
					taps = append(taps, s)
				}
			}
		}
		if len(cards) == 0 {
			continue
		}
		side := container.NewVBox(heading(fmt.Sprintf("Level %d", deepest-level+1)))
		for _, s := range taps {
			t := canvas.NewText("▸ "+s, pal.Faint)
			t.TextSize = 10
			side.Add(t)
		}
		g.content.Add(widget.NewSeparator())
		g.content.Add(container.NewBorder(nil, nil, side, nil, container.NewGridWrap(fyne.NewSize(cardWidth, cards[0].MinSize().Height), cards...)))
	}
	var screws, others []fyne.CanvasObject
	for _, b := range spec.Blocks {
		switch {
		case b.Kind == "actuator":
			src := ""
			if len(b.Inputs) > 0 {
				src = b.Inputs[0].Source
			}
			screws = append(screws, card(b, []string{b.Options["actuator"], "from " + src}))
		case b.Kind != "pid" && b.Kind != "sequencer" && b.Kind != "sensor":
			name := b.Name
			btn := widget.NewButton(b.Name, func() { g.selectBlock(name) })
			btn.Importance = widget.LowImportance
			others = append(others, btn)
		}
	}
	if len(screws) > 0 && !g.compact {
		g.content.Add(widget.NewSeparator())
		g.content.Add(container.NewBorder(nil, nil, heading("Screws"), nil,
			container.NewGridWrap(fyne.NewSize(cardWidth, screws[0].MinSize().Height), screws...)))
	}
	if len(others) > 0 && !g.compact {
		g.content.Add(widget.NewSeparator())
		g.content.Add(heading("Between the loops: sums, splits, gains, limits, filters"))
		g.content.Add(container.NewGridWrap(fyne.NewSize(cardWidth/1.3, 30), others...))
	}
	g.content.Refresh()
	if c := g.cards[g.selected]; c != nil {
		c.setSelected(true)
	}
}

// setCompact shows each loop as its name and live values only, so a whole
// cascade fits the tab (fit to view).
func (g *cascadeView) setCompact(on bool) {
	g.compact = on
	g.setSpec(g.spec)
}

func (g *cascadeView) selectBlock(name string) {
	if c := g.cards[g.selected]; c != nil {
		c.setSelected(false)
	}
	g.selected = name
	if c := g.cards[name]; c != nil {
		c.setSelected(true)
	}
	if g.onSelect != nil {
		g.onSelect(name)
	}
}

// shortValue is a live value in the window's units, to three digits.
func shortValue(v float64, unit string) string {
	shown, factor := friendlyUnit(unit)
	return strings.TrimSpace(strconv.FormatFloat(v*factor, 'g', 3, 64) + " " + shown)
}

// update writes the live values from the runner's latest trace sample.
func (g *cascadeView) update(run *runner, gains map[string]float64) {
	if names := run.SignalNames(); !slices.Equal(names, g.names) {
		g.names, g.index, g.want = names, map[string]int{}, nil
		for i, n := range names {
			g.index[n] = i
		}
		units := run.SignalUnits()
		for k := range g.loops {
			l := &g.loops[k]
			if i, ok := g.index[l.measured]; ok {
				l.unit = unitOf(units, i)
			}
			// A block's signal has no unit of its own: take the sensor's.
			for _, s := range l.taps {
				if i, ok := g.index[s]; ok && l.unit == "" {
					l.unit = unitOf(units, i)
				}
			}
		}
		// The signals the cards show, looked up once per set of names
		// rather than every frame.
		for _, l := range g.loops {
			for _, s := range []string{l.setpoint, l.measured, l.out} {
				if i, ok := g.index[s]; ok {
					g.want = append(g.want, i)
				}
			}
		}
		for _, s := range g.seqs {
			if i, ok := g.index[s.signal]; ok {
				g.want = append(g.want, i)
			}
		}
	}
	run.Recent(&g.tr, 0.05, g.want)
	value := func(name string) (float64, bool) {
		if x, err := strconv.ParseFloat(name, 64); err == nil {
			return x, true
		}
		i, ok := g.index[name]
		if !ok || len(g.tr.Time) == 0 {
			return 0, false
		}
		k := slices.Index(g.want, i)
		return g.tr.Values[k][len(g.tr.Time)-1], true
	}
	for _, l := range g.loops {
		last := len(l.card.lines) - 1
		r, okR := value(l.setpoint)
		y, okY := value(l.measured)
		u, okU := value(l.out)
		if !okR || !okY || !okU {
			l.card.setLine(last, "", false)
			continue
		}
		block := strings.TrimSuffix(l.out, ".out")
		if on, ok := gains[block+".on"]; ok && on < 0.5 {
			l.card.setLine(last, "off", true)
			continue
		}
		lo, hi := l.lo, l.hi
		if v, ok := gains[block+".min"]; ok {
			lo = v
		}
		if v, ok := gains[block+".max"]; ok {
			hi = v
		}
		sat := l.limited && (u >= hi-1e-9*math.Max(1, math.Abs(hi)) || u <= lo+1e-9*math.Max(1, math.Abs(lo)))
		text := "e " + shortValue(r-y, l.unit) + "   u " + shortValue(u, l.outUnit)
		if sat {
			text += "   saturated"
		}
		l.card.setLine(last, text, sat)
	}
	for _, s := range g.seqs {
		if v, ok := value(s.signal); ok {
			if k := int(math.Round(v)) - 1; k >= 0 && k < len(s.states) {
				s.card.setLine(1, "state: "+s.states[k], false)
			}
		}
	}
}
