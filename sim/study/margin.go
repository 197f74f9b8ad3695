package study

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"

	"teeter/models"
	"teeter/sim"
)

// MarginSpec asks for the recovery margin: the largest shove the robot
// survives, per direction.
type MarginSpec struct {
	Link  string       // the link shoved; "" is the fall-watch (torso) link
	Point *models.Vec2 // where on it, link frame; nil is its centre of mass
	// Dirs are shove directions as sim.ParseShove reads them: left, right,
	// forward, back, up, down or degrees counter-clockwise from +x.
	Dirs []string
	Tol  float64 // N*s; the answer is within Tol of the true edge (default 0.05)
	Max  float64 // N*s; the search gives up above this (default 100)
	At   float64 // s; when the shove lands (default MarginShoveAt)
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

// MarginResult is the margin in one direction.
type MarginResult struct {
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

// MarginShoveAt is when the shove lands unless MarginSpec.At says.
const MarginShoveAt = 0.5 // s

func (s *MarginSpec) defaults() {
	if !(s.Tol > 0) {
		s.Tol = 0.05
	}
	if !(s.Max > 0) {
		s.Max = 100
	}
	if !(s.At > 0) {
		s.At = MarginShoveAt
	}
	if !(s.Settle > 0) {
		s.Settle = 3
	}
	if s.Workers <= 0 {
		s.Workers = runtime.GOMAXPROCS(0)
	}
}

// unitShove turns a direction word into a 1 N*s shove.
func unitShove(dir string) (sim.Shove, error) {
	return sim.ParseShove("impulse=1,dir=" + dir)
}

// Margin finds the recovery margin in each direction by bracketing and
// bisection. Survival is assumed to fall off with the impulse; where it
// does not, the search still returns an impulse survived next to one not
// survived, Tol apart. A blow-up counts as not surviving.
func (r *Rig) Margin(ctx context.Context, spec MarginSpec) ([]MarginResult, error) {
	spec.defaults()
	if len(spec.Dirs) == 0 {
		return nil, fmt.Errorf("margin: no direction given")
	}
	units := make([]sim.Shove, len(spec.Dirs))
	for i, d := range spec.Dirs {
		u, err := unitShove(d)
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
	sem := make(chan struct{}, spec.Workers)
	perDir := max(1, spec.Workers/len(spec.Dirs))
	estimate := len(spec.Dirs) * (2 + int(math.Ceil(math.Log2(spec.Max/spec.Tol)/math.Log2(float64(perDir+1)))))
	var mu sync.Mutex
	done := 0
	survives := func(u sim.Shove, j float64) bool {
		sem <- struct{}{}
		defer func() { <-sem }()
		var opt sim.Options
		opt.Seed = spec.Seed
		if j > 0 {
			s := sim.Shove{At: spec.At, Link: spec.Link, Point: spec.Point, Hold: spec.Hold,
				Impulse: models.Vec2{X: u.Impulse.X * j, Y: u.Impulse.Y * j}}
			opt.Shoves = []sim.Shove{s}
		}
		o, err := r.Execute(spec.At+spec.Hold+spec.Settle, opt)
		ok := err == nil && !o.Summary.Fell
		if spec.Progress != nil {
			mu.Lock()
			done++
			spec.Progress(min(done, estimate), estimate)
			mu.Unlock()
		}
		return ok
	}
	// tryAll runs the impulses in parallel and reports which survived.
	tryAll := func(u sim.Shove, js []float64) []bool {
		out := make([]bool, len(js))
		var wg sync.WaitGroup
		for i, j := range js {
			wg.Add(1)
			go func() { defer wg.Done(); out[i] = survives(u, j) }()
		}
		wg.Wait()
		return out
	}
	results := make([]MarginResult, len(spec.Dirs))
	var wg sync.WaitGroup
	for d := range spec.Dirs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			res := &results[d]
			res.Dir = spec.Dirs[d]
			u := units[d]
			lo, hi := 0.0, math.NaN()
			// Bracket: 0 and impulses growing fourfold from 1 N*s.
			first := []float64{0}
			for j := 1.0; len(first) < perDir+1 && j < spec.Max; j *= 4 {
				first = append(first, j)
			}
			for ctx.Err() == nil && math.IsNaN(hi) {
				ok := tryAll(u, first)
				res.Runs += len(first)
				if first[0] == 0 && !ok[0] {
					res.Unpushed = true
					return
				}
				for i, j := range first {
					if !ok[i] {
						hi = j
						break
					}
					lo = j
				}
				if !math.IsNaN(hi) {
					break
				}
				if lo >= spec.Max {
					res.Survived, res.Fell, res.Capped = lo, math.Inf(1), true
					return
				}
				first = first[:0]
				for j := math.Max(lo*4, math.Min(1, spec.Max)); len(first) < perDir; j *= 4 {
					first = append(first, math.Min(j, spec.Max))
					if j >= spec.Max {
						break
					}
				}
			}
			// Split the bracket into perDir+1 parts per round.
			for ctx.Err() == nil && hi-lo > spec.Tol {
				n := perDir
				if width := (hi - lo) / spec.Tol; float64(n+1) > width {
					n = max(1, int(math.Ceil(width))-1)
				}
				js := make([]float64, n)
				for i := range js {
					js[i] = lo + (hi-lo)*float64(i+1)/float64(n+1)
				}
				ok := tryAll(u, js)
				res.Runs += n
				newLo, newHi := lo, hi
				for i, j := range js {
					if !ok[i] {
						newHi = j
						break
					}
					newLo = j
				}
				lo, hi = newLo, newHi
			}
			res.Survived, res.Fell = lo, hi
		}()
	}
	wg.Wait()
	return results, ctx.Err()
}
