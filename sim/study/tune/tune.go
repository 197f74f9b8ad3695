// Package tune searches for controller gains that keep a robot up and its
// torso still under shoves, over random variants of the robot, by gonum's
// Nelder-Mead simplex method on a cost measured from runs of the rig.
package tune

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"

	"golang.org/x/sync/errgroup"
	"gonum.org/v1/gonum/optimize"

	"teeter/control"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/metric"
)

// Spec is an automatic tuning of some gains by Nelder-Mead.
type Spec struct {
	Paths []string // gain paths to tune, such as body_loop.kp
	// Shoves are the disturbances; each is also tried mirrored (its x
	// impulse reversed), one shove per run.
	Shoves []sim.Shove
	// Robust adds this many variants of the robot, drawn at random from
	// Seed: every actuator's backlash times 0.5 to 2, the ballast mass times
	// 0.8 to 1.2 and the battery's full voltage times 0.88 to 1.
	Robust int
	Seed   uint64
	// Duration of each run, s (default: 3 s after the last shove).
	Duration float64
	// EffortWeight weighs control effort against tilt ITAE, rad*s
	// (default 0.01).
	EffortWeight float64
	// FallPenalty is added for a fall, more the earlier it comes, in
	// CostUnit (default 100); a physics blow-up costs twice it.
	FallPenalty float64
	Iterations  int // Nelder-Mead iterations (default 40)
	Workers     int // runs in flight (0: GOMAXPROCS)
	// Progress, if set, hears of every cost evaluation.
	Progress func(Progress)
}

// Progress reports one cost evaluation.
type Progress struct {
	Evaluation int
	// Iteration is the number of Nelder-Mead iterations done, of at most
	// Iterations; the last report of a tuning that ran to its end has
	// Iteration == Iterations, however early it converged.
	Iteration, Iterations int
	Cost, Best            float64   // CostUnit
	BestValues            []float64 // gains of the best so far, in Paths order
}

// Fraction is the share of the tuning done, 0 to 1.
func (p Progress) Fraction() float64 {
	return math.Min(1, float64(p.Iteration)/float64(max(p.Iterations, 1)))
}

// CostUnit is the unit of a tuning's cost: that of the tilt's ITAE, to
// which EffortWeight (rad*s) brings the effort (s) and FallPenalty is added.
const CostUnit = "rad*s^2"

// Result is the outcome of a tuning.
type Result struct {
	Paths       []string
	Start, Best []float64 // gain values
	StartCost   float64   // CostUnit
	BestCost    float64   // CostUnit
	// CostMeaning says in a line what the cost sums, with its weights.
	CostMeaning string
	Evaluations int
	Cases       int
	// Gains is the rig's own gain set (if any) with the tuned values.
	Gains  control.GainSet
	Status string
}

// simplexSize is the first simplex's extent along each axis of the search
// space (log gain, or the gain itself for one starting at 0).
const simplexSize = 0.3

// Run searches for gains that keep the robot up and its torso still under
// the shoves, over every robot variant. The cost of a gain set is the sum
// over the cases of the torso tilt's ITAE after the shove, plus
// EffortWeight times the control effort, plus FallPenalty*(2 - fall
// time/duration) for a fall, or 2*FallPenalty for a physics blow-up. Any
// other failure of a run (a controller that fails, gains that do not fit)
// stops the tuning with that error. Gains are searched on a log scale (a
// gain starting at 0 on a linear one), so the search cannot make them
// negative; the rig is not changed.
func Run(ctx context.Context, r *rig.Rig, spec Spec) (*Result, error) {
	t, err := newTuner(ctx, r, spec)
	if err != nil {
		return nil, err
	}
	out := &Result{Paths: t.spec.Paths, Start: t.start, Cases: len(t.cases), CostMeaning: t.spec.costMeaning(len(t.cases))}
	if out.StartCost, err = t.cost(t.start); err != nil {
		return nil, err
	}
	out.Best, out.BestCost = slices.Clone(t.start), out.StartCost
	problem := optimize.Problem{Func: func(x []float64) float64 {
		v := t.gains(x)
		j, err := t.cost(v)
		if err != nil {
			t.failed = err // the recorder stops the search
			return math.Inf(1)
		}
		out.Evaluations++
		if j < out.BestCost {
			out.BestCost, out.Best = j, v
		}
		t.report(out, j, t.iteration)
		return j
	}}
	settings := &optimize.Settings{
		MajorIterations: t.spec.Iterations,
		Converger:       &optimize.FunctionConverge{Absolute: 1e-9, Relative: 1e-9, Iterations: 4 * (len(t.start) + 1)},
		Recorder:        t,
	}
	// Nelder and Mead, Computer Journal 7, 1965.
	res, err := optimize.Minimize(problem, t.x0(), settings, &optimize.NelderMead{SimplexSize: simplexSize})
	if t.failed != nil && !errors.Is(t.failed, context.Canceled) {
		return nil, t.failed
	}
	out.Status = status(ctx, res, err)
	if ctx.Err() == nil {
		t.report(out, out.BestCost, t.spec.Iterations)
	}
	out.Gains = *r.WithGains(t.spec.Paths, out.Best).Gains
	out.Gains.Rate = r.ControlRate()
	return out, ctx.Err()
}

// report tells the spec's Progress of an evaluation of cost j.
func (t *tuner) report(out *Result, j float64, iteration int) {
	if t.spec.Progress != nil {
		t.spec.Progress(Progress{Evaluation: out.Evaluations, Iteration: iteration, Iterations: t.spec.Iterations,
			Cost: j, Best: out.BestCost, BestValues: slices.Clone(out.Best)})
	}
}

// costMeaning says what the cost of n cases sums.
func (s Spec) costMeaning(n int) string {
	return fmt.Sprintf("sum over %d cases of the torso tilt's ITAE after the shove [%s] + %g rad*s x control effort "+
		"(integral of the squared commands) [s]; a fall adds %g to %g, the earlier the more, a blow-up %g",
		n, CostUnit, s.EffortWeight, s.FallPenalty, 2*s.FallPenalty, 2*s.FallPenalty)
}

// status says why the search stopped: "converged", "iteration limit",
// "cancelled" or the optimiser's own status.
func status(ctx context.Context, res *optimize.Result, err error) string {
	switch {
	case ctx.Err() != nil:
		return "cancelled"
	case err != nil && res == nil:
		return err.Error()
	case res.Status == optimize.FunctionConvergence:
		return "converged"
	case res.Status == optimize.IterationLimit:
		return "iteration limit"
	default:
		return res.Status.String()
	}
}

// tuner is one tuning under way: the cases, the start and the way from
// the optimiser's coordinates to gains.
type tuner struct {
	ctx   context.Context
	rig   *rig.Rig
	spec  Spec
	infos []control.ParamInfo // of the tuned gains, in Paths order
	start []float64
	cases []tuneCase
	// failed is the first failure of a run that is not a blow-up.
	failed error
	// iteration is the number of Nelder-Mead iterations done.
	iteration int
}

func newTuner(ctx context.Context, r *rig.Rig, spec Spec) (*tuner, error) {
	if len(spec.Paths) == 0 {
		return nil, errors.New("tune: no gains to tune")
	}
	if len(spec.Shoves) == 0 {
		return nil, errors.New("tune: no shoves to tune against")
	}
	g, err := r.Controller()
	if err != nil {
		return nil, err
	}
	if g == nil {
		return nil, errors.New("tune: the robot has no controller graph")
	}
	t := &tuner{ctx: ctx, rig: r, spec: spec.filled()}
	params := g.Params()
	for _, p := range spec.Paths {
		i := slices.IndexFunc(params, func(q control.ParamInfo) bool { return q.Path == p })
		if i < 0 {
			_, err := g.Get(p)
			return nil, fmt.Errorf("tune: %v", err)
		}
		t.infos = append(t.infos, params[i])
		t.start = append(t.start, params[i].Value)
	}
	if t.cases, err = cases(r, t.spec); err != nil {
		return nil, err
	}
	return t, nil
}

// filled is the spec with its defaults in place of zero fields.
func (s Spec) filled() Spec {
	if s.EffortWeight == 0 {
		s.EffortWeight = 0.01
	}
	if s.FallPenalty == 0 {
		s.FallPenalty = 100
	}
	if s.Iterations <= 0 {
		s.Iterations = 40
	}
	if s.Workers <= 0 {
		s.Workers = runtime.GOMAXPROCS(0)
	}
	if s.Duration <= 0 {
		last := 0.0
		for _, sh := range s.Shoves {
			last = math.Max(last, sh.At+sh.Hold)
		}
		s.Duration = last + 3
	}
	return s
}

// x0 is the start in the optimiser's coordinates: log gains relative to
// the start, or the gain itself where it starts at or below 0.
func (t *tuner) x0() []float64 {
	x := make([]float64, len(t.start))
	for i, s := range t.start {
		if s <= 0 {
			x[i] = s
		}
	}
	return x
}

// gains turns the optimiser's coordinates into gains within their ranges.
func (t *tuner) gains(x []float64) []float64 {
	v := make([]float64, len(x))
	for i := range x {
		if t.start[i] > 0 {
			v[i] = t.start[i] * math.Exp(x[i])
		} else {
			v[i] = x[i]
		}
		v[i] = math.Max(t.infos[i].Min, math.Min(t.infos[i].Max, v[i]))
	}
	return v
}

// cost runs every case with the gains and sums their costs, in case order
// so that the sum does not depend on the number of workers.
func (t *tuner) cost(values []float64) (float64, error) {
	costs := make([]float64, len(t.cases))
	g, ctx := errgroup.WithContext(t.ctx)
	g.SetLimit(t.spec.Workers)
	for i, c := range t.cases {
		g.Go(func() error {
			if err := ctx.Err(); err != nil {
				return err
			}
			var err error
			costs[i], err = t.caseCost(c, values)
			return err
		})
	}
	if err := g.Wait(); err != nil {
		return math.Inf(1), err
	}
	sum := 0.0
	for _, j := range costs {
		sum += j
	}
	return sum, nil
}

// caseCost is one case's share of the cost; only a physics blow-up is
// scored as a penalty, any other failure is the tuning's error.
func (t *tuner) caseCost(c tuneCase, values []float64) (float64, error) {
	v := (&rig.Rig{Robot: c.robot, Spec: t.rig.Spec, Gains: t.rig.Gains}).WithGains(t.spec.Paths, values)
	o, err := v.Run(t.spec.Duration, sim.Options{Seed: c.seed, Shoves: []sim.Shove{c.shove}})
	if errors.Is(err, sim.ErrBlowUp) {
		return 2 * t.spec.FallPenalty, nil // as bad as it gets
	}
	if err != nil {
		return 0, err
	}
	tt, y := metric.After(o, "torso_tilt")
	j := metric.ITAE(tt, y) + t.spec.EffortWeight*metric.Effort(o)
	if o.Summary.Fell {
		j += t.spec.FallPenalty * (2 - o.Summary.FallTime/t.spec.Duration)
	}
	return j, nil
}

// Init and Record make the tuner the optimiser's recorder: it stops the
// search once the context is cancelled or a run has failed.
func (t *tuner) Init() error { return nil }

func (t *tuner) Record(_ *optimize.Location, _ optimize.Operation, stats *optimize.Stats) error {
	t.iteration = stats.MajorIterations
	if t.failed != nil {
		return t.failed
	}
	return t.ctx.Err()
}
