package study

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"

	"gonum.org/v1/gonum/optimize"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
)

// TuneSpec is an automatic tuning of some gains by Nelder-Mead.
type TuneSpec struct {
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
	// EffortWeight weighs control effort against tilt ITAE (default 0.01).
	EffortWeight float64
	// FallPenalty is added for a fall, more the earlier it comes
	// (default 100).
	FallPenalty float64
	Iterations  int // Nelder-Mead iterations (default 40)
	Workers     int // runs in flight (0: GOMAXPROCS)
	// Progress, if set, hears of every cost evaluation.
	Progress func(TuneProgress)
}

// TuneProgress reports one cost evaluation.
type TuneProgress struct {
	Evaluation int
	Cost, Best float64
	BestValues []float64 // gains of the best so far, in Paths order
}

// TuneResult is the outcome of a tuning.
type TuneResult struct {
	Paths       []string
	Start, Best []float64 // gain values
	StartCost   float64
	BestCost    float64
	Evaluations int
	Cases       int
	// Gains is the rig's own gain set (if any) with the tuned values.
	Gains  control.GainSet
	Status string
}

// tuneCase is one run of the cost: a robot variant and a shove.
type tuneCase struct {
	robot *models.Robot
	shove sim.Shove
	seed  uint64
}

// robustVariants draws the robot variants of a robust tuning.
func robustVariants(base *models.Robot, n int, seed uint64) ([]*models.Robot, error) {
	out := []*models.Robot{base}
	rng := rand.New(rand.NewPCG(seed, 0x7ee7e5))
	scale := func(r *models.Robot, path string, lo, hi float64) error {
		v, err := models.GetParam(r, path)
		if err != nil {
			return nil // the robot has no such part
		}
		return models.SetParam(r, path, v*(lo+(hi-lo)*rng.Float64()))
	}
	for range n {
		r := base.Clone()
		for _, a := range r.Actuators {
			if err := scale(r, "actuators."+a.Name+".backlash", 0.5, 2); err != nil {
				return nil, err
			}
		}
		if r.Ballast != nil {
			if err := scale(r, "ballast.mass", 0.8, 1.2); err != nil {
				return nil, err
			}
		}
		if r.Battery != nil {
			if err := scale(r, "battery.voltage", 0.88, 1); err != nil {
				return nil, err
			}
		}
		out = append(out, r)
	}
	return out, nil
}

func mirrored(s sim.Shove) sim.Shove {
	s.Impulse.X = -s.Impulse.X
	return s
}

// Tune searches for gains that keep the robot up and its torso still under
// the shoves, over every robot variant. The cost of a gain set is the sum
// over the cases of the torso tilt's ITAE after the shove, plus
// EffortWeight times the control effort, plus FallPenalty*(2 - fall
// time/duration) for a fall. Gains are searched on a log scale (a gain
// starting at 0 on a linear one), so the search cannot make them negative;
// the rig is not changed.
func (r *Rig) Tune(ctx context.Context, spec TuneSpec) (*TuneResult, error) {
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
	infos := map[string]control.ParamInfo{}
	for _, p := range g.Params() {
		infos[p.Path] = p
	}
	start := make([]float64, len(spec.Paths))
	for i, p := range spec.Paths {
		info, ok := infos[p]
		if !ok {
			_, err := g.Get(p)
			return nil, fmt.Errorf("tune: %v", err)
		}
		start[i] = info.Value
	}
	if spec.EffortWeight == 0 {
		spec.EffortWeight = 0.01
	}
	if spec.FallPenalty == 0 {
		spec.FallPenalty = 100
	}
	if spec.Iterations <= 0 {
		spec.Iterations = 40
	}
	last := 0.0
	for _, s := range spec.Shoves {
		last = math.Max(last, s.At+s.Hold)
	}
	if spec.Duration <= 0 {
		spec.Duration = last + 3
	}
	robots, err := robustVariants(r.Robot, spec.Robust, spec.Seed)
	if err != nil {
		return nil, err
	}
	var cases []tuneCase
	for ri, rb := range robots {
		for si, s := range spec.Shoves {
			seed := spec.Seed + uint64(ri*1000+si*2)
			cases = append(cases, tuneCase{rb, s, seed}, tuneCase{rb, mirrored(s), seed + 1})
		}
	}
	gains := func(x []float64) []float64 {
		v := make([]float64, len(x))
		for i := range x {
			info := infos[spec.Paths[i]]
			if start[i] > 0 {
				v[i] = start[i] * math.Exp(x[i])
			} else {
				v[i] = x[i]
			}
			v[i] = math.Max(info.Min, math.Min(info.Max, v[i]))
		}
		return v
	}
	cost := func(values []float64) float64 {
		res := runPool(ctx, len(cases), spec.Workers, func(i int) float64 {
			c := cases[i]
			v, err := (&Rig{Robot: c.robot, Spec: r.Spec, Gains: r.Gains}).variant(kindsOf(len(values), gainParam), spec.Paths, values)
			if err != nil {
				return 2 * spec.FallPenalty
			}
			o, err := v.Execute(spec.Duration, sim.Options{Seed: c.seed, Shoves: []sim.Shove{c.shove}})
			if err != nil {
				return 2 * spec.FallPenalty // a blow-up is as bad as it gets
			}
			t, y := o.after("torso_tilt")
			j := ITAE(t, y) + spec.EffortWeight*o.effort()
			if o.Summary.Fell {
				j += spec.FallPenalty * (2 - o.Summary.FallTime/spec.Duration)
			}
			return j
		}, nil)
		sum := 0.0
		for i, ok := range res.ok {
			if !ok {
				return math.Inf(1) // cancelled
			}
			sum += res.out[i]
		}
		return sum
	}
	out := &TuneResult{Paths: spec.Paths, Start: start, Cases: len(cases)}
	out.StartCost = cost(start)
	out.Best, out.BestCost = slices.Clone(start), out.StartCost
	evals := 0
	f := func(x []float64) float64 {
		v := gains(x)
		j := cost(v)
		evals++
		if j < out.BestCost {
			out.BestCost, out.Best = j, v
		}
		if spec.Progress != nil {
			spec.Progress(TuneProgress{Evaluation: evals, Cost: j, Best: out.BestCost, BestValues: slices.Clone(out.Best)})
		}
		return j
	}
	x0 := make([]float64, len(start))
	for i := range x0 {
		if start[i] <= 0 {
			x0[i] = start[i]
		}
	}
	out.Status = NelderMead(ctx, f, x0, 0.3, spec.Iterations)
	out.Evaluations = evals
	v, err := r.variant(kindsOf(len(spec.Paths), gainParam), spec.Paths, out.Best)
	if err != nil {
		return nil, err
	}
	out.Gains = *v.Gains
	out.Gains.Rate = g.Rate()
	return out, ctx.Err()
}

func kindsOf(n int, k paramKind) []paramKind {
	out := make([]paramKind, n)
	for i := range out {
		out[i] = k
	}
	return out
}

// NelderMead minimises f from x0 with gonum's Nelder-Mead simplex method
// (Nelder and Mead, Computer Journal 7, 1965), the first simplex spanning
// step along each axis, for at most iterations simplex moves. It stops early
// when ctx is cancelled and says why it stopped: "converged",
// "iteration limit", "cancelled" or the optimiser's own status.
func NelderMead(ctx context.Context, f func([]float64) float64, x0 []float64, step float64, iterations int) string {
	settings := &optimize.Settings{
		MajorIterations: iterations,
		Converger:       &optimize.FunctionConverge{Absolute: 1e-9, Relative: 1e-9, Iterations: 4 * (len(x0) + 1)},
		Recorder:        cancelRecorder{ctx},
	}
	res, err := optimize.Minimize(optimize.Problem{Func: f}, x0, settings, &optimize.NelderMead{SimplexSize: step})
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

// cancelRecorder stops the optimiser once its context is cancelled.
type cancelRecorder struct{ ctx context.Context }

func (c cancelRecorder) Init() error { return nil }

func (c cancelRecorder) Record(*optimize.Location, optimize.Operation, *optimize.Stats) error {
	return c.ctx.Err()
}
