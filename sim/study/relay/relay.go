// Package relay runs the relay feedback test, with hysteresis, on one PID
// block of a rig's controller, says when its result is not valid, and turns
// the ultimate gain and period it finds into PI and PID gains by the
// Ziegler-Nichols and Tyreus-Luyben rules.
package relay

import (
	"errors"
	"fmt"
	"maps"
	"math"
	"math/cmplx"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/stat"

	"teeter/control"
	"teeter/sim"
	"teeter/sim/rig"
)

// The relay feedback test (Astrom and Hagglund, Automatica 20(5), 1984):
// a relay of amplitude d in place of the controller makes the loop
// oscillate at the frequency where its phase is -180 deg; with the
// oscillation's amplitude a at the relay's input the describing function
// of the relay gives the ultimate gain Ku = 4d/(pi a), and the period is
// the ultimate period Pu. Hysteresis keeps noise from switching the relay
// and slows the cycle below the control rate (Astrom and Hagglund, PID
// Controllers, 1995, sec. 6.5); see Result for what it then measures.

// LimitCycle measures a steady oscillation of e sampled at times t: its
// amplitude (half the mean peak-to-peak over whole cycles) and period (the
// mean time between upward zero crossings, interpolated), using only
// samples from skip seconds on. cycles is the number of whole cycles used.
func LimitCycle(t, e []float64, skip float64) (amplitude, period float64, cycles int, err error) {
	i0 := sort.SearchFloat64s(t, t[0]+skip)
	var ups []float64
	var upIndex []int
	for i := max(i0, 1); i < len(e); i++ {
		if e[i-1] < 0 && e[i] >= 0 {
			f := -e[i-1] / (e[i] - e[i-1])
			ups = append(ups, t[i-1]+f*(t[i]-t[i-1]))
			upIndex = append(upIndex, i)
		}
	}
	if len(ups) < 3 {
		return 0, 0, 0, fmt.Errorf("no steady oscillation: %d upward crossings after %g s", len(ups), skip)
	}
	cycles = len(ups) - 1
	period = (ups[cycles] - ups[0]) / float64(cycles)
	sum := 0.0
	for k := 0; k < cycles; k++ {
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, v := range e[upIndex[k]:upIndex[k+1]] {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		sum += (hi - lo) / 2
	}
	return sum / float64(cycles), period, cycles, nil
}

// UltimateGain is the relay test's estimate 4d/(pi a).
func UltimateGain(d, a float64) float64 { return 4 * d / (math.Pi * a) }

// PIDGains are gains of the parallel PID u = kp*e + ki*integral(e) + kd*de/dt.
type PIDGains struct {
	Rule       string  `json:"rule"`
	Kp         float64 `json:"kp"`
	Ki         float64 `json:"ki"`   // 1/s
	Kd         float64 `json:"kd"`   // s
	Ti         float64 `json:"ti_s"` // Kp/Ki
	Td         float64 `json:"td_s"` // Kd/Kp
	Derivative bool    `json:"-"`
}

func pidFromTimes(rule string, kp, ti, td float64) PIDGains {
	g := PIDGains{Rule: rule, Kp: kp, Ti: ti, Td: td, Ki: kp / ti, Kd: kp * td, Derivative: td > 0}
	return g
}

// TuningRules gives PI and PID gains from the ultimate gain and period by
// the Ziegler-Nichols (1942) and Tyreus-Luyben (1992) rules.
func TuningRules(ku, pu float64) []PIDGains {
	return []PIDGains{
		pidFromTimes("ziegler-nichols-pi", 0.45*ku, pu/1.2, 0),
		pidFromTimes("ziegler-nichols-pid", 0.6*ku, pu/2, pu/8),
		pidFromTimes("tyreus-luyben-pi", ku/3.2, 2.2*pu, 0),
		pidFromTimes("tyreus-luyben-pid", ku/2.2, 2.2*pu, pu/6.3),
	}
}

// Spec is a relay test on one PID block of the rig's controller.
type Spec struct {
	Block string
	// Amplitude is the relay's d, in the block's output units (default:
	// a quarter of its output range, halved up to three times while the
	// cycle is faster than MinTicks control ticks).
	Amplitude float64
	// Hysteresis is the relay's eps, in the block's error units: it
	// switches down when the error falls below -eps and up when it rises
	// above +eps (default: 3 standard deviations of the error while the
	// robot stands under its own controller, so noise cannot switch it).
	Hysteresis float64
	Duration   float64 // s (default 12)
	Skip       float64 // s of start-up left out (default: a third of Duration)
	Seed       uint64
}

// Result is what the test found. The relay with hysteresis finds the point
// of the loop's frequency response where -1/N(a) meets it: gain
// pi*a/(4d) at phase -180 deg + asin(eps/a), which is the ultimate point
// only as eps/a goes to 0 (Astrom and Hagglund, PID Controllers, 1995,
// sec. 6.5). Ku is 4d/(pi a), the gain that would make that point -1.
type Result struct {
	Block      string     `json:"block"`
	Amplitude  float64    `json:"relay_amplitude"`
	Hysteresis float64    `json:"hysteresis"`
	ErrorAmp   float64    `json:"error_amplitude"`
	Period     float64    `json:"ultimate_period_s"`
	Ku         float64    `json:"ultimate_gain"`
	Phase      float64    `json:"phase_deg"` // of the loop at the point found
	Cycles     int        `json:"cycles"`
	Ticks      float64    `json:"control_ticks_per_period"`
	Rules      []PIDGains `json:"rules"`
}

// relayGain is the proportional gain that makes a saturated PID a relay:
// it crosses its whole output range within a millionth of the error.
const relayGain = 1e6

// MinTicks is the shortest period, in control ticks, that the test takes
// as the loop's own oscillation rather than a chatter set by the sampling
// (common practice: the describing function assumes a smooth loop, which a
// few samples per period are not).
const MinTicks = 10

// minCycles is how many whole cycles a steady oscillation must show.
const minCycles = 5

// maxSpread is how far, as a share of the mean, one cycle's period may stray
// for the oscillation to count as steady (common practice).
const maxSpread = 0.25

// Test swaps the block's PID for a relay with hysteresis on the block's
// own error (setpoint minus measurement), runs the robot and measures the
// limit cycle; everything else in the graph is as it was. It fails, saying
// why, when the robot falls, when there is no steady cycle, or when the
// cycle is faster than MinTicks control ticks.
func Test(r *rig.Rig, spec Spec) (Result, error) {
	k, err := pidIndex(r, spec.Block)
	if err != nil {
		return Result{}, err
	}
	auto := !(spec.Amplitude > 0)
	if spec, err = filled(r, k, spec); err != nil {
		return Result{}, err
	}
	minPeriod := MinTicks / r.ControlRate()
	for try := 0; ; try++ {
		res, err := trial(r, k, spec)
		if err != nil {
			return Result{}, err
		}
		if res.Period >= minPeriod {
			return res, nil
		}
		if !auto || try == 3 {
			return Result{}, fmt.Errorf("relay test on %s not valid: the cycle (%.3g s, %.1f control ticks at relay +/-%.4g, hysteresis %.4g) is faster than %d ticks: the sampling sets it, not the loop; try a smaller amplitude or more hysteresis",
				spec.Block, res.Period, res.Ticks, res.Amplitude, res.Hysteresis, MinTicks)
		}
		spec.Amplitude /= 2
	}
}

// pidIndex finds the PID block the test replaces.
func pidIndex(r *rig.Rig, block string) (int, error) {
	if r.Spec == nil {
		return 0, errors.New("relay test: the robot has no controller graph")
	}
	k := slices.IndexFunc(r.Spec.Blocks, func(b *control.BlockSpec) bool { return b.Name == block })
	if k < 0 || r.Spec.Blocks[k].Kind != "pid" {
		var pids []string
		for _, b := range r.Spec.Blocks {
			if b.Kind == "pid" {
				pids = append(pids, b.Name)
			}
		}
		return 0, fmt.Errorf("relay test: %q is not a pid block (pid blocks: %v)", block, pids)
	}
	return k, nil
}

// filled is the spec with its defaults in place of zero fields.
func filled(r *rig.Rig, k int, spec Spec) (Spec, error) {
	if !(spec.Amplitude > 0) {
		old := r.Spec.Blocks[k]
		lo, hi := paramValue(old, "min", math.NaN()), paramValue(old, "max", math.NaN())
		if math.IsNaN(lo) || math.IsNaN(hi) || !(hi > lo) {
			return spec, fmt.Errorf("relay test: block %s has no output limits; give the relay amplitude", spec.Block)
		}
		spec.Amplitude = (hi - lo) / 4
	}
	if spec.Duration <= 0 {
		spec.Duration = 12
	}
	if spec.Skip <= 0 {
		spec.Skip = spec.Duration / 3
	}
	if !(spec.Hysteresis > 0) {
		sd, err := errorNoise(r, k, spec.Seed)
		if err != nil {
			return spec, err
		}
		spec.Hysteresis = 3 * sd
	}
	return spec, nil
}

// errorNoise is the standard deviation of the block's error over 2 s of the
// robot standing under its own controller, after 0.5 s to settle.
func errorNoise(r *rig.Rig, k int, seed uint64) (float64, error) {
	old := r.Spec.Blocks[k]
	spec := *r.Spec
	spec.Blocks = append(slices.Clone(r.Spec.Blocks), errorBlock(old))
	o, err := (&rig.Rig{Robot: r.Robot, Spec: &spec, Gains: r.Gains}).Run(2.5, sim.Options{Seed: seed})
	if err != nil {
		return 0, fmt.Errorf("relay test on %s: standing: %v", old.Name, err)
	}
	t, e := o.Rec.Column("time"), o.Rec.Column(old.Name+errorSuffix+".out")
	return stat.StdDev(e[sort.SearchFloat64s(t, 0.5):], nil), nil
}

// trial runs the relay once and measures its cycle.
func trial(r *rig.Rig, k int, spec Spec) (Result, error) {
	d, eps := spec.Amplitude, spec.Hysteresis
	o, err := withRelay(r, k, d, eps).Run(spec.Duration, sim.Options{Seed: spec.Seed})
	if err != nil {
		return Result{}, fmt.Errorf("relay test on %s: %v", spec.Block, err)
	}
	if o.Summary.Fell {
		return Result{}, fmt.Errorf("relay test on %s: the robot fell at %.2f s (%s); try a smaller amplitude than %g", spec.Block, o.Summary.FallTime, o.Summary.FallReason, d)
	}
	t, u, e := o.Rec.Column("time"), o.Rec.Column(spec.Block+".out"), o.Rec.Column(spec.Block+errorSuffix+".out")
	c, err := RelayCycle(t, u, e, spec.Skip)
	if err != nil {
		return Result{}, fmt.Errorf("relay test on %s not valid: %v (relay +/-%.4g, hysteresis %.4g: noise may be switching it; try more of either)", spec.Block, err, d, eps)
	}
	if c.Amplitude <= eps {
		return Result{}, fmt.Errorf("relay test on %s not valid: the error's fundamental (%.3g) is within the hysteresis (%.3g): no dominant harmonic", spec.Block, c.Amplitude, eps)
	}
	ku := UltimateGain(d, c.Amplitude)
	return Result{Block: spec.Block, Amplitude: d, Hysteresis: eps, ErrorAmp: c.Amplitude, Period: c.Period, Ku: ku,
		Phase: -180 + math.Asin(eps/c.Amplitude)*180/math.Pi, Cycles: c.Cycles, Ticks: c.Period * r.ControlRate(),
		Rules: TuningRules(ku, c.Period)}, nil
}

// Cycle is a relay's limit cycle as RelayCycle measures it.
type Cycle struct {
	Amplitude float64 // of the error's fundamental
	Period    float64 // s
	Cycles    int
}

// RelayCycle measures the limit cycle of a relay whose output u switches
// about 0 and whose input e is the loop's error, both sampled at times t,
// from skip seconds on. The period is the mean time between the relay's
// upward switches, which the hysteresis keeps clean of noise; the amplitude
// is that of e's fundamental over those whole cycles, the a of the
// describing function, which noise on e does not inflate as peak-to-peak
// would. It fails if there are fewer than minCycles cycles or one cycle's
// period strays from the mean by more than maxSpread.
func RelayCycle(t, u, e []float64, skip float64) (Cycle, error) {
	var ups []int
	for i := max(sort.SearchFloat64s(t, t[0]+skip), 1); i < len(u); i++ {
		if u[i-1] < 0 && u[i] >= 0 {
			ups = append(ups, i)
		}
	}
	n := len(ups) - 1
	if n < minCycles {
		return Cycle{}, fmt.Errorf("no steady cycle: %d whole cycles after %g s", max(n, 0), skip)
	}
	period := (t[ups[n]] - t[ups[0]]) / float64(n)
	for k := range n {
		if p := t[ups[k+1]] - t[ups[k]]; math.Abs(p-period) > maxSpread*period {
			return Cycle{}, fmt.Errorf("no steady cycle: a period of %.3g s beside the mean %.3g s", p, period)
		}
	}
	// The fundamental's complex amplitude, (2/T) * integral of e exp(-jwt).
	w := 2 * math.Pi / period
	var f complex128
	for i := ups[0]; i < ups[n]; i++ {
		f += complex(e[i]*(t[i+1]-t[i]), 0) * cmplx.Exp(complex(0, -w*t[i]))
	}
	return Cycle{Amplitude: 2 * cmplx.Abs(f) / (t[ups[n]] - t[ups[0]]), Period: period, Cycles: n}, nil
}

// withRelay is the rig with its k-th block, a PID, made a relay with
// hysteresis switching between -d and +d. The relay is that PID with gain
// relayGain, no integral or derivative and limits -d, +d, fed back its own
// output of the last tick: with measurement -(eps/d)*u_prev the block sees
// e + eps*sign(u_prev), so it switches down when e falls below -eps and up
// when e rises above +eps. A sum block beside it records e itself. Gains of
// other blocks still apply; the relay's own are dropped.
func withRelay(r *rig.Rig, k int, d, eps float64) *rig.Rig {
	old := r.Spec.Blocks[k]
	name := old.Name
	errName, lastName, shiftName := name+errorSuffix, name+"_relay_last", name+"_relay_shift"
	relay := *old
	relay.Options = maps.Clone(old.Options)
	relay.Options["anti_windup"] = "none"
	relay.Params = nil
	for _, p := range old.Params {
		switch p.Name {
		case "kp", "ki", "kd", "b", "min", "max", "tt":
		default:
			relay.Params = append(relay.Params, p)
		}
	}
	relay.Params = append(relay.Params, fixed("kp", relayGain), fixed("ki", 0), fixed("kd", 0),
		fixed("b", 1), fixed("min", -d), fixed("max", d), fixed("tt", 0))
	relay.Inputs = []control.Port{{Name: "setpoint", Source: errName}, {Name: "measurement", Source: shiftName}}
	blocks := []*control.BlockSpec{
		errorBlock(old),
		{Name: lastName, Kind: "delay", Params: []control.Param{fixed("initial", 0)}, Outputs: []string{"out"},
			Inputs: []control.Port{{Name: "in", Source: name + ".out"}}},
		{Name: shiftName, Kind: "gain", Params: []control.Param{fixed("k", -eps/d)}, Outputs: []string{"out"},
			Inputs: []control.Port{{Name: "in", Source: lastName}}},
	}
	spec := *r.Spec
	spec.Blocks = slices.Clone(r.Spec.Blocks)
	spec.Blocks[k] = &relay
	spec.Blocks = append(spec.Blocks, blocks...)
	test := &rig.Rig{Robot: r.Robot, Spec: &spec}
	if r.Gains != nil {
		gs := control.GainSet{Rate: r.Gains.Rate}
		for _, g := range r.Gains.Gains {
			if !strings.HasPrefix(g.Path, name+".") {
				gs.Gains = append(gs.Gains, g)
			}
		}
		test.Gains = &gs
	}
	return test
}

// errorSuffix names the block that computes a PID's error for the test.
const errorSuffix = "_relay_error"

// errorBlock computes the PID's error, setpoint minus measurement.
func errorBlock(pid *control.BlockSpec) *control.BlockSpec {
	return &control.BlockSpec{Name: pid.Name + errorSuffix, Kind: "sum", Options: map[string]string{"signs": "+-"}, Outputs: []string{"out"},
		Inputs: []control.Port{{Name: "in1", Source: pid.Inputs[0].Source}, {Name: "in2", Source: pid.Inputs[1].Source}}}
}

// fixed is a parameter the relay test sets and nothing tunes.
func fixed(name string, v float64) control.Param {
	return control.Param{Name: name, Value: v, Min: math.Inf(-1), Max: math.Inf(1)}
}

func paramValue(b *control.BlockSpec, name string, def float64) float64 {
	for _, p := range b.Params {
		if p.Name == name {
			return p.Value
		}
	}
	return def
}
