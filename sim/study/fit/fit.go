// Package fit fits a robot model to a log recorded on the robot: the logged
// actuator commands drive the model (replay) from the logged initial pose,
// and the parameters named are chosen by weighted least squares of the
// logged signals against the simulated ones, with an uncertainty for each
// and a verdict on whether the log tells it at all.
//
// The search is gonum's Nelder-Mead simplex, in log-parameter space for
// parameters that must be positive: the cost is not smooth in every
// parameter (backlash opens and closes a gap, the pots are quantized), the
// simplex needs no derivatives, and log space makes a step a ratio, so
// parameters of very different size share one simplex. A value the model
// refuses (models.SetParam) costs +Inf, which keeps the search inside each
// parameter's valid range. Whole-number parameters (a sensor latency in
// samples) are searched over every whole value near their start, before and
// after the simplex. At the optimum a central-difference Jacobian of the
// weighted residuals gives the covariance s^2 (J^T J)^-1 with s^2 the
// residual variance per degree of freedom (Press et al., Numerical Recipes,
// 3rd ed., ch. 15.4-15.5).
package fit

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"slices"
	"sort"
	"strings"

	"golang.org/x/sync/errgroup"
	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// Spec is one fit.
type Spec struct {
	Log   *Log
	Paths []string // robot parameter paths (models.SetParam)
	// Signals are the log columns compared (default: every sensor channel
	// of the robot that the log has).
	Signals []string
	// From and To bound the compared rows, s of log time counted from its
	// first row; To 0 means the end. The replay always starts at the first
	// row.
	From, To float64
	// Shoves are the pushes given while logging, timed from the first row.
	Shoves []sim.Shove
	// MaxEvaluations bounds the simplex's replays (default 80 per parameter).
	MaxEvaluations int
	// Workers run replays in parallel where the method allows (default:
	// every core).
	Workers  int
	Progress func(Progress)
}

// Progress is reported after every replay.
type Progress struct {
	Evaluations int
	Best        float64 // lowest cost so far
}

// Param is one fitted parameter. Value is what the fitted robot holds: the
// start value when the log does not tell the parameter.
type Param struct {
	Path  string  `json:"path"`
	Start float64 `json:"start"`
	Value float64 `json:"value"`
	// Estimate is the cost's minimum, also when not identifiable.
	Estimate float64 `json:"estimate"`
	// Uncertainty is one standard deviation, SI; +Inf when the log does
	// not tell the parameter.
	Uncertainty  float64 `json:"-"`
	Whole        bool    `json:"whole"`
	Identifiable bool    `json:"identifiable"`
	Note         string  `json:"note,omitempty"`
}

// Signal is one compared column.
type Signal struct {
	Name string `json:"name"`
	// Unit is the unit the log wrote it in ("" for SI); the numbers below
	// are in it.
	Unit      string  `json:"unit"`
	Noise     float64 `json:"noise"`
	RMSBefore float64 `json:"rms_before"`
	RMSAfter  float64 `json:"rms_after"`
}

// Result is a finished fit.
type Result struct {
	Params      []Param
	Signals     []Signal
	Rows        int // log rows compared
	CostBefore  float64
	CostAfter   float64
	Evaluations int
	Status      string
	// Robot is the input robot with the identifiable values changed.
	Robot *models.Robot
	// Time, Logged, Before and After are the compared rows for the overlay:
	// time from the log's first row and one slice per signal, in SI.
	Time                  []float64
	Logged, Before, After [][]float64
	// Missing lists actuators the log has no commands for (held at 0).
	Missing []string
}

// identifiableLimit is the largest relative standard deviation (or, for a
// parameter that may be zero or negative, the deviation in its search
// scale) of a parameter still reported as told by the log: beyond it the
// log does not pin the value to better than a factor of about 1.5 at
// two standard deviations.
const identifiableLimit = 0.2

// correlationNote is the correlation above which two parameters are named
// as traded against each other.
const correlationNote = 0.95

// wholeReach is how far from its start a whole-number parameter is searched.
const wholeReach = 4

// fdStep is the central-difference step in the search coordinates: 2 % of
// a positive parameter, 2 % of the scale of another.
const fdStep = 0.02

// Run fits the rig's robot to the log. The controller of the rig is not
// used (the replay drives the actuators); its columns are still known in
// the log. On cancel it returns what it has with ctx's error.
func Run(ctx context.Context, r *rig.Rig, spec Spec) (*Result, error) {
	f, err := newFitter(r, spec)
	if err != nil {
		return nil, err
	}
	return f.run(ctx)
}

// axis is how one parameter is searched: x = log(v/start) for a positive
// parameter, x = (v-start)/scale for another; whole ones are not on the
// simplex.
type axis struct {
	path         string
	start, scale float64
	logScale     bool
	whole        bool
}

func (a axis) value(x float64) float64 {
	if a.logScale {
		return a.start * math.Exp(x)
	}
	return a.start + a.scale*x
}

type fitter struct {
	spec    Spec
	origin  *models.Robot // as given
	base    *models.Robot // with the initial pose, noise off
	rate    float64       // control rate, Hz
	axes    []axis
	signals []int // log columns compared
	sigma   []float64
	rows    []int // log rows compared
	simRow  []int // recorder row for each compared log row
	tEnd    float64
	workers int
	evals   int
	best    float64
	missing []string
}

func newFitter(r *rig.Rig, spec Spec) (*fitter, error) {
	l := spec.Log
	if l == nil || len(l.Time) < 2 {
		return nil, errors.New("fit: no log")
	}
	if len(spec.Paths) == 0 {
		return nil, errors.New("fit: no parameters to fit")
	}
	f := &fitter{spec: spec, rate: r.ControlRate(), workers: spec.Workers, best: math.Inf(1)}
	if f.workers <= 0 {
		f.workers = runtime.GOMAXPROCS(0)
	}
	f.origin, f.base = r.Robot, r.Robot.Clone()
	SetInitialPose(f.base, l)
	f.base.NoiseScale = 0 // the noise is in the log; the replay predicts the clean signal
	seen := map[string]bool{}
	for _, p := range spec.Paths {
		if seen[p] {
			return nil, fmt.Errorf("fit: parameter %s given twice", p)
		}
		seen[p] = true
		a, err := newAxis(f.base, p)
		if err != nil {
			return nil, err
		}
		f.axes = append(f.axes, a)
	}
	for _, a := range models.ActuatorNames(f.base) {
		if l.Column(a+".command") == nil {
			f.missing = append(f.missing, a)
		}
	}
	if len(f.missing) == len(f.base.Actuators) {
		return nil, fmt.Errorf("fit: %s has no actuator commands (columns NAME.command) to replay", l.File)
	}
	if err := f.chooseSignals(); err != nil {
		return nil, err
	}
	return f, nil
}

func newAxis(r *models.Robot, path string) (axis, error) {
	v, err := models.GetParam(r, path)
	if err != nil {
		return axis{}, fmt.Errorf("fit: %v", err)
	}
	a := axis{path: path, start: v, whole: models.WholeParam(r, path)}
	if a.whole {
		return a, nil
	}
	// The model's own check says whether the parameter must be positive.
	probe := r.Clone()
	negative := -math.Max(math.Abs(v), 1)
	if models.SetParam(probe, path, negative) != nil {
		if !(v > 0) {
			return axis{}, fmt.Errorf("fit: parameter %s starts at %g; it must be positive, so give the robot file a first guess above zero", path, v)
		}
		a.logScale = true
		return a, nil
	}
	// A signed parameter is stepped by its own size, or by 0.01 (10 mm,
	// 0.6 deg) from zero.
	a.scale = math.Abs(v)
	if a.scale == 0 {
		a.scale = 0.01
	}
	return a, nil
}

// chooseSignals picks the compared columns and rows and weighs each
// signal by its noise.
func (f *fitter) chooseSignals() error {
	l := f.spec.Log
	t0 := l.Time[0]
	to := f.spec.To
	if to <= 0 {
		to = math.Inf(1)
	}
	for i, t := range l.Time {
		if t-t0 >= f.spec.From && t-t0 <= to {
			f.rows = append(f.rows, i)
			f.simRow = append(f.simRow, int(math.Floor((t-t0)*f.rate+1e-6)))
			f.tEnd = t - t0
		}
	}
	if len(f.rows) < 3 {
		return fmt.Errorf("fit: %s has %d rows between %g s and %g s; at least 3 are needed", l.File, len(f.rows), f.spec.From, f.spec.To)
	}
	names := f.spec.Signals
	if len(names) == 0 {
		for _, ch := range models.Channels(f.base) {
			if l.Column(ch) != nil {
				names = append(names, ch)
			}
		}
		if len(names) == 0 {
			return fmt.Errorf("fit: %s has none of the robot's sensor channels (%s); name the signals with --signals", l.File, strings.Join(models.Channels(f.base), ", "))
		}
	}
	for _, n := range names {
		k := slices.Index(l.Names, n)
		if k < 0 {
			return fmt.Errorf("fit: signal %s is not in %s", n, l.File)
		}
		if strings.HasSuffix(n, ".command") {
			return fmt.Errorf("fit: signal %s is a replayed command, not something to fit", n)
		}
		x := make([]float64, len(f.rows))
		for i, row := range f.rows {
			x[i] = l.cols[k][row]
		}
		s := noiseOf(x)
		if s == 0 {
			continue // a constant signal tells nothing
		}
		f.signals = append(f.signals, k)
		f.sigma = append(f.sigma, s)
	}
	if len(f.signals) == 0 {
		return fmt.Errorf("fit: every chosen signal is constant over the compared rows")
	}
	return nil
}

// noiseOf estimates a signal's noise from its second differences, which
// take out a smooth signal and leave 6 times the variance of white noise:
// sigma = 1.4826 MAD(d2) / sqrt 6 (the median absolute deviation scaled to
// a Gaussian's standard deviation, Rousseeuw and Croux 1993). A signal
// whose noise is below its quantization or zero is weighed by a thousandth
// of its spread instead; 0 means constant.
func noiseOf(x []float64) float64 {
	d := make([]float64, 0, len(x))
	for i := 1; i+1 < len(x); i++ {
		d = append(d, x[i+1]-2*x[i]+x[i-1])
	}
	s := 1.4826 * mad(d) / math.Sqrt(6)
	mean, sq := 0.0, 0.0
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	for _, v := range x {
		sq += (v - mean) * (v - mean)
	}
	spread := math.Sqrt(sq / float64(len(x)))
	return math.Max(s, 1e-3*spread)
}

func mad(d []float64) float64 {
	if len(d) == 0 {
		return 0
	}
	s := slices.Clone(d)
	sort.Float64s(s)
	med := s[len(s)/2]
	for i, v := range s {
		s[i] = math.Abs(v - med)
	}
	sort.Float64s(s)
	return s[len(s)/2]
}

// replay runs the model with values and returns the simulated compared
// signals, one slice per signal, in SI.
func (f *fitter) replay(values []float64) ([][]float64, error) {
	r := f.base.Clone()
	for i, a := range f.axes {
		if err := models.SetParam(r, a.path, values[i]); err != nil {
			return nil, err
		}
	}
	p, err := sim.New(r, NewPlayback(f.spec.Log, r), sim.Options{ControlRate: f.rate, Shoves: f.spec.Shoves})
	if err != nil {
		return nil, err
	}
	n := int(math.Ceil(f.tEnd*p.PhysicsRate())) + 1
	for range n {
		if err := p.Step(); err != nil {
			if errors.Is(err, sim.ErrFallen) {
				break // compared as it lies: the rest holds the last row
			}
			return nil, err
		}
	}
	rec := p.Recorder()
	out := make([][]float64, len(f.signals))
	for k, col := range f.signals {
		c := rec.Index(f.spec.Log.Names[col])
		if c < 0 {
			return nil, fmt.Errorf("fit: the replay does not record %s", f.spec.Log.Names[col])
		}
		out[k] = make([]float64, len(f.rows))
		for i, j := range f.simRow {
			out[k][i] = rec.At(min(j, rec.Len()-1), c)
		}
	}
	return out, nil
}

// residuals are the weighted differences, simulated less logged, signal
// after signal.
func (f *fitter) residuals(simulated [][]float64) []float64 {
	out := make([]float64, 0, len(f.signals)*len(f.rows))
	for k, col := range f.signals {
		logged := f.spec.Log.cols[col]
		for i, row := range f.rows {
			out = append(out, (simulated[k][i]-logged[row])/f.sigma[k])
		}
	}
	return out
}

// cost is the weighted sum of squares for values; +Inf when the model
// refuses them or the replay blows up.
func (f *fitter) cost(values []float64) float64 {
	s, err := f.replay(values)
	c := math.Inf(1)
	if err == nil {
		c = sumSquares(f.residuals(s))
	}
	f.evals++
	f.best = math.Min(f.best, c)
	if f.spec.Progress != nil {
		f.spec.Progress(Progress{Evaluations: f.evals, Best: f.best})
	}
	return c
}

func sumSquares(r []float64) float64 {
	s := 0.0
	for _, v := range r {
		s += v * v
	}
	return s
}

func (f *fitter) run(ctx context.Context) (*Result, error) {
	values := make([]float64, len(f.axes))
	for i, a := range f.axes {
		values[i] = a.start
	}
	before, err := f.replay(values)
	if err != nil {
		return nil, fmt.Errorf("fit: replaying the log on the starting model: %v", err)
	}
	res := &Result{Rows: len(f.rows), Missing: f.missing}
	res.CostBefore = sumSquares(f.residuals(before))
	cur := res.CostBefore
	status := "converged"
	for round := 0; round < 2 && ctx.Err() == nil; round++ {
		changed := f.searchWhole(ctx, values, &cur)
		if round > 0 && !changed {
			break
		}
		var s string
		if s, err = f.simplex(ctx, values, &cur); err != nil {
			return nil, err
		}
		if s != "" {
			status = s
		}
	}
	after, err := f.replay(values)
	if err != nil {
		return nil, fmt.Errorf("fit: replaying the fitted model: %v", err)
	}
	res.CostAfter = sumSquares(f.residuals(after))
	res.Params = f.uncertainties(ctx, values, res.CostAfter)
	if ctx.Err() != nil {
		status = "stopped"
	}
	res.Status, res.Evaluations = status, f.evals
	res.Robot = f.fittedRobot(res.Params)
	res.Signals = f.signalReport(before, after)
	res.Time = make([]float64, len(f.rows))
	for i, row := range f.rows {
		res.Time[i] = f.spec.Log.Time[row] - f.spec.Log.Time[0]
	}
	for _, col := range f.signals {
		x := make([]float64, len(f.rows))
		for i, row := range f.rows {
			x[i] = f.spec.Log.cols[col][row]
		}
		res.Logged = append(res.Logged, x)
	}
	res.Before, res.After = before, after
	return res, ctx.Err()
}

// searchWhole tries every whole value within wholeReach of each whole
// parameter's current one (coordinate search), keeping the best; it
// reports whether any changed. The candidates of one parameter run in
// parallel.
func (f *fitter) searchWhole(ctx context.Context, values []float64, cur *float64) bool {
	changed := false
	for i, a := range f.axes {
		if !a.whole || ctx.Err() != nil {
			continue
		}
		var cands []float64
		for v := math.Max(0, values[i]-wholeReach); v <= values[i]+wholeReach; v++ {
			if v != values[i] {
				cands = append(cands, v)
			}
		}
		costs := f.parallel(ctx, len(cands), func(k int) []float64 {
			v := slices.Clone(values)
			v[i] = cands[k]
			return v
		})
		for k, c := range costs {
			// Ties keep the value nearer the start: the first candidate
			// below it in order is nearer only when strictly better.
			if c < *cur {
				*cur, values[i], changed = c, cands[k], true
			}
		}
	}
	return changed
}

// parallel evaluates the cost of n value vectors on the workers, in order.
func (f *fitter) parallel(ctx context.Context, n int, at func(int) []float64) []float64 {
	out := make([]float64, n)
	var g errgroup.Group
	g.SetLimit(f.workers)
	for k := range n {
		v := at(k)
		g.Go(func() error {
			if ctx.Err() != nil {
				out[k] = math.NaN()
				return nil
			}
			s, err := f.replay(v)
			out[k] = math.Inf(1)
			if err == nil {
				out[k] = sumSquares(f.residuals(s))
			}
			return nil
		})
	}
	g.Wait()
	for _, c := range out {
		f.evals++
		f.best = math.Min(f.best, c)
	}
	if f.spec.Progress != nil {
		f.spec.Progress(Progress{Evaluations: f.evals, Best: f.best})
	}
	return out
}

// simplex runs Nelder-Mead over the continuous parameters from values,
// writing the best back. It returns a status word when the search stopped
// for a reason other than convergence.
func (f *fitter) simplex(ctx context.Context, values []float64, cur *float64) (string, error) {
	var idx []int
	for i, a := range f.axes {
		if !a.whole {
			idx = append(idx, i)
		}
	}
	if len(idx) == 0 {
		return "", nil
	}
	toValues := func(x []float64) []float64 {
		v := slices.Clone(values)
		for k, i := range idx {
			v[i] = f.axes[i].value(x[k])
		}
		return v
	}
	x0 := make([]float64, len(idx))
	for k, i := range idx {
		a := f.axes[i]
		if a.logScale {
			x0[k] = math.Log(values[i] / a.start)
		} else {
			x0[k] = (values[i] - a.start) / a.scale
		}
	}
	maxEvals := f.spec.MaxEvaluations
	if maxEvals <= 0 {
		maxEvals = 80 * len(idx)
	}
	problem := optimize.Problem{Func: func(x []float64) float64 {
		if ctx.Err() != nil {
			return math.Inf(1)
		}
		return f.cost(toValues(x))
	}}
	settings := &optimize.Settings{
		FuncEvaluations: maxEvals,
		// Converged when a full round of simplex moves improves the cost
		// by less than a thousandth of a unit of chi-square per parameter.
		Converger: &optimize.FunctionConverge{Absolute: 1e-3, Relative: 1e-7, Iterations: 3 * (len(idx) + 1)},
	}
	res, err := optimize.Minimize(problem, x0, settings, &optimize.NelderMead{SimplexSize: 0.4})
	if res == nil {
		return "", fmt.Errorf("fit: Nelder-Mead: %v", err)
	}
	if res.F < *cur {
		*cur = res.F
		copy(values, toValues(res.X))
	}
	if res.Status == optimize.FunctionEvaluationLimit {
		return "evaluation limit", nil
	}
	return "", nil
}

// uncertainties gives each parameter its standard deviation and verdict:
// central differences for the continuous ones, the neighbours' costs for
// whole ones.
func (f *fitter) uncertainties(ctx context.Context, values []float64, cost float64) []Param {
	out := make([]Param, len(f.axes))
	var cont []int
	for i, a := range f.axes {
		out[i] = Param{Path: a.path, Start: a.start, Estimate: values[i], Whole: a.whole}
		if !a.whole {
			cont = append(cont, i)
		}
	}
	dof := float64(len(f.signals)*len(f.rows) - len(f.axes))
	s2 := math.Max(cost/math.Max(dof, 1), 1e-12)
	for i, a := range f.axes {
		if a.whole {
			f.wholeVerdict(ctx, &out[i], values, i, cost, s2)
		}
	}
	if len(cont) > 0 {
		f.continuousVerdicts(ctx, out, values, cont, s2)
	}
	for i := range out {
		out[i].Value = out[i].Start
		if out[i].Identifiable {
			out[i].Value = out[i].Estimate
		}
	}
	return out
}

// wholeVerdict calls a whole parameter told when both neighbours (one, at
// zero) raise chi-square by more than 4 s^2: two standard deviations for
// one parameter (Numerical Recipes, ch. 15.6, delta chi-square).
func (f *fitter) wholeVerdict(ctx context.Context, p *Param, values []float64, i int, cost, s2 float64) {
	var cands []float64
	for _, d := range []float64{-1, 1} {
		if values[i]+d >= 0 {
			cands = append(cands, values[i]+d)
		}
	}
	costs := f.parallel(ctx, len(cands), func(k int) []float64 {
		v := slices.Clone(values)
		v[i] = cands[k]
		return v
	})
	p.Identifiable = true
	for _, c := range costs {
		if !(c-cost > 4*s2) {
			p.Identifiable = false
		}
	}
	p.Uncertainty = 0
	if !p.Identifiable {
		p.Uncertainty = math.Inf(1)
		p.Note = "a neighbouring whole value fits as well"
	}
}

// continuousVerdicts fills the uncertainties of the continuous parameters
// from the Jacobian of the weighted residuals at values.
func (f *fitter) continuousVerdicts(ctx context.Context, out []Param, values []float64, cont []int, s2 float64) {
	step := func(k int) []float64 {
		i := cont[k/2]
		a := f.axes[i]
		v := slices.Clone(values)
		h := fdStep
		if k%2 == 1 {
			h = -h
		}
		if a.logScale {
			v[i] *= math.Exp(h)
		} else {
			v[i] += a.scale * h
		}
		return v
	}
	res := make([][]float64, 2*len(cont))
	var g errgroup.Group
	g.SetLimit(f.workers)
	for k := range res {
		v := step(k)
		g.Go(func() error {
			if ctx.Err() == nil {
				if s, err := f.replay(v); err == nil {
					res[k] = f.residuals(s)
				}
			}
			return nil
		})
	}
	g.Wait()
	f.evals += len(res)
	m := len(f.signals) * len(f.rows)
	jac := mat.NewDense(m, len(cont), nil)
	for k := range cont {
		plus, minus := res[2*k], res[2*k+1]
		if plus == nil || minus == nil {
			for _, i := range cont {
				out[i].Uncertainty = math.Inf(1)
				out[i].Note = "the replay failed next to the optimum"
			}
			return
		}
		for r := range m {
			jac.Set(r, k, (plus[r]-minus[r])/(2*fdStep))
		}
	}
	cov := covariance(jac, s2)
	for k, i := range cont {
		a := f.axes[i]
		sx := math.Sqrt(cov.At(k, k))
		rel := sx
		if a.logScale {
			out[i].Uncertainty = values[i] * sx
		} else {
			out[i].Uncertainty = a.scale * sx
			if values[i] != 0 {
				rel = out[i].Uncertainty / math.Abs(values[i])
			}
		}
		out[i].Identifiable = rel <= identifiableLimit
		var notes []string
		if !out[i].Identifiable {
			notes = append(notes, "the log does not excite it")
		}
		for k2, i2 := range cont {
			if k2 == k {
				continue
			}
			rho := cov.At(k, k2) / (sx * math.Sqrt(cov.At(k2, k2)))
			if math.Abs(rho) > correlationNote {
				notes = append(notes, fmt.Sprintf("correlated with %s (%.2f)", f.axes[i2].path, rho))
			}
		}
		out[i].Note = strings.Join(notes, "; ")
	}
}

// covariance is s2 (J^T J)^-1 by the singular value decomposition of J;
// directions whose singular value is below 1e-9 of the largest get an
// infinite variance instead of a huge finite one (Numerical Recipes,
// ch. 15.4.2, SVD solution of the normal equations).
func covariance(jac *mat.Dense, s2 float64) *mat.Dense {
	_, n := jac.Dims()
	var svd mat.SVD
	out := mat.NewDense(n, n, nil)
	if !svd.Factorize(jac, mat.SVDThin) {
		for k := range n {
			out.Set(k, k, math.Inf(1))
		}
		return out
	}
	sv := svd.Values(nil)
	var v mat.Dense
	svd.VTo(&v)
	for a := range n {
		for b := range n {
			sum := 0.0
			for k, w := range sv {
				if !(w > 1e-9*sv[0]) {
					if v.At(a, k) != 0 && v.At(b, k) != 0 {
						sum = math.Inf(1)
						break
					}
					continue
				}
				sum += v.At(a, k) * v.At(b, k) / (w * w)
			}
			out.Set(a, b, s2*sum)
		}
	}
	return out
}

// fittedRobot is the input robot (as written, without the initial pose
// taken from the log) with the identifiable values set.
func (f *fitter) fittedRobot(ps []Param) *models.Robot {
	r := f.origin.Clone()
	for _, p := range ps {
		_ = models.SetParam(r, p.Path, p.Value) // the replays checked it
	}
	return r
}

// signalReport gives each signal's noise and RMS error before and after, in
// the log's units.
func (f *fitter) signalReport(before, after [][]float64) []Signal {
	l := f.spec.Log
	out := make([]Signal, len(f.signals))
	for k, col := range f.signals {
		unit := l.Units[col]
		factor := 1.0
		if unit != "" {
			factor, _, _ = models.ParseQuantity("1 " + unit)
		}
		logged := l.cols[col]
		rms := func(s []float64) float64 {
			sum := 0.0
			for i, row := range f.rows {
				d := s[i] - logged[row]
				sum += d * d
			}
			return math.Sqrt(sum/float64(len(f.rows))) / factor
		}
		out[k] = Signal{Name: l.Names[col], Unit: unit, Noise: f.sigma[k] / factor,
			RMSBefore: rms(before[k]), RMSAfter: rms(after[k])}
	}
	return out
}
