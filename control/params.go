package control

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"teeter/models"
)

// ParamInfo describes one tunable parameter of a graph.
type ParamInfo struct {
	Path  string // "block.param"
	Block string
	Name  string // the parameter's name within its block
	Value float64
	Unit  string // SI unit, "" for a plain number, "1/s" or "s" for ki and kd
	// Min and Max bound what Set accepts (either may be infinite).
	Min, Max float64
	// SliderMin and SliderMax are a finite span for a slider, around the
	// file's value.
	SliderMin, SliderMax float64
}

// sliderRange picks a finite span for a slider: the parameter's own bounds
// where they are finite, else four times the file's value, at least a span
// that suits the unit.
func sliderRange(p *Param) (float64, float64) {
	span := 1.0
	switch p.Unit {
	case "rad":
		span = 20 * math.Pi / 180
	case "m":
		span = 0.05
	case "rad/s":
		span = 2
	case "m/s":
		span = 0.1
	}
	span = math.Max(span, 4*math.Abs(p.Value))
	lo, hi := -span, span
	if !math.IsInf(p.Min, -1) {
		lo = p.Min
	}
	if !math.IsInf(p.Max, 1) {
		hi = p.Max
	}
	return lo, hi
}

// Params lists the tunable parameters in file order, with their current
// values.
func (g *Graph) Params() []ParamInfo {
	g.mu.Lock()
	defer g.mu.Unlock()
	out := make([]ParamInfo, len(g.params))
	for i, p := range g.params {
		out[i] = p.info
		out[i].Value = g.want[i]
	}
	return out
}

// Get returns a parameter's value (the one last set, even if no tick has
// applied it yet).
func (g *Graph) Get(path string) (float64, error) {
	i, ok := g.byPath[path]
	if !ok {
		return 0, g.unknownPath(path)
	}
	g.mu.Lock()
	defer g.mu.Unlock()
	return g.want[i], nil
}

func (g *Graph) unknownPath(path string) error {
	block, _, _ := strings.Cut(path, ".")
	var same []string
	for _, p := range g.params {
		if p.info.Block == block {
			same = append(same, p.info.Name)
		}
	}
	if len(same) == 0 {
		return fmt.Errorf("no tunable parameter %q: there is no block %q with tunable parameters", path, block)
	}
	return fmt.Errorf("no tunable parameter %q (block %s has %s)", path, block, strings.Join(same, ", "))
}

func (g *Graph) check(i int, v float64) error {
	info := &g.params[i].info
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("%s: %v is not a finite number", info.Path, v)
	}
	if v < info.Min || v > info.Max {
		return fmt.Errorf("%s: %g %s", info.Path, v, outside(v, info.Min, info.Max))
	}
	return nil
}

// Set changes a parameter. The change is applied at the next tick; a PID
// absorbs a change of kp or b into its integral so that its output does not
// jump.
func (g *Graph) Set(path string, v float64) error {
	i, ok := g.byPath[path]
	if !ok {
		return g.unknownPath(path)
	}
	if err := g.check(i, v); err != nil {
		return err
	}
	g.mu.Lock()
	defer g.mu.Unlock()
	if err := g.checkPair(i, v, func(j int) float64 { return g.want[j] }); err != nil {
		return err
	}
	g.want[i], g.dirty[i] = v, true
	g.pending.Store(true)
	return nil
}

// checkPair refuses a value that would cross the other limit of its pair;
// value gives the other parameter's value as it will be.
func (g *Graph) checkPair(i int, v float64, value func(j int) float64) error {
	p := &g.params[i]
	if j := p.upper; j >= 0 && v > value(j) {
		return fmt.Errorf("%s: %g is above %s, %g", p.info.Path, v, g.params[j].info.Path, value(j))
	}
	if j := p.lower; j >= 0 && v < value(j) {
		return fmt.Errorf("%s: %g is below %s, %g", p.info.Path, v, g.params[j].info.Path, value(j))
	}
	return nil
}

// Gain is one entry of a gain set. Pos is where it was read from, if it was.
type Gain struct {
	Path  string
	Value float64
	Pos   models.Pos
}

// GainSet is a set of parameter values sorted by path, with the controller
// rate they were tuned at (0 when unknown). Gains are in SI units of
// continuous time (ki in 1/s, kd in s), so they do not depend on the rate;
// the rate is kept for firmware, which discretises with it.
type GainSet struct {
	Rate  float64
	Gains []Gain
}

// Lookup returns the value of a path in the set.
func (s GainSet) Lookup(path string) (float64, bool) {
	i := sort.Search(len(s.Gains), func(i int) bool { return s.Gains[i].Path >= path })
	if i < len(s.Gains) && s.Gains[i].Path == path {
		return s.Gains[i].Value, true
	}
	return 0, false
}

// Gains returns every tunable parameter's current value.
func (g *Graph) Gains() GainSet {
	g.mu.Lock()
	defer g.mu.Unlock()
	gs := GainSet{Rate: g.rate, Gains: make([]Gain, len(g.params))}
	for i, p := range g.params {
		gs.Gains[i] = Gain{Path: p.info.Path, Value: g.want[i]}
	}
	sortGains(gs.Gains)
	return gs
}

func sortGains(gains []Gain) {
	sort.SliceStable(gains, func(i, j int) bool { return gains[i].Path < gains[j].Path })
}

// Apply sets every parameter of a gain set, or none of them: it first checks
// them all and reports every unknown path and bad value, with the position
// each was read from.
func (g *Graph) Apply(gs GainSet) error {
	var ps models.Problems
	for _, e := range gs.Gains {
		i, ok := g.byPath[e.Path]
		if !ok {
			ps.Add(e.Pos, "gains."+e.Path, "%v", g.unknownPath(e.Path))
			continue
		}
		if err := g.check(i, e.Value); err != nil {
			ps.Add(e.Pos, "gains."+e.Path, "%v", err)
		}
	}
	if err := ps.Err(); err != nil {
		return err
	}
	g.mu.Lock()
	defer g.mu.Unlock()
	next := func(j int) float64 {
		if v, ok := gs.Lookup(g.params[j].info.Path); ok {
			return v
		}
		return g.want[j]
	}
	for _, e := range gs.Gains {
		if err := g.checkPair(g.byPath[e.Path], e.Value, next); err != nil {
			ps.Add(e.Pos, "gains."+e.Path, "%v", err)
		}
	}
	if err := ps.Err(); err != nil {
		return err
	}
	for _, e := range gs.Gains {
		i := g.byPath[e.Path]
		g.want[i], g.dirty[i] = e.Value, true
	}
	g.pending.Store(true)
	return nil
}
