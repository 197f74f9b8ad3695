// Package metric measures finished runs: the registry of named metrics a
// sweep records (settling time, overshoot, ITAE, effort, oscillation,
// damping and more) and the signal measures they rest on.
package metric

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"teeter/sim/rig"
)

// Metric is one number measured from a run.
type Metric struct {
	Name    string
	Unit    string // as printed; "" for a pure number
	Meaning string // one line
	Eval    func(o *rig.Outcome) float64
}

// SettleBand is the band around the final tilt that settling time waits for.
const SettleBand = 0.5 * math.Pi / 180 // rad

var metrics = []Metric{
	{"fell", "", "1 if the robot fell, else 0", func(o *rig.Outcome) float64 { return b2f(o.Summary.Fell) }},
	{"fall_time", "s", "time of the fall, or the run's duration if it stayed up", func(o *rig.Outcome) float64 {
		if o.Summary.Fell {
			return o.Summary.FallTime
		}
		return o.Duration
	}},
	{"peak_tilt", "deg", "largest torso tilt from upright", func(o *rig.Outcome) float64 { return o.Summary.PeakTilt }},
	{"final_tilt", "deg", "torso tilt at the end of the run", func(o *rig.Outcome) float64 { return o.Summary.FinalTilt }},
	{"settling_time", "s", "time after the last shove until the torso tilt stays within 0.5 deg of its final value (NaN after a fall)", func(o *rig.Outcome) float64 {
		if o.Summary.Fell {
			return math.NaN()
		}
		t, y := After(o, "torso_tilt")
		return SettlingTime(t, y, SettleBand)
	}},
	{"overshoot", "%", "largest torso tilt past upright on the far side, as a share of the first swing after the last shove", func(o *rig.Outcome) float64 {
		_, y := After(o, "torso_tilt")
		return 100 * Overshoot(y)
	}},
	{"itae", "rad*s^2", "integral of time times |torso tilt| after the last shove", func(o *rig.Outcome) float64 {
		t, y := After(o, "torso_tilt")
		return ITAE(t, y)
	}},
	{"effort", "s", "integral of the sum of squared actuator commands", Effort},
	{"travel", "m or rad", "total distance the actuator screws moved, summed over actuators", travel},
	{"foot_slip", "m", "sideways travel of the pads while loaded, summed over pads", func(o *rig.Outcome) float64 { return o.Slip }},
	{"osc_amplitude", "deg", fmt.Sprintf("amplitude of the steady torso tilt oscillation over its last %d periods, at least %g s (spectral peak)", OscillationPeriods, OscillationWindow), func(o *rig.Outcome) float64 {
		a, _ := oscillation(o)
		return a * 180 / math.Pi
	}},
	{"osc_frequency", "Hz", fmt.Sprintf("frequency of the steady torso tilt oscillation over its last %d periods, at least %g s (spectral peak)", OscillationPeriods, OscillationWindow), func(o *rig.Outcome) float64 {
		_, f := oscillation(o)
		return f
	}},
	{"damping", "", "damping ratio of the torso tilt after the last shove, by logarithmic decrement (NaN if it does not swing)", func(o *rig.Outcome) float64 {
		_, y := After(o, "torso_tilt")
		return LogDecrement(y)
	}},
}

func b2f(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

// All lists every metric, in a fixed order.
func All() []Metric { return slices.Clone(metrics) }

// Lookup finds a metric by name.
func Lookup(name string) (Metric, error) {
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

// After returns time and a recorded column from the last shove on.
func After(o *rig.Outcome, column string) (t, y []float64) {
	t, y = o.Rec.Column("time"), o.Rec.Column(column)
	i := sort.SearchFloat64s(t, o.DisturbAt)
	return t[i:], y[i:]
}

// Effort is the integral over the run of the sum of squared actuator
// commands, s.
func Effort(o *rig.Outcome) float64 {
	t := o.Rec.Column("time")
	sum := 0.0
	for _, name := range o.Rec.Columns() {
		if strings.HasSuffix(name, ".command") {
			u := o.Rec.Column(name)
			sq := make([]float64, len(u))
			for i, v := range u {
				sq[i] = v * v
			}
			sum += trapezoid(t, sq)
		}
	}
	return sum
}

func travel(o *rig.Outcome) float64 {
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

// OscillationWindow is the shortest last part of a run whose spectrum
// gives the steady oscillation.
const OscillationWindow = 4.0 // s

// OscillationPeriods is how many periods of the oscillation the window
// holds at least, where the run is long enough: with fewer, the Hann
// window's main lobe (four bins wide) spans the peak's neighbours and
// pulls a slow cycle's frequency onto a bin and its amplitude down.
const OscillationPeriods = 8

func oscillation(o *rig.Outcome) (amplitude, frequency float64) {
	t, y := o.Rec.Column("time"), o.Rec.Column("torso_tilt")
	if len(t) < 16 {
		return math.NaN(), math.NaN()
	}
	start := sort.SearchFloat64s(t, o.DisturbAt) // not the shove itself
	if len(t)-start < 16 {
		return math.NaN(), math.NaN()
	}
	dt := (t[len(t)-1] - t[start]) / float64(len(t)-1-start)
	// A first look over all of the run after the shove gives the period;
	// the window is then the last OscillationPeriods of them.
	window := OscillationWindow
	if _, f := SpectralPeak(y[start:], dt); f > 0 {
		window = math.Max(window, OscillationPeriods/f)
	}
	i := max(start, sort.SearchFloat64s(t, t[len(t)-1]-window))
	if len(t)-i < 16 {
		return math.NaN(), math.NaN()
	}
	return SpectralPeak(y[i:], dt)
}
