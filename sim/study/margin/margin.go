// Package margin finds a robot's recovery margin: the largest shove it
// survives in each direction, by bracketing and bisection over runs of the
// rig, with the study's own defaults for every setting left at zero.
package margin

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"

	"golang.org/x/sync/errgroup"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// Spec asks for the recovery margin: the largest shove the robot survives,
// per direction. A zero field takes the study's default (see Filled).
type Spec struct {
	Link  string       // the link shoved; "" is the fall-watch (torso) link
	Point *models.Vec2 // where on it, link frame; nil is its centre of mass
	// Dirs are shove directions as sim.ParseShove reads them: left, right,
	// forward, back, up, down or degrees counter-clockwise from +x
	// (default: left and right for a frontal robot, back and forward for a
	// sagittal one).
	Dirs []string
	Tol  float64 // N*s; the answer is within Tol of the true edge (default 0.05)
	Max  float64 // N*s; the search gives up above this (default 100)
	At   float64 // s; when the shove lands (default ShoveAt)
	// Settle is how long the robot must stay up after the shove, s
	// (default 3).
	Settle float64
	Hold   float64 // s; spread the shove over this long (0: at once)
	Seed   uint64
	// Workers bounds the runs in flight (0: GOMAXPROCS). Directions run
	// side by side and a direction with workers to spare tries several
	// impulses per round.
	Workers  int
	Progress func(done, total int)
}

// Result is the margin in one direction.
type Result struct {
	Dir string `json:"dir"`
	// Survived is the largest impulse found survivable, N*s; Fell the
	// smallest found not to be (Fell - Survived <= Tol unless Capped).
	Survived float64 `json:"survived_Ns"`
	Fell     float64 `json:"fell_Ns"`
	// Capped is set when the robot survived even Max.
	Capped bool `json:"capped"`
	// Unpushed is set when the robot falls with no shove at all.
	Unpushed bool `json:"falls_unpushed"`
	Runs     int  `json:"runs"`
}

// ShoveAt is when the shove lands unless Spec.At says.
const ShoveAt = 0.5 // s

// Filled is the spec with every zero field at the study's default for the
// robot.
func (s Spec) Filled(r *models.Robot) Spec {
	if len(s.Dirs) == 0 {
		s.Dirs = []string{"left", "right"}
		if r.Plane != models.Frontal {
			s.Dirs = []string{"back", "forward"}
		}
	}
	if !(s.Tol > 0) {
		s.Tol = 0.05
	}
	if !(s.Max > 0) {
		s.Max = 100
	}
	if !(s.At > 0) {
		s.At = ShoveAt
	}
	if !(s.Settle > 0) {
		s.Settle = 3
	}
	if s.Workers <= 0 {
		s.Workers = runtime.GOMAXPROCS(0)
	}
	return s
}

// Find finds the recovery margin in each direction by bracketing and
// bisection. Survival is assumed to fall off with the impulse; where it
// does not, the search still returns an impulse survived next to one not
// survived, Tol apart. A blow-up counts as not surviving.
func Find(ctx context.Context, r *rig.Rig, spec Spec) ([]Result, error) {
	spec = spec.Filled(r.Robot)
	units := make([]sim.Shove, len(spec.Dirs))
	for i, d := range spec.Dirs {
		u, err := sim.ParseShove("impulse=1,dir=" + d)
		if err != nil {
			return nil, fmt.Errorf("margin: %v", err)
		}
		units[i] = u
	}
	// Check the rig and the shove's link once, before going parallel.
	probe := units[0]
	probe.Link, probe.Point = spec.Link, spec.Point
	if _, _, err := r.Build(sim.Options{Shoves: []sim.Shove{probe}}); err != nil {
		return nil, err
	}
	s := &search{ctx: ctx, spec: spec, perDir: max(1, spec.Workers/len(spec.Dirs)), try: func(u sim.Shove, j float64) bool {
		return survives(r, spec, u, j)
	}}
	s.estimate = len(spec.Dirs) * (2 + int(math.Ceil(math.Log2(spec.Max/spec.Tol)/math.Log2(float64(s.perDir+1)))))
	results := make([]Result, len(spec.Dirs))
	// Directions side by side, each trying perDir impulses at a time: at
	// most Workers runs in flight.
	var g errgroup.Group
	g.SetLimit(max(1, min(len(spec.Dirs), spec.Workers)))
	for d := range spec.Dirs {
		g.Go(func() error {
			results[d] = s.direction(spec.Dirs[d], units[d])
			return nil
		})
	}
	g.Wait()
	return results, ctx.Err()
}

// search is one margin study under way.
type search struct {
	ctx  context.Context
	spec Spec
	// try tells whether the robot stays up after the unit shove scaled to
	// an impulse.
	try      func(u sim.Shove, j float64) bool
	perDir   int // impulses tried at once in one direction
	estimate int // runs expected, for progress

	mu   sync.Mutex
	done int
}

// survives runs the rig with the unit shove u scaled to impulse j (0: no
// shove) and tells whether the robot stayed up.
func survives(r *rig.Rig, spec Spec, u sim.Shove, j float64) bool {
	opt := sim.Options{Seed: spec.Seed}
	if j > 0 {
		opt.Shoves = []sim.Shove{{At: spec.At, Link: spec.Link, Point: spec.Point, Hold: spec.Hold,
			Impulse: models.Vec2{X: u.Impulse.X * j, Y: u.Impulse.Y * j}}}
	}
	o, err := r.Run(spec.At+spec.Hold+spec.Settle, opt)
	return err == nil && !o.Summary.Fell
}

// survives tries one impulse and counts the run for the progress.
func (s *search) survives(u sim.Shove, j float64) bool {
	ok := s.try(u, j)
	if s.spec.Progress != nil {
		s.mu.Lock()
		s.done++
		s.spec.Progress(min(s.done, s.estimate), s.estimate)
		s.mu.Unlock()
	}
	return ok
}

// tryAll runs the impulses side by side and reports which survived.
func (s *search) tryAll(u sim.Shove, js []float64) []bool {
	out := make([]bool, len(js))
	var g errgroup.Group
	g.SetLimit(s.perDir)
	for i, j := range js {
		g.Go(func() error { out[i] = s.survives(u, j); return nil })
	}
	g.Wait()
	return out
}

// edge is the last impulse of js survived (lo if none) and the first not
// survived (hi if none): js rise, so that is the new bracket.
func edge(js []float64, ok []bool, lo, hi float64) (float64, float64) {
	for i, j := range js {
		if !ok[i] {
			return lo, j
		}
		lo = j
	}
	return lo, hi
}

// direction searches one direction: a bracket, then bisection.
func (s *search) direction(dir string, u sim.Shove) Result {
	res := Result{Dir: dir}
	lo, hi, done := s.bracket(u, &res)
	if done {
		return res
	}
	// Split the bracket into perDir+1 parts per round.
	for s.ctx.Err() == nil && hi-lo > s.spec.Tol {
		n := s.perDir
		if width := (hi - lo) / s.spec.Tol; float64(n+1) > width {
			n = max(1, int(math.Ceil(width))-1)
		}
		js := make([]float64, n)
		for i := range js {
			js[i] = lo + (hi-lo)*float64(i+1)/float64(n+1)
		}
		ok := s.tryAll(u, js)
		res.Runs += n
		lo, hi = edge(js, ok, lo, hi)
	}
	res.Survived, res.Fell = lo, hi
	return res
}

// bracket finds an impulse survived and one not: 0 and impulses growing
// fourfold from 1 N*s. done is set when the search ends there (unpushed
// fall, capped, or cancelled before a bracket), with res filled in.
func (s *search) bracket(u sim.Shove, res *Result) (lo, hi float64, done bool) {
	lo, hi = 0.0, math.NaN()
	first := []float64{0}
	for j := 1.0; len(first) < s.perDir+1 && j < s.spec.Max; j *= 4 {
		first = append(first, j)
	}
	for s.ctx.Err() == nil && math.IsNaN(hi) {
		ok := s.tryAll(u, first)
		res.Runs += len(first)
		if first[0] == 0 && !ok[0] {
			res.Unpushed = true
			return 0, 0, true
		}
		lo, hi = edge(first, ok, lo, hi)
		if !math.IsNaN(hi) {
			break
		}
		if lo >= s.spec.Max {
			res.Survived, res.Fell, res.Capped = lo, math.Inf(1), true
			return 0, 0, true
		}
		first = first[:0]
		for j := math.Max(lo*4, math.Min(1, s.spec.Max)); len(first) < s.perDir; j *= 4 {
			first = append(first, math.Min(j, s.spec.Max))
			if j >= s.spec.Max {
				break
			}
		}
	}
	return lo, hi, false
}
