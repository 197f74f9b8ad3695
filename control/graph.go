package control

import (
	"cmp"
	"fmt"
	"slices"
	"sort"
	"strings"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/graph"
	"gonum.org/v1/gonum/graph/simple"
	"gonum.org/v1/gonum/graph/topo"

	"teeter/models"
)

// source is where an input's value comes from after resolving its name.
type source struct {
	block, output int // index into Spec.Blocks and that block's Outputs
	literal       float64
	isLiteral     bool
	wired         bool
}

// wiring is a Spec resolved: every input's source, and the blocks in the
// order they are evaluated.
type wiring struct {
	sources [][]source // per block, per input
	order   []int      // block indices, delays first
}

// resolve finds the source of every input and an evaluation order, adding a
// problem for each bad reference, unwired input and loop without a delay.
// It returns nil when the wiring is unusable.
func resolve(spec *Spec, ps *models.Problems) *wiring {
	byName := make(map[string]int, len(spec.Blocks))
	for i, b := range spec.Blocks {
		byName[b.Name] = i
	}
	w := &wiring{sources: make([][]source, len(spec.Blocks))}
	ok := true
	for i, b := range spec.Blocks {
		w.sources[i] = make([]source, len(b.Inputs))
		for j, p := range b.Inputs {
			path := blockPath(b.Name) + ".input." + p.Name
			if p.Source == "" {
				if !p.Optional {
					ps.Add(b.Pos, path, "input %q is not connected", p.Name)
					ok = false
				}
				continue
			}
			src, msg := resolveSource(spec, byName, p.Source)
			if msg != "" {
				ps.Add(p.Pos, path, "%s", msg)
				ok = false
				continue
			}
			w.sources[i][j] = src
		}
	}
	if !ok {
		return nil
	}
	next := feeds(spec, w)
	g := tickGraph(next)
	if !findLoops(spec, next, g, ps) {
		return nil
	}
	w.order = evaluationOrder(g)
	return w
}

// resolveSource reads "block.output", "block" (its output out, or its only
// output) or a number.
func resolveSource(spec *Spec, byName map[string]int, text string) (source, string) {
	if c := text[0]; (c >= '0' && c <= '9') || c == '-' || c == '+' || c == '.' {
		x, _, err := parseNumber(&models.Value{Kind: models.Scalar, Text: text}, mSignal)
		if err != nil {
			return source{}, err.Error()
		}
		return source{literal: x, isLiteral: true, wired: true}, ""
	}
	name, output, dotted := strings.Cut(text, ".")
	i, ok := byName[name]
	if !ok {
		return source{}, fmt.Sprintf("%q: no block named %q", text, name)
	}
	b := spec.Blocks[i]
	if !dotted {
		switch {
		case slices.Contains(b.Outputs, "out"):
			output = "out"
		case len(b.Outputs) == 1:
			output = b.Outputs[0]
		default:
			return source{}, fmt.Sprintf("%q: %s block %s has outputs %s; name one as %s.OUTPUT", text, b.Kind, name, strings.Join(b.Outputs, ", "), name)
		}
	}
	for k, o := range b.Outputs {
		if o == output {
			return source{block: i, output: k, wired: true}, ""
		}
	}
	if len(b.Outputs) == 0 {
		return source{}, fmt.Sprintf("%q: %s block %s has no outputs", text, b.Kind, name)
	}
	return source{}, fmt.Sprintf("%q: %s block %s has no output %q (outputs: %s)", text, b.Kind, name, output, strings.Join(b.Outputs, ", "))
}

// feeds lists, per block, the blocks its outputs feed within one tick:
// everything but a delay's output, which is known before the tick.
func feeds(spec *Spec, w *wiring) [][]int {
	out := make([][]int, len(spec.Blocks))
	for i := range spec.Blocks {
		for _, s := range w.sources[i] {
			if s.wired && !s.isLiteral && spec.Blocks[s.block].Kind != "delay" && !slices.Contains(out[s.block], i) {
				out[s.block] = append(out[s.block], i)
			}
		}
	}
	for i := range out {
		sort.Ints(out[i])
	}
	return out
}

// tickGraph is next (from feeds) as a gonum graph whose node IDs are block
// indices. A simple graph holds no edge from a node to itself, so a block
// fed by itself is found from next.
func tickGraph(next [][]int) *simple.DirectedGraph {
	g := simple.NewDirectedGraph()
	for i := range next {
		g.AddNode(simple.Node(i))
	}
	for i, list := range next {
		for _, u := range list {
			if u != i {
				g.SetEdge(g.NewEdge(simple.Node(i), simple.Node(u)))
			}
		}
	}
	return g
}

// findLoops reports each strongly connected group of blocks that has no
// delay in it, naming one loop through it, and reports whether there were
// none.
func findLoops(spec *Spec, next [][]int, g *simple.DirectedGraph, ps *models.Problems) bool {
	ok := true
	for _, comp := range topo.TarjanSCC(g) {
		blocks := blockIndices(comp)
		if len(blocks) == 1 && !slices.Contains(next[blocks[0]], blocks[0]) {
			continue
		}
		ok = false
		cycle := cycleThrough(blocks[0], blocks, next)
		names := make([]string, len(cycle))
		for i, b := range cycle {
			names[i] = spec.Blocks[b].Name
		}
		start := spec.Blocks[blocks[0]]
		ps.Add(start.Pos, blockPath(start.Name), "loop without a delay: %s", strings.Join(names, " -> "))
	}
	return ok
}

// blockIndices gives the block indices of graph nodes, sorted.
func blockIndices(nodes []graph.Node) []int {
	out := make([]int, len(nodes))
	for i, n := range nodes {
		out[i] = int(n.ID())
	}
	sort.Ints(out)
	return out
}

// cycleThrough finds a path from start back to itself inside comp, taking
// the lowest-numbered block first at each step, and returns it with start at
// both ends.
func cycleThrough(start int, comp []int, next [][]int) []int {
	seen := map[int]bool{}
	var path []int
	var walk func(v int) bool
	walk = func(v int) bool {
		path = append(path, v)
		for _, u := range next[v] {
			if u == start {
				path = append(path, u)
				return true
			}
			if slices.Contains(comp, u) && !seen[u] {
				seen[u] = true
				if walk(u) {
					return true
				}
			}
		}
		path = path[:len(path)-1]
		return false
	}
	walk(start)
	return path
}

// evaluationOrder sorts the blocks of a loop-free tick graph so that each
// comes after the blocks that feed it within a tick. Where the wiring leaves
// a choice, topo.SortStabilized settles it by block index, so a file whose
// blocks are already written in feed order runs in file order.
func evaluationOrder(g *simple.DirectedGraph) []int {
	sorted, err := topo.SortStabilized(g, byID)
	if err != nil {
		panic("control: evaluation order of a graph with a loop: " + err.Error()) // findLoops refused it first
	}
	out := make([]int, len(sorted))
	for i, n := range sorted {
		out[i] = int(n.ID())
	}
	return out
}

func byID(nodes []graph.Node) {
	slices.SortFunc(nodes, func(a, b graph.Node) int { return cmp.Compare(a.ID(), b.ID()) })
}

func checkWiring(spec *Spec, ps *models.Problems) { resolve(spec, ps) }

// Graph is a built controller for one robot. It satisfies the plant's
// controller interface. Params, Get, Set, Apply and Request may be called
// from another goroutine while the plant ticks; their effect shows at the
// next tick.
type Graph struct {
	rate, h float64
	order   []block
	// orderSpecs holds the spec of each block in order, to name a block
	// whose tick panics.
	orderSpecs []*BlockSpec
	delays     []*delayBlock
	vals       []float64
	// signal slots come first in vals, then the literal inputs
	signalNames []string
	literals    []float64

	params     []param
	byPath     map[string]int
	sequencers map[string]*sequencerBlock

	mu       sync.Mutex
	want     []float64 // requested value of each parameter
	dirty    []bool
	requests []request
	pending  atomic.Bool

	// during a tick
	now                float64
	readings, commands []float64
}

type param struct {
	info  ParamInfo
	ptr   *float64
	owner block
	// upper and lower are the parameters this one must stay at or below,
	// and at or above (a limit pair), or -1.
	upper, lower int
	atMost       string
}

type request struct {
	seq   *sequencerBlock
	event string
}

// buildContext hands each kind's build function what it needs.
type buildContext struct {
	g          *Graph
	spec       *Spec
	w          *wiring
	index      int // block being built
	firstSlot  []int
	literalAt  int
	channels   []string
	actuators  []string
	sequencers map[string]*sequencerBlock
}

// ports finds the slots of the inputs and the first output of the block
// being built, giving each literal input a slot of its own.
func (c *buildContext) ports() ports {
	srcs := c.w.sources[c.index]
	in := make([]int, len(srcs))
	for i, s := range srcs {
		switch {
		case !s.wired:
			in[i] = -1
		case s.isLiteral:
			in[i] = c.literalAt + len(c.g.literals)
			c.g.literals = append(c.g.literals, s.literal)
		default:
			in[i] = c.firstSlot[s.block] + s.output
		}
	}
	return ports{in: in, out: c.firstSlot[c.index]}
}

// bind sets a built block's field from the parameter and, for a tunable
// one, makes it reachable by path.
func (c *buildContext) bind(b *BlockSpec, name string, field *float64) {
	p := b.param(name)
	if p == nil {
		return
	}
	*field = p.Value
	if !p.Tunable {
		return
	}
	info := ParamInfo{Path: b.Name + "." + name, Block: b.Name, Name: name, Value: p.Value, Unit: p.Unit, Min: p.Min, Max: p.Max}
	info.SliderMin, info.SliderMax = sliderRange(p)
	c.g.byPath[info.Path] = len(c.g.params)
	c.g.params = append(c.g.params, param{info: info, ptr: field, upper: -1, lower: -1, atMost: p.AtMost})
}

func (c *buildContext) channel(b *BlockSpec) int {
	return slices.Index(c.channels, b.Options["channel"])
}

func (c *buildContext) actuator(b *BlockSpec) int {
	return slices.Index(c.actuators, b.Options["actuator"])
}

// Build makes a graph for a robot whose sensor channels and actuators are
// named, in the plant's order, by channels and actuators. Besides the checks
// of Parse it reports channels and actuators the robot does not have and an
// actuator driven by two blocks.
func Build(spec *Spec, channels, actuators []string) (*Graph, error) {
	if spec == nil {
		return nil, fmt.Errorf("no controller given")
	}
	var ps models.Problems
	checkRobot(spec, channels, actuators, &ps)
	w := resolve(spec, &ps)
	if spec.Rate <= 0 {
		ps.Add(spec.Pos, sectionPath+".rate", "the rate must be positive")
	}
	if err := ps.Err(); err != nil {
		return nil, err
	}
	g := &Graph{rate: spec.Rate, h: 1 / spec.Rate, byPath: map[string]int{}, sequencers: map[string]*sequencerBlock{}}
	c := &buildContext{g: g, spec: spec, w: w, channels: channels, actuators: actuators, sequencers: g.sequencers}
	c.firstSlot = make([]int, len(spec.Blocks))
	for i, b := range spec.Blocks {
		c.firstSlot[i] = len(g.signalNames)
		for _, o := range b.Outputs {
			g.signalNames = append(g.signalNames, b.Name+"."+o)
		}
	}
	c.literalAt = len(g.signalNames)
	built := make([]block, len(spec.Blocks))
	for i, b := range spec.Blocks {
		c.index = i
		first := len(g.params)
		built[i] = kinds[b.Kind].build(b, c)
		for k := first; k < len(g.params); k++ {
			g.params[k].owner = built[i]
		}
		if d, ok := built[i].(*delayBlock); ok {
			g.delays = append(g.delays, d)
		}
	}
	for _, i := range w.order {
		g.order = append(g.order, built[i])
		g.orderSpecs = append(g.orderSpecs, spec.Blocks[i])
	}
	g.vals = make([]float64, c.literalAt+len(g.literals))
	for i := range g.params {
		p := &g.params[i]
		if j, ok := g.byPath[p.info.Block+"."+p.atMost]; ok && p.atMost != "" {
			p.upper, g.params[j].lower = j, i
		}
	}
	g.want = make([]float64, len(g.params))
	g.dirty = make([]bool, len(g.params))
	for i, p := range g.params {
		g.want[i] = p.info.Value
	}
	g.Reset()
	return g, nil
}

func checkRobot(spec *Spec, channels, actuators []string, ps *models.Problems) {
	driver := map[string]string{}
	for _, b := range spec.Blocks {
		switch b.Kind {
		case "sensor":
			ch := b.Options["channel"]
			if ch == "" || slices.Contains(channels, ch) {
				continue
			}
			sensor, _, _ := strings.Cut(ch, ".")
			var same []string
			for _, c := range channels {
				if strings.HasPrefix(c, sensor+".") {
					same = append(same, c)
				}
			}
			if len(same) == 0 {
				ps.Add(b.where("channel"), blockPath(b.Name)+".channel", "the robot has no sensor %q (for channel %q)", sensor, ch)
			} else {
				ps.Add(b.where("channel"), blockPath(b.Name)+".channel", "the robot has no channel %q (%s has %s)", ch, sensor, strings.Join(same, ", "))
			}
		case "actuator":
			a := b.Options["actuator"]
			if a == "" {
				continue
			}
			if !slices.Contains(actuators, a) {
				ps.Add(b.where("actuator"), blockPath(b.Name)+".actuator", "the robot has no actuator %q (it has %s)", a, strings.Join(actuators, ", "))
				continue
			}
			if other, dup := driver[a]; dup {
				ps.Add(b.where("actuator"), blockPath(b.Name)+".actuator", "actuator %q is already driven by block %s", a, other)
				continue
			}
			driver[a] = b.Name
		}
	}
}

// Rate is the rate the graph expects to be ticked at, Hz.
func (g *Graph) Rate() float64 { return g.rate }

// Reset returns every block to its state at power-on, keeping the current
// parameter values and dropping pending event requests.
func (g *Graph) Reset() {
	g.mu.Lock()
	g.applyLocked()
	g.requests = g.requests[:0]
	g.mu.Unlock()
	for i := range g.vals {
		g.vals[i] = 0
	}
	copy(g.vals[len(g.signalNames):], g.literals)
	for _, b := range g.order {
		b.reset(g)
	}
}

// Tick computes the actuator commands from the readings at time now.
// Actuators no block drives get 0. Short slices are tolerated: a missing
// reading reads as the last value, a missing command is not written.
//
// A panic in a block's tick is a bug in that block; Tick panics on with an
// error naming the block and its kind, so that it is not taken for a
// failure of whatever runs the graph.
func (g *Graph) Tick(now float64, readings, commands []float64) {
	g.now, g.readings, g.commands = now, readings, commands
	if g.pending.Load() {
		g.mu.Lock()
		g.applyLocked()
		g.mu.Unlock()
	}
	for i := range commands {
		commands[i] = 0
	}
	g.tickBlocks()
	for _, d := range g.delays {
		d.latch(g)
	}
	g.readings, g.commands = nil, nil
}

func (g *Graph) tickBlocks() {
	at := 0
	defer func() {
		if r := recover(); r != nil {
			b := g.orderSpecs[at]
			panic(fmt.Errorf("control: block %q (%s): %v", b.Name, b.Kind, r))
		}
	}()
	for ; at < len(g.order); at++ {
		g.order[at].tick(g)
	}
}

// applyLocked brings requested parameter values and event requests into
// the blocks. The caller holds g.mu.
func (g *Graph) applyLocked() {
	for i := range g.params {
		if !g.dirty[i] {
			continue
		}
		p := &g.params[i]
		if r, ok := p.owner.(interface{ beforeRetune() }); ok {
			r.beforeRetune()
		}
		*p.ptr = g.want[i]
		g.dirty[i] = false
	}
	for _, r := range g.requests {
		r.seq.request(r.event)
	}
	g.requests = g.requests[:0]
	g.pending.Store(false)
}

// stateful is a block that keeps state beyond its outputs' slots.
type stateful interface {
	stateLen() int
	saveState(dst []float64)
	loadState(src []float64)
}

// StateLen is the length of the graph's state as SaveState writes it: every
// signal slot (filters, delays and rate limits read their last output
// back), then each block's own state (integrals, derivative filters,
// sequencer states) in evaluation order. Studies read and write it to
// linearise a closed loop around a state.
func (g *Graph) StateLen() int {
	n := len(g.signalNames)
	for _, b := range g.order {
		if s, ok := b.(stateful); ok {
			n += s.stateLen()
		}
	}
	return n
}

// SaveState writes the graph's state into dst, which holds StateLen
// values. It allocates nothing.
func (g *Graph) SaveState(dst []float64) {
	at := copy(dst, g.vals[:len(g.signalNames)])
	for _, b := range g.order {
		if s, ok := b.(stateful); ok {
			s.saveState(dst[at:])
			at += s.stateLen()
		}
	}
}

// LoadState sets the graph's state from src, as SaveState wrote it.
func (g *Graph) LoadState(src []float64) {
	at := copy(g.vals[:len(g.signalNames)], src)
	for _, b := range g.order {
		if s, ok := b.(stateful); ok {
			s.loadState(src[at:])
			at += s.stateLen()
		}
	}
}

// flag and isSet carry a block's switches in a state vector.
func flag(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

func isSet(x float64) bool { return x >= 0.5 }

// SignalNames names every block output as "block.output", in file order.
func (g *Graph) SignalNames() []string { return append([]string(nil), g.signalNames...) }

// Signals writes the current value of each signal into dst, in the order of
// SignalNames.
func (g *Graph) Signals(dst []float64) { copy(dst, g.vals[:len(g.signalNames)]) }

// Request latches an event (such as "start" or "stop") on a sequencer
// block. It takes effect at the next tick and stays latched until a state
// with a transition on that event consumes it.
func (g *Graph) Request(block, event string) error {
	s, ok := g.sequencers[block]
	if !ok {
		return fmt.Errorf("no sequencer block named %q", block)
	}
	if !slices.Contains(s.events, event) {
		return fmt.Errorf("sequencer %s has no event %q (events: %s)", block, event, strings.Join(s.events, ", "))
	}
	g.mu.Lock()
	g.requests = append(g.requests, request{seq: s, event: event})
	g.pending.Store(true)
	g.mu.Unlock()
	return nil
}
