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
	"slices"
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
	// Seeds is how many noise seeds each point runs with (0:
	// DefaultSeeds): seed Seed + index*Seeds + k for the k-th. One seed's
	// run can wobble where its neighbours are calm; the mean and the worst
	// over several show the trend.
	Seeds   int
	Seed    uint64
	Workers int // 0: GOMAXPROCS
	Shard   Shard
	// Progress, if set, is called after each run with the number done
	// and the number this shard will run, from one goroutine at a time.
	Progress func(done, total int)
}

// DefaultSeeds is how many seeds a point runs with unless Spec.Seeds says.
const DefaultSeeds = 4

// Point is one grid point's result.
type Point struct {
	Index  int
	Values []float64 // one per axis
	// Metrics are the mean over the seeds and Worst the worst, one per
	// metric; NaN where the point failed.
	Metrics []float64
	Worst   []float64
	Err     string // why the point failed (its first failing seed), "" if it did not
}

// Result is a sweep's points in grid order (a shard's or a cancelled
// sweep's are a subset).
type Result struct {
	Axes      []string // parameter paths
	AxisUnits []string // their SI units, "" where not known
	Metrics   []string
	Units     []string // of the metrics
	Seeds     int      // per point
	Total     int      // points in the full grid
	Points    []Point
}

// smallerIsWorse names the metrics whose worst over the seeds is the
// smallest (an earlier fall, less damping); for the others it is the
// largest.
var smallerIsWorse = map[string]bool{"fall_time": true, "damping": true}

// Run runs every point of the grid (or of the shard) on a pool of workers,
// each point with every seed. Results do not depend on the number of
// workers: each run has its own seed and the points come back in grid
// order. A point with a failing run (a blow-up, a bad value) is recorded
// with its error and the sweep goes on. If ctx is cancelled the points
// whose runs are all done are returned with ctx.Err().
func Run(ctx context.Context, r *rig.Rig, spec Spec) (*Result, error) {
	if spec.Seeds <= 0 {
		spec.Seeds = DefaultSeeds
	}
	res, ms, err := newResult(spec)
	if err != nil {
		return nil, err
	}
	params, err := r.Params(res.Axes)
	if err != nil {
		return nil, err
	}
	if err := gainUnits(r, res); err != nil {
		return nil, err
	}
	var todo []int
	for i := 0; i < res.Total; i++ {
		if spec.Shard.has(i) {
			todo = append(todo, i)
		}
	}
	one := func(index, k int) seedRun {
		v, err := params.Variant(gridValues(spec.Axes, index))
		if err != nil {
			return seedRun{err: err}
		}
		o, err := v.Run(spec.Duration, sim.Options{Seed: spec.Seed + uint64(index*spec.Seeds+k), Shoves: spec.Shoves})
		if err != nil {
			return seedRun{err: err}
		}
		out := make([]float64, len(ms))
		for m := range ms {
			out[m] = ms[m].Eval(o)
		}
		return seedRun{metrics: out}
	}
	runs := make([]seedRun, len(todo)*spec.Seeds)
	done := pool(ctx, len(runs), spec.Workers, func(j int) { runs[j] = one(todo[j/spec.Seeds], j%spec.Seeds) }, spec.Progress)
	for i, index := range todo {
		seeds := runs[i*spec.Seeds : (i+1)*spec.Seeds]
		if slices.Contains(done[i*spec.Seeds:(i+1)*spec.Seeds], false) {
			continue
		}
		pt := Point{Index: index, Values: gridValues(spec.Axes, index), Metrics: make([]float64, len(ms)), Worst: make([]float64, len(ms))}
		for m := range ms {
			pt.Metrics[m], pt.Worst[m] = math.NaN(), math.NaN()
		}
		for k, sr := range seeds {
			if sr.err != nil {
				pt.Err = fmt.Sprintf("seed %d: %v", spec.Seed+uint64(index*spec.Seeds+k), sr.err)
				break
			}
		}
		if pt.Err == "" {
			for m, mm := range ms {
				pt.Metrics[m], pt.Worst[m] = meanAndWorst(seeds, m, smallerIsWorse[mm.Name])
			}
		}
		res.Points = append(res.Points, pt)
	}
	return res, ctx.Err()
}

// seedRun is what one run of a point with one seed gave.
type seedRun struct {
	metrics []float64
	err     error
}

// meanAndWorst are the mean and the worst of metric m over the runs; NaN
// if any run gave none.
func meanAndWorst(runs []seedRun, m int, smallerWorse bool) (mean, worst float64) {
	worst = math.Inf(-1)
	if smallerWorse {
		worst = math.Inf(1)
	}
	for _, r := range runs {
		v := r.metrics[m]
		if math.IsNaN(v) {
			return math.NaN(), math.NaN()
		}
		mean += v
		if smallerWorse {
			worst = math.Min(worst, v)
		} else {
			worst = math.Max(worst, v)
		}
	}
	return mean / float64(len(runs)), worst
}

// gainUnits fills in the SI unit of each axis that is a gain given
// without units, from the controller's parameters.
func gainUnits(r *rig.Rig, res *Result) error {
	g, err := r.Controller()
	if err != nil || g == nil {
		return err
	}
	for _, q := range g.Params() {
		for i, path := range res.Axes {
			if path == q.Path && res.AxisUnits[i] == "" {
				res.AxisUnits[i] = q.Unit
			}
		}
	}
	return nil
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
	res := &Result{Total: 1, Seeds: spec.Seeds}
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
		res.AxisUnits = append(res.AxisUnits, a.Unit)
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
