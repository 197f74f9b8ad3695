// Package margin finds a robot's recovery margin: the largest shove it
// survives in each direction, by bracketing and bisection over runs of the
// rig, with the study's own defaults for every setting left at zero.
package margin

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sort"
	"sync"

	"golang.org/x/sync/errgroup"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// Spec asks for the recovery margin: the largest shove the robot survives,
// per direction, over several noise seeds. A zero field takes the study's
// default (see Filled); the command line and the window both show those.
type Spec struct {
	Link  string       // the link shoved; "" is the fall-watch (torso) link
	Point *models.Vec2 // where on it, link frame; nil is its centre of mass
	// Dirs are shove directions as sim.ParseShove reads them: left, right,
	// forward, back, up, down or degrees counter-clockwise from +x
	// (default: left and right for a frontal robot, back and forward for a
	// sagittal one).
	Dirs []string
	Tol  float64 // N*s; each seed's answer is within Tol of its edge (default 0.05)
	Max  float64 // N*s; the search gives up above this (default 100)
	At   float64 // s; when the shove lands (default ShoveAt)
	// Settle is how long the robot must stay up after the shove, s
	// (default 3).
	Settle float64
	Hold   float64 // s; spread the shove over this long (0: at once)
	// Seeds is how many noise seeds each direction is searched with: Seed,
	// Seed+1, ... (default 8). The margin differs from seed to seed by
	// several N*s on a noisy robot, so one seed says little.
	Seeds int
	Seed  uint64
	// Workers bounds the runs in flight (0: GOMAXPROCS). Searches (a
	// direction and a seed each) run side by side, and a search with
	// workers to spare tries several impulses per round.
	Workers  int
	Progress func(done, total int)
}

// Result is the margin in one direction over the seeds.
type Result struct {
	Dir string `json:"dir"`
	// Trusted is the largest impulse every seed survived, N*s (the least
	// of the seeds' Survived): the number to build on. Median is the
	// seeds' median Survived; Felled the smallest impulse that felled any
	// seed (the least Fell; +Inf when none fell below Max).
	Trusted float64 `json:"trusted_Ns"`
	Median  float64 `json:"median_Ns"`
	Felled  float64 `json:"felled_Ns"`
	Seeds   []Edge  `json:"seeds"`
	Runs    int     `json:"runs"`
}

// Edge is the margin in one direction with one seed.
type Edge struct {
	Seed uint64 `json:"seed"`
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
	if s.Seeds <= 0 {
		s.Seeds = 8
	}
	if s.Workers <= 0 {
		s.Workers = runtime.GOMAXPROCS(0)
	}
	return s
}

// Find finds the recovery margin in each direction by bracketing and
// bisection, once per seed. Survival is assumed to fall off with the
// impulse; where it does not, each search still returns an impulse
// survived next to one not survived, Tol apart. A blow-up counts as not
// surviving. The first seed's search starts cold; the others start from a
// bracket around its answer, which they widen when their edge lies
// outside.
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
	stands := make([]*standing, spec.Seeds)
	for k := range stands {
		stands[k] = &standing{r: r, spec: spec, seed: spec.Seed + uint64(k)}
	}
	searches := len(spec.Dirs) * spec.Seeds
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	s := &search{ctx: ctx, cancel: cancel, spec: spec, perDir: max(1, spec.Workers/searches), try: func(k int, u sim.Shove, j float64) (bool, error) {
		return stands[k].survives(u, j)
	}}
	s.estimate = searches * (2 + int(math.Ceil(math.Log2(spec.Max/spec.Tol)/math.Log2(float64(s.perDir+1)))))
	edges := make([][]Edge, len(spec.Dirs))
	for d := range edges {
		edges[d] = make([]Edge, spec.Seeds)
	}
	// The first seed in every direction, then the rest from its answers:
	// at most Workers runs in flight.
	var g errgroup.Group
	g.SetLimit(max(1, min(len(spec.Dirs), spec.Workers)))
	for d := range spec.Dirs {
		g.Go(func() error {
			edges[d][0] = s.direction(0, units[d], nil)
			return nil
		})
	}
	g.Wait()
	g.SetLimit(max(1, spec.Workers/s.perDir))
	for d := range spec.Dirs {
		for k := 1; k < spec.Seeds; k++ {
			g.Go(func() error {
				edges[d][k] = s.direction(k, units[d], &edges[d][0])
				return nil
			})
		}
	}
	g.Wait()
	if s.err != nil {
		return nil, s.err
	}
	results := make([]Result, len(spec.Dirs))
	for d, dir := range spec.Dirs {
		results[d] = summarise(dir, edges[d])
	}
	return results, ctx.Err()
}

// summarise gathers one direction's seeds.
func summarise(dir string, edges []Edge) Result {
	res := Result{Dir: dir, Seeds: edges, Trusted: math.Inf(1), Felled: math.Inf(1)}
	survived := make([]float64, len(edges))
	for k, e := range edges {
		res.Trusted = math.Min(res.Trusted, e.Survived)
		res.Felled = math.Min(res.Felled, e.Fell)
		res.Runs += e.Runs
		survived[k] = e.Survived
	}
	sort.Float64s(survived)
	n := len(survived)
	res.Median = (survived[(n-1)/2] + survived[n/2]) / 2
	return res
}

// search is one margin study under way.
type search struct {
	ctx  context.Context
	spec Spec
	// try tells whether the robot with the k-th seed stays up after the
	// unit shove scaled to an impulse; an error is a failure that is not
	// the robot's (a controller that broke, a rig that does not build).
	try      func(k int, u sim.Shove, j float64) (bool, error)
	cancel   context.CancelFunc // stops the search at the first such error
	perDir   int                // impulses tried at once in one search
	estimate int                // runs expected, for progress

	mu   sync.Mutex
	done int
	err  error // the first failure that stopped the search
}

// standing holds one seed's robots standing at the shove time, saved there:
// every run of the search starts from that moment instead of repeating the
// same lead-in (a robot per run in flight).
type standing struct {
	r    *rig.Rig
	spec Spec
	seed uint64

	mu   sync.Mutex
	free []*stand
}

type stand struct {
	p     *sim.Plant
	saved *sim.Saved
}

// survives runs the rig with the unit shove u scaled to impulse j (0: no
// shove) and tells whether the robot stayed up.
func (ss *standing) survives(u sim.Shove, j float64) (bool, error) {
	spec := ss.spec
	shoves := []sim.Shove{}
	if j > 0 {
		shoves = []sim.Shove{{At: spec.At, Link: spec.Link, Point: spec.Point, Hold: spec.Hold,
			Impulse: models.Vec2{X: u.Impulse.X * j, Y: u.Impulse.Y * j}}}
	}
	end := spec.At + spec.Hold + spec.Settle
	if ss.r.Program != nil {
		// A controller program cannot be replayed: run it whole.
		o, err := ss.r.Run(end, sim.Options{Seed: ss.seed, Shoves: shoves})
		return verdict(err, o != nil && o.Summary.Fell)
	}
	st, err := ss.get()
	if err != nil {
		return verdict(err, false) // fell, blew up or failed before the shove
	}
	defer ss.put(st)
	if err := st.p.Restore(st.saved); err != nil {
		return false, err
	}
	if err := st.p.Schedule(shoves); err != nil {
		return false, err
	}
	return verdict(st.p.RunFor(end-st.p.Time()), false)
}

// verdict turns a run's end into survived or not. A fall and a physics
// blow-up (a shove too violent for the step) are the robot not surviving;
// anything else, such as a controller that failed, is an error of the
// study, not a margin.
func verdict(err error, fell bool) (bool, error) {
	switch {
	case err == nil:
		return !fell, nil
	case errors.Is(err, sim.ErrFallen), errors.Is(err, sim.ErrBlowUp):
		return false, nil
	}
	return false, err
}

// get takes a standing robot, making one if none is free.
func (ss *standing) get() (*stand, error) {
	ss.mu.Lock()
	if n := len(ss.free); n > 0 {
		st := ss.free[n-1]
		ss.free = ss.free[:n-1]
		ss.mu.Unlock()
		return st, nil
	}
	ss.mu.Unlock()
	p, _, err := ss.r.Build(sim.Options{Seed: ss.seed})
	if err != nil {
		return nil, err
	}
	if err := p.RunFor(ss.spec.At); err != nil {
		return nil, err
	}
	saved, err := p.Save()
	if err != nil {
		return nil, err
	}
	return &stand{p: p, saved: saved}, nil
}

func (ss *standing) put(st *stand) {
	ss.mu.Lock()
	ss.free = append(ss.free, st)
	ss.mu.Unlock()
}

// survives tries one impulse and counts the run for the progress.
func (s *search) survives(k int, u sim.Shove, j float64) bool {
	ok, err := s.try(k, u, j)
	s.mu.Lock()
	defer s.mu.Unlock()
	if err != nil && s.err == nil {
		s.err = fmt.Errorf("margin: seed %d, %.4g N*s: %w", s.spec.Seed+uint64(k), j, err)
		s.cancel()
	}
	if s.spec.Progress != nil {
		s.done++
		s.spec.Progress(min(s.done, s.estimate), s.estimate)
	}
	return ok
}

// tryAll runs the impulses side by side and reports which survived.
func (s *search) tryAll(k int, u sim.Shove, js []float64) []bool {
	out := make([]bool, len(js))
	var g errgroup.Group
	g.SetLimit(s.perDir)
	for i, j := range js {
		g.Go(func() error { out[i] = s.survives(k, u, j); return nil })
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

// direction searches one direction with the k-th seed: a bracket, then
// bisection. near is another seed's answer to start from (nil: none).
func (s *search) direction(k int, u sim.Shove, near *Edge) Edge {
	res := Edge{Seed: s.spec.Seed + uint64(k)}
	lo, hi, done := s.bracket(k, u, s.firstTries(near), &res)
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
		ok := s.tryAll(k, u, js)
		res.Runs += n
		lo, hi = edge(js, ok, lo, hi)
	}
	res.Survived, res.Fell = lo, hi
	// Every impulse tried felled it: does it fall with none?
	if lo == 0 && s.ctx.Err() == nil {
		res.Runs++
		if !s.survives(k, u, 0) {
			res.Unpushed, res.Fell = true, 0
		}
	}
	return res
}

// firstTries are the impulses the bracket starts with: around another
// seed's answer when there is one (a quarter of it either side), else
// growing fourfold from 1 N*s.
func (s *search) firstTries(near *Edge) []float64 {
	if near != nil && !near.Unpushed && near.Survived > 0 {
		g := near.Survived
		d := math.Max(s.spec.Tol, g/4)
		if g-d <= 0 {
			return []float64{math.Min(g+d, s.spec.Max)}
		}
		return []float64{g - d, math.Min(g+d, s.spec.Max)}
	}
	var first []float64
	for j := 1.0; len(first) < s.perDir && j < s.spec.Max; j *= 4 {
		first = append(first, j)
	}
	if len(first) == 0 {
		first = []float64{s.spec.Max}
	}
	return first
}

// bracket finds an impulse survived (0 if none) and one not, trying first
// and then impulses growing fourfold. done is set when the search ends
// there (capped, or cancelled before a bracket), with res filled in.
func (s *search) bracket(k int, u sim.Shove, first []float64, res *Edge) (lo, hi float64, done bool) {
	lo, hi = 0.0, math.NaN()
	for s.ctx.Err() == nil && math.IsNaN(hi) {
		ok := s.tryAll(k, u, first)
		res.Runs += len(first)
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
