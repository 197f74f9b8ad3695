// Package fit fits a robot model to a log recorded on the robot: the logged
// actuator commands drive the model (replay) from the logged initial pose,
// and the parameters named are chosen by weighted least squares of the
// logged signals against the simulated ones, with an uncertainty for each
// and a verdict on whether the log tells it at all.
//
// The search is Levenberg-Marquardt on the weighted residuals, on gonum's
// linear algebra (gonum's optimize package has no least-squares method, and
// its Nelder-Mead, which needs no derivatives, stalled far from the hidden
// values once four parameters were fitted together: the cost is a narrow
// curved valley that Levenberg-Marquardt follows with the Jacobian it
// needs for the uncertainties anyway). Parameters that must be positive are
// searched in log space, so a step is a ratio and parameters of very
// different size share one search. A value the model refuses
// (models.SetParam) costs +Inf, which keeps the search inside each
// parameter's valid range. Whole-number parameters (a sensor latency in
// samples) are searched over every whole value near their current one,
// before and after. A replay driven by logged commands alone drifts, so the
// search fits a short span of the log first and lengthens it (windows). At
// the optimum a central-difference Jacobian of the weighted residuals gives
// the covariance s^2 (J^T J)^-1 with s^2 the residual variance per degree
// of freedom (Press et al., Numerical Recipes, 3rd ed., ch. 15.4-15.5).
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
	"gonum.org/v1/gonum/stat"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// Spec is one fit.
type Spec struct {
	Log   *Log
	Paths []string // robot parameter paths (models.SetParam)
	// Signals are the log columns compared (default: every sensor channel
	// of the robot that the log has but the accelerometers' tilt; see
	// roughChannel).
	Signals []string
	// From and To bound the compared rows, s of log time counted from its
	// first row; To 0 means the end. The replay always starts at the first
	// row.
	From, To float64
	// Shoves are the pushes given while logging, timed from the first row.
	Shoves []sim.Shove
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
	// not tell the parameter, NaN when the fit is poor (Result.Poor).
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
	Params     []Param
	Signals    []Signal
	Rows       int // log rows compared
	CostBefore float64
	CostAfter  float64
	// ReducedChiSquare is CostAfter per degree of freedom: about 1 when the
	// model explains the log to within its noise.
	ReducedChiSquare float64
	// Poor says why the uncertainties are not valid ("" when they are):
	// misfit the noise does not explain, or a search that stopped short of
	// the minimum (the cost is rough at small scales); they are then NaN.
	Poor        string
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

// searchStep and curvatureStep are the central-difference steps in the
// search coordinates (fractions of a positive parameter or of the scale of
// another): small for the search, which needs the local slope; larger for
// the uncertainties, which want the valley's width, not the roughness the
// contacts add at small scales.
const searchStep, curvatureStep = 1e-3, 2e-2

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
	*tally
	missing []string
}

// tally counts the replays of one fit across its windows.
type tally struct {
	evals int
	best  float64 // lowest cost so far in the current window
}

func newFitter(r *rig.Rig, spec Spec) (*fitter, error) {
	l := spec.Log
	if l == nil || len(l.Time) < 2 {
		return nil, errors.New("fit: no log")
	}
	if len(spec.Paths) == 0 {
		return nil, errors.New("fit: no parameters to fit")
	}
	f := &fitter{spec: spec, rate: r.ControlRate(), workers: spec.Workers, tally: &tally{best: math.Inf(1)}}
	if f.workers <= 0 {
		f.workers = runtime.GOMAXPROCS(0)
	}
	f.origin, f.base = r.Robot, r.Robot.Clone()
	SetInitialPose(f.base, l)
	f.base.NoiseScale = 0 // the noise is in the log; the replay predicts the clean signal
	// The replay predicts the pots' readings before rounding too: rounded,
	// the cost is a staircase in every parameter, which defeats the
	// search's derivatives; in the log the rounding is one more error.
	for i := range f.base.Sensors {
		f.base.Sensors[i].Bits = 0
	}
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
			if l.Column(ch) != nil && !roughChannel(ch) {
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

// roughChannel reports whether a channel is left out of the default
// signals: an accelerometer's tilt follows the link's acceleration, which
// jumps at every contact impulse, so a replay a little off puts its jumps a
// step early or late and the cost becomes rough at scales far below the
// uncertainty the other signals give (on the frontal robot it stopped the
// search at seven times the cost at the hidden values).
func roughChannel(ch string) bool { return strings.HasSuffix(ch, ".accel_tilt") }

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
	return math.Max(s, 1e-3*stat.PopStdDev(x, nil))
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

// evaluate replays values and returns the weighted residuals and their sum
// of squares, counted as one replay; nil and +Inf when the model refuses
// the values or the replay blows up.
func (f *fitter) evaluate(values []float64) ([]float64, float64) {
	s, err := f.replay(values)
	if err != nil {
		f.count(math.Inf(1))
		return nil, math.Inf(1)
	}
	r := f.residuals(s)
	c := sumSquares(r)
	f.count(c)
	return r, c
}

// count adds replays of the given costs to the tally and reports progress.
func (f *fitter) count(costs ...float64) {
	for _, c := range costs {
		f.evals++
		f.best = math.Min(f.best, c)
	}
	if f.spec.Progress != nil {
		f.spec.Progress(Progress{Evaluations: f.evals, Best: f.best})
	}
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
	status := "converged"
	for _, n := range f.windows() {
		w := f.window(n)
		if s := w.search(ctx, values); s != "" {
			status = s
		}
		if ctx.Err() != nil {
			break
		}
	}
	after, err := f.replay(values)
	if err != nil {
		return nil, fmt.Errorf("fit: replaying the fitted model: %v", err)
	}
	resid := f.residuals(after)
	res.CostAfter = sumSquares(resid)
	res.Params, res.ReducedChiSquare, res.Poor = f.uncertainties(ctx, values, resid)
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

// firstWindow is the span of log compared first, s.
const firstWindow = 1.0

// windows are the row counts compared in turn: the first second of the
// compared span, then twice as much each time up to all of it. A replay
// driven by logged commands alone drifts from the log further the longer it
// runs, so over a long span the cost is a narrow valley that a search from
// far misses; a short span fits roughly and leads the longer ones there
// (continuation).
func (f *fitter) windows() []int {
	t0 := f.spec.Log.Time[0]
	from := f.spec.Log.Time[f.rows[0]] - t0
	var out []int
	for span := firstWindow; ; span *= 2 {
		n := 0
		for n < len(f.rows) && f.spec.Log.Time[f.rows[n]]-t0 <= from+span {
			n++
		}
		if n == len(f.rows) {
			return append(out, n)
		}
		if n >= 3 {
			out = append(out, n)
		}
	}
}

// window is the fitter comparing the first n rows only; the replays end
// there too.
func (f *fitter) window(n int) *fitter {
	w := *f
	w.rows, w.simRow = f.rows[:n], f.simRow[:n]
	w.tEnd = f.spec.Log.Time[f.rows[n-1]] - f.spec.Log.Time[0]
	w.best = math.Inf(1)
	return &w
}

// search lowers the cost from values, written back: whole parameters value
// by value, then the continuous ones by Levenberg-Marquardt, again while
// the whole ones change (at most twice). It returns a status word when it
// stopped for a reason other than convergence.
func (f *fitter) search(ctx context.Context, values []float64) string {
	_, cur := f.evaluate(values)
	status := ""
	for round := 0; round < 2 && ctx.Err() == nil; round++ {
		changed := f.searchWhole(ctx, values, &cur)
		if round > 0 && !changed {
			break
		}
		status = f.levenbergMarquardt(ctx, values, &cur)
	}
	return status
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
	f.count(out...)
	return out
}

// continuous lists the parameters that are not whole numbers.
func (f *fitter) continuous() []int {
	var out []int
	for i, a := range f.axes {
		if !a.whole {
			out = append(out, i)
		}
	}
	return out
}

// moved is values with the continuous parameters cont stepped by dx in the
// search coordinates.
func (f *fitter) moved(values []float64, cont []int, dx []float64) []float64 {
	v := slices.Clone(values)
	for k, i := range cont {
		if f.axes[i].logScale {
			v[i] *= math.Exp(dx[k])
		} else {
			v[i] += f.axes[i].scale * dx[k]
		}
	}
	return v
}

// jacobian is the central-difference Jacobian of the weighted residuals at
// values with respect to the search coordinates of cont, the replays run
// on the workers; nil when a replay beside values fails.
func (f *fitter) jacobian(ctx context.Context, values []float64, cont []int, h float64) *mat.Dense {
	res := make([][]float64, 2*len(cont))
	var g errgroup.Group
	g.SetLimit(f.workers)
	for k := range res {
		dx := make([]float64, len(cont))
		dx[k/2] = h
		if k%2 == 1 {
			dx[k/2] = -h
		}
		v := f.moved(values, cont, dx)
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
	f.count()
	m := len(f.signals) * len(f.rows)
	jac := mat.NewDense(m, len(cont), nil)
	for k := range cont {
		plus, minus := res[2*k], res[2*k+1]
		if plus == nil || minus == nil {
			return nil
		}
		for r := range m {
			jac.Set(r, k, (plus[r]-minus[r])/(2*h))
		}
	}
	return jac
}

// Levenberg-Marquardt settings: the damping starts at lmDamping, a step is
// at most lmMaxStep in the search coordinates (a factor of 2 for a positive
// parameter), and the search stops when an iteration lowers the cost by
// less than lmTolerance of it or after lmIterations.
const (
	lmDamping    = 1e-2
	lmMaxStep    = 0.7
	lmTolerance  = 1e-4
	lmIterations = 30
)

// levenbergMarquardt lowers the cost over the continuous parameters from
// values, writing the best back: each iteration solves
// (J^T J + lambda diag J^T J) dx = -J^T r and takes the step if it lowers
// the cost, else raises lambda tenfold and tries again (Marquardt 1963;
// Numerical Recipes, ch. 15.5.2). It returns a status word when it stopped
// for a reason other than convergence.
func (f *fitter) levenbergMarquardt(ctx context.Context, values []float64, cur *float64) string {
	cont := f.continuous()
	if len(cont) == 0 {
		return ""
	}
	n := len(cont)
	lambda := lmDamping
	r, _ := f.evaluate(values)
	if r == nil {
		return "the replay failed"
	}
	resid := mat.NewVecDense(len(r), r)
	for iter := 0; iter < lmIterations; iter++ {
		if ctx.Err() != nil {
			return ""
		}
		jac := f.jacobian(ctx, values, cont, searchStep)
		if jac == nil {
			return "the replay failed next to the current values"
		}
		var jtj mat.SymDense
		jtj.SymOuterK(1, jac.T())
		var grad mat.VecDense
		grad.MulVec(jac.T(), resid)
		largest := 0.0
		for k := range n {
			largest = math.Max(largest, jtj.At(k, k))
		}
		if largest == 0 {
			return "" // the log tells none of them; the verdicts say so
		}
		accepted := false
		for lambda < 1e10 && ctx.Err() == nil {
			a := mat.NewSymDense(n, nil)
			a.CopySym(&jtj)
			for k := range n {
				a.SetSym(k, k, jtj.At(k, k)+lambda*math.Max(jtj.At(k, k), 1e-9*largest))
			}
			var chol mat.Cholesky
			dx := mat.NewVecDense(n, nil)
			if !chol.Factorize(a) || chol.SolveVecTo(dx, &grad) != nil {
				lambda *= 10
				continue
			}
			step := make([]float64, n)
			for k := range n {
				step[k] = math.Max(-lmMaxStep, math.Min(lmMaxStep, -dx.AtVec(k)))
			}
			trial := f.moved(values, cont, step)
			rt, c := f.evaluate(trial)

			if c < *cur {
				gain := *cur - c
				*cur = c
				copy(values, trial)
				resid = mat.NewVecDense(len(rt), rt)
				lambda = math.Max(lambda/10, 1e-7)
				accepted = true
				if gain < lmTolerance*c {
					return ""
				}
				break
			}
			lambda *= 10
		}
		if !accepted {
			return "" // no step lowers the cost: at the minimum as far as the steps tell
		}
	}
	return "iteration limit"
}

// poorFitLimit is the reduced chi-square above which a fit is called
// poor: each signal weighed by its own noise, a model that explains the log
// leaves chi-square about equal to its degrees of freedom (Numerical
// Recipes, ch. 15.1), and twice that is misfit the noise does not explain.
// The covariance takes such misfit for noise, so it gives no uncertainty.
const poorFitLimit = 2

// uncertainties gives each parameter its standard deviation and verdict:
// central differences for the continuous ones, the neighbours' costs for
// whole ones. It returns the reduced chi-square and, when the fit is poor
// or the search stopped short of a minimum, why; the uncertainties are then
// NaN (not valid) rather than misleadingly small.
func (f *fitter) uncertainties(ctx context.Context, values, resid []float64) ([]Param, float64, string) {
	out := make([]Param, len(f.axes))
	var cont []int
	for i, a := range f.axes {
		out[i] = Param{Path: a.path, Start: a.start, Estimate: values[i], Whole: a.whole}
		if !a.whole {
			cont = append(cont, i)
		}
	}
	cost := sumSquares(resid)
	reduced := cost / math.Max(float64(len(resid)-len(f.axes)), 1)
	s2 := math.Max(reduced, 1e-12)
	for i, a := range f.axes {
		if a.whole {
			f.wholeVerdict(ctx, &out[i], values, i, cost, s2)
		}
	}
	short := 0.0
	if len(cont) > 0 {
		short = f.continuousVerdicts(ctx, out, values, cont, resid, s2)
	}
	var poor []string
	if reduced > poorFitLimit {
		poor = append(poor, fmt.Sprintf("chi-square per degree of freedom is %.3g, well above 1: the model leaves misfit that the log's noise does not explain", reduced))
	}
	if short > 1 {
		poor = append(poor, fmt.Sprintf("the search stopped %.3g standard deviations short of the minimum the slope at its end points to", short))
	}
	for i := range out {
		out[i].Value = out[i].Start
		if out[i].Identifiable {
			out[i].Value = out[i].Estimate
			if len(poor) > 0 {
				out[i].Uncertainty = math.NaN()
			}
		}
	}
	return out, reduced, strings.Join(poor, "; ")
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
// from the Jacobian of the weighted residuals at values. It returns how far
// the Gauss-Newton step from values reaches, in standard deviations (the
// square root of the chi-square decrease it predicts, over s2): a search
// ended at a minimum has it well below 1.
func (f *fitter) continuousVerdicts(ctx context.Context, out []Param, values []float64, cont []int, resid []float64, s2 float64) float64 {
	jac := f.jacobian(ctx, values, cont, curvatureStep)
	if jac == nil {
		for _, i := range cont {
			out[i].Uncertainty = math.Inf(1)
			out[i].Note = "the replay failed next to the optimum"
		}
		return 0
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
	return math.Sqrt(gaussNewtonDecrease(jac, resid) / s2)
}

// gaussNewtonDecrease is the decrease of the sum of squares that a full
// Gauss-Newton step predicts, |U U^T r|^2 over the singular directions
// the covariance keeps (Numerical Recipes, ch. 15.4.2).
func gaussNewtonDecrease(jac *mat.Dense, resid []float64) float64 {
	var svd mat.SVD
	if !svd.Factorize(jac, mat.SVDThin) {
		return 0
	}
	sv := svd.Values(nil)
	var u mat.Dense
	svd.UTo(&u)
	r := mat.NewVecDense(len(resid), resid)
	sum := 0.0
	for k, w := range sv {
		if w > 1e-9*sv[0] {
			d := mat.Dot(u.ColView(k), r)
			sum += d * d
		}
	}
	return sum
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
