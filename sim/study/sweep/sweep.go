// Package sweep runs a robot over a grid of parameter values, one or two
// axes of robot parameters or gains, on a pool of workers; it writes, reads
// and merges the results as CSV, so that shards of one sweep run as a job
// array can be joined.
package sweep

import (
	"context"
	"fmt"
	"math"
	"runtime"
	"sync"

	"golang.org/x/sync/errgroup"

	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/metric"
)

// Spec is a sweep to run.
type Spec struct {
	Axes     []Axis   // one or two (more work, but only one and two plot)
	Metrics  []string // metric names
	Duration float64  // simulated seconds per point
	Shoves   []sim.Shove
	Seed     uint64 // point i runs with seed Seed+i
	Workers  int    // 0: GOMAXPROCS
	Shard    Shard
	// Progress, if set, is called after each point with the number done
	// and the number this shard will run, from one goroutine at a time.
	Progress func(done, total int)
}

// Point is one grid point's result.
type Point struct {
	Index   int
	Values  []float64 // one per axis
	Metrics []float64 // one per metric; NaN where a point failed
	Err     string    // why the point failed, "" if it did not
}

// Result is a sweep's points in grid order (a shard's or a cancelled
// sweep's are a subset).
type Result struct {
	Axes    []string // parameter paths
	Metrics []string
	Units   []string // of the metrics
	Total   int      // points in the full grid
	Points  []Point
}

// Run runs every point of the grid (or of the shard) on a pool of workers.
// Results do not depend on the number of workers: each point has its own
// seed and the points come back in grid order. A point that fails (a
// blow-up, a bad value) is recorded with its error and the sweep goes on.
// If ctx is cancelled the points done so far are returned with ctx.Err().
func Run(ctx context.Context, r *rig.Rig, spec Spec) (*Result, error) {
	res, ms, err := newResult(spec)
	if err != nil {
		return nil, err
	}
	params, err := r.Params(res.Axes)
	if err != nil {
		return nil, err
	}
	var todo []int
	for i := 0; i < res.Total; i++ {
		if spec.Shard.has(i) {
			todo = append(todo, i)
		}
	}
	point := func(index int) Point {
		pt := Point{Index: index, Values: gridValues(spec.Axes, index), Metrics: make([]float64, len(ms))}
		for k := range pt.Metrics {
			pt.Metrics[k] = math.NaN()
		}
		v, err := params.Variant(pt.Values)
		if err == nil {
			var o *rig.Outcome
			o, err = v.Run(spec.Duration, sim.Options{Seed: spec.Seed + uint64(index), Shoves: spec.Shoves})
			if err == nil {
				for k, m := range ms {
					pt.Metrics[k] = m.Eval(o)
				}
			}
		}
		if err != nil {
			pt.Err = err.Error()
		}
		return pt
	}
	out := make([]Point, len(todo))
	done := pool(ctx, len(todo), spec.Workers, func(i int) { out[i] = point(todo[i]) }, spec.Progress)
	for i, ok := range done {
		if ok {
			res.Points = append(res.Points, out[i])
		}
	}
	return res, ctx.Err()
}

// newResult checks a spec and makes its empty result, with the metrics it
// asks for.
func newResult(spec Spec) (*Result, []metric.Metric, error) {
	if len(spec.Axes) == 0 {
		return nil, nil, fmt.Errorf("sweep: no parameter to sweep")
	}
	if len(spec.Metrics) == 0 {
		return nil, nil, fmt.Errorf("sweep: no metric asked for")
	}
	if !(spec.Duration > 0) {
		return nil, nil, fmt.Errorf("sweep: duration %g s must be positive", spec.Duration)
	}
	res := &Result{Total: 1}
	var ms []metric.Metric
	for _, name := range spec.Metrics {
		m, err := metric.Lookup(name)
		if err != nil {
			return nil, nil, err
		}
		ms = append(ms, m)
		res.Metrics = append(res.Metrics, m.Name)
		res.Units = append(res.Units, m.Unit)
	}
	for _, a := range spec.Axes {
		res.Axes = append(res.Axes, a.Path)
		res.Total *= max(a.Steps, 1)
	}
	return res, ms, nil
}

// pool runs job(0..n-1) on at most workers goroutines (0: GOMAXPROCS) and
// starts no job once ctx is done; done[i] tells whether job i ran. Each job
// writes its own slot, so the order of completion does not matter.
func pool(ctx context.Context, n, workers int, job func(int), progress func(done, total int)) (done []bool) {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	var g errgroup.Group
	g.SetLimit(workers)
	done = make([]bool, n)
	var mu sync.Mutex
	count := 0
	for i := 0; i < n && ctx.Err() == nil; i++ {
		g.Go(func() error {
			if ctx.Err() != nil {
				return nil
			}
			job(i)
			mu.Lock()
			defer mu.Unlock()
			done[i] = true
			count++
			if progress != nil {
				progress(count, n)
			}
			return nil
		})
	}
	g.Wait()
	return done
}
