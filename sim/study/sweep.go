package study

import (
	"context"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
)

// Axis is one swept parameter: Steps values evenly from From to To. Path
// is a robot parameter path (models.SetParam) or a controller gain path
// (block.param).
type Axis struct {
	Path     string
	From, To float64
	Steps    int
}

// Value is the axis's i-th value.
func (a Axis) Value(i int) float64 {
	if a.Steps <= 1 {
		return a.From
	}
	return a.From + (a.To-a.From)*float64(i)/float64(a.Steps-1)
}

// ParseAxis reads PATH=FROM:TO:STEPS; FROM and TO may carry units
// ("actuators.backlash=0:2mm:9").
func ParseAxis(text string) (Axis, error) {
	path, grid, ok := strings.Cut(text, "=")
	parts := strings.Split(grid, ":")
	if !ok || path == "" || len(parts) != 3 {
		return Axis{}, fmt.Errorf("parameter %q: want PATH=FROM:TO:STEPS, as in actuators.backlash=0:2mm:9", text)
	}
	a := Axis{Path: strings.TrimSpace(path)}
	var err error
	if a.From, _, err = models.ParseQuantity(strings.TrimSpace(parts[0])); err != nil {
		return Axis{}, fmt.Errorf("parameter %q: from: %v", text, err)
	}
	if a.To, _, err = models.ParseQuantity(strings.TrimSpace(parts[1])); err != nil {
		return Axis{}, fmt.Errorf("parameter %q: to: %v", text, err)
	}
	if a.Steps, err = strconv.Atoi(strings.TrimSpace(parts[2])); err != nil || a.Steps < 1 || a.Steps > 100000 {
		return Axis{}, fmt.Errorf("parameter %q: steps %q: want a whole number from 1 to 100000", text, parts[2])
	}
	return a, nil
}

// Shard selects every Count-th point starting at Index; the zero value is
// the whole grid.
type Shard struct{ Index, Count int }

// ParseShard reads I/N.
func ParseShard(text string) (Shard, error) {
	is, ns, ok := strings.Cut(text, "/")
	i, err1 := strconv.Atoi(is)
	n, err2 := strconv.Atoi(ns)
	if !ok || err1 != nil || err2 != nil || n < 1 || i < 0 || i >= n {
		return Shard{}, fmt.Errorf("shard %q: want I/N with 0 <= I < N, as in 3/16", text)
	}
	return Shard{i, n}, nil
}

func (s Shard) has(point int) bool { return s.Count <= 1 || point%s.Count == s.Index }

// SweepSpec is a sweep to run.
type SweepSpec struct {
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

// SweepResult is a sweep's points in grid order (a shard's or a cancelled
// sweep's are a subset).
type SweepResult struct {
	Axes    []string // parameter paths
	Metrics []string
	Units   []string // of the metrics
	Total   int      // points in the full grid
	Points  []Point
}

// paramKind says where a path lives.
type paramKind int

const (
	robotParam paramKind = iota
	gainParam
)

// classify finds out whether each path is a robot parameter or a gain.
func (r *Rig) classify(paths []string) ([]paramKind, error) {
	g, err := r.Controller()
	if err != nil {
		return nil, err
	}
	kinds := make([]paramKind, len(paths))
	for i, p := range paths {
		_, robotErr := models.GetParam(r.Robot, p)
		if robotErr == nil {
			kinds[i] = robotParam
			continue
		}
		if g == nil {
			return nil, fmt.Errorf("parameter %s: %v (and the robot has no controller with gains)", p, robotErr)
		}
		if _, gainErr := g.Get(p); gainErr != nil {
			return nil, fmt.Errorf("parameter %s is neither a robot parameter (%v) nor a gain (%v)", p, robotErr, gainErr)
		}
		kinds[i] = gainParam
	}
	return kinds, nil
}

// Variant returns a rig with some parameters changed: robot paths on a
// clone of the robot, gain paths on top of the rig's gains. The receiver is
// not changed.
func (r *Rig) Variant(paths []string, values []float64) (*Rig, error) {
	kinds, err := r.classify(paths)
	if err != nil {
		return nil, err
	}
	return r.variant(kinds, paths, values)
}

func (r *Rig) variant(kinds []paramKind, paths []string, values []float64) (*Rig, error) {
	v := &Rig{Robot: r.Robot.Clone(), Spec: r.Spec}
	var gs control.GainSet
	if r.Gains != nil {
		gs.Rate = r.Gains.Rate
		gs.Gains = slices.Clone(r.Gains.Gains)
	}
	for i, p := range paths {
		if kinds[i] == robotParam {
			if err := models.SetParam(v.Robot, p, values[i]); err != nil {
				return nil, fmt.Errorf("%s = %g: %v", p, values[i], err)
			}
			continue
		}
		gs.Gains = slices.DeleteFunc(gs.Gains, func(g control.Gain) bool { return g.Path == p })
		gs.Gains = append(gs.Gains, control.Gain{Path: p, Value: values[i]})
	}
	if len(gs.Gains) > 0 {
		v.Gains = &gs
	}
	return v, nil
}

// Sweep runs every point of the grid (or of the shard) on a pool of
// workers. Results do not depend on the number of workers: each point has
// its own seed and the points come back in grid order. A point that fails
// (a blow-up, a bad value) is recorded with its error and the sweep goes
// on. If ctx is cancelled the points done so far are returned with
// ctx.Err().
func (r *Rig) Sweep(ctx context.Context, spec SweepSpec) (*SweepResult, error) {
	if len(spec.Axes) == 0 {
		return nil, fmt.Errorf("sweep: no parameter to sweep")
	}
	if len(spec.Metrics) == 0 {
		return nil, fmt.Errorf("sweep: no metric asked for")
	}
	if !(spec.Duration > 0) {
		return nil, fmt.Errorf("sweep: duration %g s must be positive", spec.Duration)
	}
	res := &SweepResult{Total: 1}
	var ms []Metric
	for _, name := range spec.Metrics {
		m, err := LookupMetric(name)
		if err != nil {
			return nil, err
		}
		ms = append(ms, m)
		res.Metrics = append(res.Metrics, m.Name)
		res.Units = append(res.Units, m.Unit)
	}
	for _, a := range spec.Axes {
		res.Axes = append(res.Axes, a.Path)
		res.Total *= max(a.Steps, 1)
	}
	kinds, err := r.classify(res.Axes)
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
		v, err := r.variant(kinds, res.Axes, pt.Values)
		if err == nil {
			var o *Outcome
			o, err = v.Execute(spec.Duration, sim.Options{Seed: spec.Seed + uint64(index), Shoves: spec.Shoves})
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
	done := runPool(ctx, len(todo), spec.Workers, func(i int) Point { return point(todo[i]) }, spec.Progress)
	for i, ok := range done.ok {
		if ok {
			res.Points = append(res.Points, done.out[i])
		}
	}
	return res, ctx.Err()
}

// gridValues are the axis values of a point; the last axis varies fastest.
func gridValues(axes []Axis, index int) []float64 {
	v := make([]float64, len(axes))
	for k := len(axes) - 1; k >= 0; k-- {
		n := max(axes[k].Steps, 1)
		v[k] = axes[k].Value(index % n)
		index /= n
	}
	return v
}

type poolResult[T any] struct {
	out []T
	ok  []bool
}

// runPool computes job(0..n-1) on workers goroutines (0: GOMAXPROCS),
// stopping handing out jobs when ctx is done. Each result lands in its own
// slot, so the order of completion does not matter.
func runPool[T any](ctx context.Context, n, workers int, job func(int) T, progress func(done, total int)) poolResult[T] {
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	workers = max(1, min(workers, n))
	res := poolResult[T]{out: make([]T, n), ok: make([]bool, n)}
	jobs := make(chan int)
	finished := make(chan int)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				res.out[i] = job(i)
				finished <- i
			}
		}()
	}
	go func() {
		defer close(jobs)
		for i := 0; i < n; i++ {
			select {
			case jobs <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	go func() { wg.Wait(); close(finished) }()
	count := 0
	for i := range finished {
		res.ok[i] = true
		count++
		if progress != nil {
			progress(count, n)
		}
	}
	return res
}

// WriteCSV writes the result as CSV: a header of point, points (the size
// of the full grid), the parameter paths, the metrics as "name [unit]",
// status (ok or failed) and error, then one line per point in grid order.
// Numbers are written in the shortest form that reads back exactly, so
// equal results give equal bytes.
func (s *SweepResult) WriteCSV(w io.Writer) error {
	cw := csv.NewWriter(w)
	head := []string{"point", "points"}
	head = append(head, s.Axes...)
	for i, m := range s.Metrics {
		if s.Units[i] != "" {
			m += " [" + s.Units[i] + "]"
		}
		head = append(head, m)
	}
	head = append(head, "status", "error")
	if err := cw.Write(head); err != nil {
		return err
	}
	for _, p := range s.Points {
		row := []string{strconv.Itoa(p.Index), strconv.Itoa(s.Total)}
		for _, v := range p.Values {
			row = append(row, formatNumber(v))
		}
		for _, v := range p.Metrics {
			row = append(row, formatNumber(v))
		}
		status := "ok"
		if p.Err != "" {
			status = "failed"
		}
		row = append(row, status, p.Err)
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

func formatNumber(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// ReadSweepCSV reads what WriteCSV wrote; name labels errors.
func ReadSweepCSV(name string, r io.Reader) (*SweepResult, error) {
	cr := csv.NewReader(r)
	head, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("%s: %v", name, err)
	}
	n := len(head)
	if n < 5 || head[0] != "point" || head[1] != "points" || head[n-2] != "status" || head[n-1] != "error" {
		return nil, fmt.Errorf("%s:1: not a sweep CSV (want point, points, parameters, metrics, status, error)", name)
	}
	s := &SweepResult{Total: -1}
	for _, h := range head[2 : n-2] {
		base, unit, _ := strings.Cut(h, " [")
		if _, err := LookupMetric(base); err == nil {
			s.Metrics = append(s.Metrics, base)
			s.Units = append(s.Units, strings.TrimSuffix(unit, "]"))
			continue
		}
		if len(s.Metrics) > 0 {
			return nil, fmt.Errorf("%s:1: column %q after the metrics is not a metric", name, h)
		}
		s.Axes = append(s.Axes, h)
	}
	if len(s.Axes) == 0 || len(s.Metrics) == 0 {
		return nil, fmt.Errorf("%s:1: want at least one parameter and one metric column", name)
	}
	for line := 2; ; line++ {
		row, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %v", name, err)
		}
		num := func(col int) (float64, error) {
			v, err := strconv.ParseFloat(row[col], 64)
			if err != nil {
				return 0, fmt.Errorf("%s:%d: column %s: %q is not a number", name, line, head[col], row[col])
			}
			return v, nil
		}
		p := Point{Err: row[n-1]}
		index, err1 := strconv.Atoi(row[0])
		total, err2 := strconv.Atoi(row[1])
		if err1 != nil || err2 != nil || index < 0 || total < 1 || index >= total {
			return nil, fmt.Errorf("%s:%d: bad point %q of %q", name, line, row[0], row[1])
		}
		if s.Total >= 0 && total != s.Total {
			return nil, fmt.Errorf("%s:%d: points %d differs from %d above", name, line, total, s.Total)
		}
		s.Total, p.Index = total, index
		for c := 2; c < n-2; c++ {
			v, err := num(c)
			if err != nil {
				return nil, err
			}
			if c-2 < len(s.Axes) {
				p.Values = append(p.Values, v)
			} else {
				p.Metrics = append(p.Metrics, v)
			}
		}
		if st := row[n-2]; st != "ok" && st != "failed" || (st == "failed") != (p.Err != "") {
			return nil, fmt.Errorf("%s:%d: status %q does not fit error %q", name, line, st, p.Err)
		}
		if len(s.Points) > 0 && s.Points[len(s.Points)-1].Index >= index {
			return nil, fmt.Errorf("%s:%d: point %d is out of order", name, line, index)
		}
		s.Points = append(s.Points, p)
	}
	if s.Total < 0 {
		s.Total = 0
	}
	return s, nil
}

// MergeSweeps joins the results of shards of one sweep into one, in grid
// order. It refuses results with other columns or grid size, and a point
// given twice with different contents. Missing lists the points no part
// had.
func MergeSweeps(parts ...*SweepResult) (merged *SweepResult, missing []int, err error) {
	if len(parts) == 0 {
		return nil, nil, fmt.Errorf("merge: nothing to merge")
	}
	first := parts[0]
	byIndex := map[int]Point{}
	total := -1
	for k, p := range parts {
		if !slices.Equal(p.Axes, first.Axes) || !slices.Equal(p.Metrics, first.Metrics) {
			return nil, nil, fmt.Errorf("merge: part %d has columns %v %v, part 1 has %v %v", k+1, p.Axes, p.Metrics, first.Axes, first.Metrics)
		}
		if len(p.Points) == 0 {
			continue
		}
		if total >= 0 && p.Total != total {
			return nil, nil, fmt.Errorf("merge: part %d has a grid of %d points, another has %d", k+1, p.Total, total)
		}
		total = p.Total
		for _, pt := range p.Points {
			if old, dup := byIndex[pt.Index]; dup && !samePoint(old, pt) {
				return nil, nil, fmt.Errorf("merge: point %d differs between parts", pt.Index)
			}
			byIndex[pt.Index] = pt
		}
	}
	merged = &SweepResult{Axes: first.Axes, Metrics: first.Metrics, Units: first.Units, Total: max(total, 0)}
	for i := 0; i < merged.Total; i++ {
		if pt, ok := byIndex[i]; ok {
			merged.Points = append(merged.Points, pt)
		} else {
			missing = append(missing, i)
		}
	}
	return merged, missing, nil
}

func samePoint(a, b Point) bool {
	eq := func(x, y []float64) bool {
		return slices.EqualFunc(x, y, func(p, q float64) bool { return p == q || math.IsNaN(p) && math.IsNaN(q) })
	}
	return a.Err == b.Err && eq(a.Values, b.Values) && eq(a.Metrics, b.Metrics)
}
