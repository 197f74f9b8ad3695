package study

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/dsp/fourier"

	"teeter/sim"
)

// Outcome is one finished run, ready to be measured.
type Outcome struct {
	Summary Summary
	Rec     *sim.Recorder
	// DisturbAt is when the last shove landed (0 without shoves): settling
	// time, overshoot, ITAE and damping count from there.
	DisturbAt float64
	// Duration is the simulated time asked for.
	Duration float64
	// Slip is the pads' x travel while loaded, m, summed over pads.
	Slip float64
}

// slipLoad is the pad force above which a pad counts as loaded.
const slipLoad = 1.0 // N

// slipEvery is how many physics steps pass between the samples of pad
// positions for the slip metric.
const slipEvery = 5

// Execute builds a plant, runs it for duration seconds or until the robot
// falls, and returns what there is to measure. A fall is an outcome; a
// blow-up or a bad model is an error.
func (r *Rig) Execute(duration float64, opt sim.Options) (*Outcome, error) {
	p, _, err := r.Build(opt)
	if err != nil {
		return nil, err
	}
	o := &Outcome{Duration: duration}
	for _, s := range opt.Shoves {
		o.DisturbAt = math.Max(o.DisturbAt, s.At)
	}
	n := int(math.Round(duration * p.PhysicsRate()))
	var snap sim.Snapshot
	var lastX []float64
	for i := 0; i < n; i++ {
		if i%slipEvery == 0 {
			p.Snapshot(&snap)
			if lastX == nil {
				lastX = make([]float64, len(snap.Pads))
			} else {
				for k, pd := range snap.Pads {
					if pd.Force > slipLoad {
						o.Slip += math.Abs(pd.Position.X - lastX[k])
					}
				}
			}
			for k, pd := range snap.Pads {
				lastX[k] = pd.Position.X
			}
		}
		if err = p.Step(); err != nil {
			break
		}
	}
	if err != nil && !errors.Is(err, sim.ErrFallen) {
		return nil, err
	}
	o.Rec = p.Recorder()
	o.Summary = summarise(p)
	return o, nil
}

// summarise fills a Summary from a finished plant (wall time aside).
func summarise(p *sim.Plant) Summary {
	s := Summary{SimSeconds: p.Time()}
	if fall, fell := p.Fall(); fell {
		s.Fell, s.FallTime, s.FallReason = true, fall.Time, fall.Reason
	}
	tilt := p.Recorder().Column("torso_tilt")
	s.PeakTilt = peakAbs(tilt) * 180 / math.Pi
	if n := len(tilt); n > 0 {
		s.FinalTilt = tilt[n-1] * 180 / math.Pi
	}
	return s
}

// Metric is one number measured from a run.
type Metric struct {
	Name    string
	Unit    string // as printed; "" for a pure number
	Meaning string // one line
	Eval    func(o *Outcome) float64
}

// SettleBand is the band around the final tilt that settling time waits for.
const SettleBand = 0.5 * math.Pi / 180 // rad

var metrics = []Metric{
	{"fell", "", "1 if the robot fell, else 0", func(o *Outcome) float64 { return b2f(o.Summary.Fell) }},
	{"fall_time", "s", "time of the fall, or the run's duration if it stayed up", func(o *Outcome) float64 {
		if o.Summary.Fell {
			return o.Summary.FallTime
		}
		return o.Duration
	}},
	{"peak_tilt", "deg", "largest torso tilt from upright", func(o *Outcome) float64 { return o.Summary.PeakTilt }},
	{"final_tilt", "deg", "torso tilt at the end of the run", func(o *Outcome) float64 { return o.Summary.FinalTilt }},
	{"settling_time", "s", "time after the last shove until the torso tilt stays within 0.5 deg of its final value (NaN after a fall)", func(o *Outcome) float64 {
		if o.Summary.Fell {
			return math.NaN()
		}
		t, y := o.after("torso_tilt")
		return SettlingTime(t, y, SettleBand)
	}},
	{"overshoot", "%", "largest torso tilt past upright on the far side, as a share of the first swing after the last shove", func(o *Outcome) float64 {
		_, y := o.after("torso_tilt")
		return 100 * Overshoot(y)
	}},
	{"itae", "rad*s^2", "integral of time times |torso tilt| after the last shove", func(o *Outcome) float64 {
		t, y := o.after("torso_tilt")
		return ITAE(t, y)
	}},
	{"effort", "s", "integral of the sum of squared actuator commands", func(o *Outcome) float64 { return o.effort() }},
	{"travel", "m or rad", "total distance the actuator screws moved, summed over actuators", func(o *Outcome) float64 { return o.travel() }},
	{"foot_slip", "m", "sideways travel of the pads while loaded, summed over pads", func(o *Outcome) float64 { return o.Slip }},
	{"osc_amplitude", "deg", "amplitude of the steady torso tilt oscillation in the last window (spectral peak)", func(o *Outcome) float64 {
		a, _ := o.oscillation()
		return a * 180 / math.Pi
	}},
	{"osc_frequency", "Hz", "frequency of the steady torso tilt oscillation in the last window (spectral peak)", func(o *Outcome) float64 {
		_, f := o.oscillation()
		return f
	}},
	{"damping", "", "damping ratio of the torso tilt after the last shove, by logarithmic decrement (NaN if it does not swing)", func(o *Outcome) float64 {
		t, y := o.after("torso_tilt")
		return LogDecrement(t, y)
	}},
	{"realtime", "x", "simulated seconds per wall-clock second", func(o *Outcome) float64 { return o.Summary.RealtimeFactor }},
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// Metrics lists every metric, in a fixed order.
func Metrics() []Metric { return slices.Clone(metrics) }

// LookupMetric finds a metric by name.
func LookupMetric(name string) (Metric, error) {
	for _, m := range metrics {
		if m.Name == name {
			return m, nil
		}
	}
	names := make([]string, len(metrics))
	for i, m := range metrics {
		names[i] = m.Name
	}
	return Metric{}, fmt.Errorf("no metric %q (have %s)", name, strings.Join(names, ", "))
}

// after returns time and a column from the last shove on.
func (o *Outcome) after(column string) (t, y []float64) {
	t, y = o.Rec.Column("time"), o.Rec.Column(column)
	i := sort.SearchFloat64s(t, o.DisturbAt)
	return t[i:], y[i:]
}

func (o *Outcome) effort() float64 {
	t := o.Rec.Column("time")
	sum := 0.0
	for _, name := range o.Rec.Columns() {
		if strings.HasSuffix(name, ".command") {
			u := o.Rec.Column(name)
			sq := make([]float64, len(u))
			for i, v := range u {
				sq[i] = v * v
			}
			sum += integrate(t, sq)
		}
	}
	return sum
}

func (o *Outcome) travel() float64 {
	sum := 0.0
	for _, name := range o.Rec.Columns() {
		if strings.HasSuffix(name, ".screw") {
			x := o.Rec.Column(name)
			for i := 1; i < len(x); i++ {
				sum += math.Abs(x[i] - x[i-1])
			}
		}
	}
	return sum
}

// OscillationWindow is the length of the last part of a run whose spectrum
// gives the steady oscillation.
const OscillationWindow = 4.0 // s

func (o *Outcome) oscillation() (amplitude, frequency float64) {
	t, y := o.Rec.Column("time"), o.Rec.Column("torso_tilt")
	if len(t) < 16 {
		return math.NaN(), math.NaN()
	}
	i := sort.SearchFloat64s(t, t[len(t)-1]-OscillationWindow)
	i = max(i, sort.SearchFloat64s(t, o.DisturbAt)) // not the shove itself
	if len(t)-i < 16 {
		return math.NaN(), math.NaN()
	}
	dt := (t[len(t)-1] - t[i]) / float64(len(t)-1-i)
	return SpectralPeak(y[i:], dt)
}

// peakAbs is the largest |x|.
func peakAbs(x []float64) float64 {
	m := 0.0
	for _, v := range x {
		m = math.Max(m, math.Abs(v))
	}
	return m
}

// integrate is the trapezoidal integral of y over t.
func integrate(t, y []float64) float64 {
	s := 0.0
	for i := 1; i < len(t); i++ {
		s += (t[i] - t[i-1]) * (y[i] + y[i-1]) / 2
	}
	return s
}

// SettlingTime is the time from t[0] after which y stays within band of its
// final value; 0 if it always did.
func SettlingTime(t, y []float64, band float64) float64 {
	if len(y) == 0 {
		return math.NaN()
	}
	final := y[len(y)-1]
	for i := len(y) - 1; i >= 0; i-- {
		if math.Abs(y[i]-final) > band {
			if i == len(y)-1 {
				return t[i] - t[0]
			}
			return t[i+1] - t[0]
		}
	}
	return 0
}

// Overshoot is the largest excursion of y past zero on the side opposite
// its first swing, as a share of that swing's peak; 0 if it never crosses.
func Overshoot(y []float64) float64 {
	first, sign := 0.0, 0.0
	for _, v := range y {
		if sign == 0 && v != 0 {
			sign = math.Copysign(1, v)
		}
		if sign != 0 && v*sign < 0 {
			break
		}
		first = math.Max(first, math.Abs(v))
	}
	if first == 0 {
		return 0
	}
	past := 0.0
	for _, v := range y {
		past = math.Max(past, -v*sign)
	}
	return past / first
}

// ITAE is the integral of (t - t[0]) * |y| dt.
func ITAE(t, y []float64) float64 {
	if len(t) == 0 {
		return 0
	}
	w := make([]float64, len(y))
	for i := range y {
		w[i] = (t[i] - t[0]) * math.Abs(y[i])
	}
	return integrate(t, w)
}

// SpectralPeak finds the strongest oscillation in y, sampled every dt
// seconds: its amplitude (in y's units) and frequency (Hz). The mean is
// removed and a Hann window applied; the peak is refined by fitting a
// parabola to the log magnitudes of the three bins around it.
func SpectralPeak(y []float64, dt float64) (amplitude, frequency float64) {
	n := len(y)
	if n < 4 || !(dt > 0) {
		return math.NaN(), math.NaN()
	}
	mean := 0.0
	for _, v := range y {
		mean += v
	}
	mean /= float64(n)
	x := make([]float64, n)
	wsum := 0.0
	for i, v := range y {
		w := 0.5 - 0.5*math.Cos(2*math.Pi*float64(i)/float64(n-1))
		x[i] = (v - mean) * w
		wsum += w
	}
	coef := fourier.NewFFT(n).Coefficients(nil, x)
	k := 1
	for i := 2; i < len(coef); i++ {
		if cmplxAbs(coef[i]) > cmplxAbs(coef[k]) {
			k = i
		}
	}
	mag := cmplxAbs(coef[k])
	if mag == 0 {
		return 0, 0
	}
	shift := 0.0
	if k > 1 && k < len(coef)-1 {
		a, b, c := math.Log(cmplxAbs(coef[k-1])+1e-300), math.Log(mag), math.Log(cmplxAbs(coef[k+1])+1e-300)
		if d := a - 2*b + c; d < 0 {
			shift = 0.5 * (a - c) / d
			mag = math.Exp(b - 0.25*(a-c)*shift)
		}
	}
	return 2 * mag / wsum, (float64(k) + shift) / (float64(n) * dt)
}

func cmplxAbs(c complex128) float64 { return math.Hypot(real(c), imag(c)) }

// LogDecrement estimates the damping ratio of a decaying oscillation from
// its successive positive peaks (Ogata, Modern Control Engineering):
// delta = ln(x1/x(n+1))/n and zeta = delta/sqrt(4 pi^2 + delta^2). The
// oscillation is taken about the mean of the last quarter of y, and a peak is
// the largest value of a lobe that rises above 5 % of the largest excursion,
// so that noise near the crossings makes no false peaks. NaN if there are
// fewer than two peaks.
func LogDecrement(t, y []float64) float64 {
	if len(y) < 8 {
		return math.NaN()
	}
	tail := y[len(y)*3/4:]
	centre := 0.0
	for _, v := range tail {
		centre += v
	}
	centre /= float64(len(tail))
	h := 0.0
	for _, v := range y {
		h = math.Max(h, math.Abs(v-centre))
	}
	h *= 0.05
	var peaks []float64
	in, top := false, 0.0
	for _, v := range y {
		d := v - centre
		switch {
		case !in && d > h:
			in, top = true, d
		case in && d > top:
			top = d
		case in && d < -h:
			peaks = append(peaks, top)
			in = false
		}
	}
	if len(peaks) < 2 {
		return math.NaN()
	}
	n := float64(len(peaks) - 1)
	delta := math.Log(peaks[0]/peaks[len(peaks)-1]) / n
	return delta / math.Sqrt(4*math.Pi*math.Pi+delta*delta)
}
