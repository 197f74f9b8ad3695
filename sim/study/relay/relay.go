// Package relay runs the relay feedback test on one PID block of a rig's
// controller and turns the ultimate gain and period it finds into PI and
// PID gains by the Ziegler-Nichols and Tyreus-Luyben rules.
package relay

import (
	"errors"
	"fmt"
	"maps"
	"math"
	"slices"
	"sort"
	"strings"

	"teeter/control"
	"teeter/sim"
	"teeter/sim/rig"
)

// The relay feedback test (Astrom and Hagglund, Automatica 20(5), 1984):
// a relay of amplitude d in place of the controller makes the loop
// oscillate at the frequency where its phase is -180 deg; with the
// oscillation's amplitude a at the relay's input the describing function
// of the relay gives the ultimate gain Ku = 4d/(pi a), and the period is
// the ultimate period Pu.

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
	// a quarter of its output range, which a relay test needs to be
	// limited).
	Amplitude float64
	// Bias is the output the relay switches about (default 0).
	Bias     float64
	Duration float64 // s (default 12)
	Skip     float64 // s of start-up left out (default: a third of Duration)
	Seed     uint64
}

// Result is what the test found.
type Result struct {
	Block     string     `json:"block"`
	Amplitude float64    `json:"relay_amplitude"`
	ErrorAmp  float64    `json:"error_amplitude"`
	Period    float64    `json:"ultimate_period_s"`
	Ku        float64    `json:"ultimate_gain"`
	Cycles    int        `json:"cycles"`
	Rules     []PIDGains `json:"rules"`
}

// relayGain is the proportional gain that makes a saturated PID a relay:
// it crosses its whole output range within a millionth of the error.
const relayGain = 1e6

// Test swaps the block's PID for a relay of the block's own error
// (setpoint minus measurement), runs the robot and measures the limit
// cycle. The relay is the same PID with gain 1e6, no integral or
// derivative and limits Bias -/+ Amplitude, so everything else in the graph
// is as it was. A robot that falls during the test gives an error.
func Test(r *rig.Rig, spec Spec) (Result, error) {
	if r.Spec == nil {
		return Result{}, errors.New("relay test: the robot has no controller graph")
	}
	k := slices.IndexFunc(r.Spec.Blocks, func(b *control.BlockSpec) bool { return b.Name == spec.Block })
	if k < 0 || r.Spec.Blocks[k].Kind != "pid" {
		var pids []string
		for _, b := range r.Spec.Blocks {
			if b.Kind == "pid" {
				pids = append(pids, b.Name)
			}
		}
		return Result{}, fmt.Errorf("relay test: %q is not a pid block (pid blocks: %v)", spec.Block, pids)
	}
	d := spec.Amplitude
	if !(d > 0) {
		old := r.Spec.Blocks[k]
		lo, hi := paramValue(old, "min", math.NaN()), paramValue(old, "max", math.NaN())
		if math.IsNaN(lo) || math.IsNaN(hi) || !(hi > lo) {
			return Result{}, fmt.Errorf("relay test: block %s has no output limits; give the relay amplitude", spec.Block)
		}
		d = (hi - lo) / 4
	}
	if spec.Duration <= 0 {
		spec.Duration = 12
	}
	if spec.Skip <= 0 {
		spec.Skip = spec.Duration / 3
	}
	o, err := withRelay(r, k, spec.Bias, d).Run(spec.Duration, sim.Options{Seed: spec.Seed})
	if err != nil {
		return Result{}, fmt.Errorf("relay test on %s: %v", spec.Block, err)
	}
	if o.Summary.Fell {
		return Result{}, fmt.Errorf("relay test on %s: the robot fell at %.2f s (%s); try a smaller amplitude than %g", spec.Block, o.Summary.FallTime, o.Summary.FallReason, d)
	}
	t, p := o.Rec.Column("time"), o.Rec.Column(spec.Block+".p")
	if p == nil {
		return Result{}, fmt.Errorf("relay test: no recording of %s.p", spec.Block)
	}
	e := make([]float64, len(p))
	for i, v := range p {
		e[i] = v / relayGain
	}
	a, pu, cycles, err := LimitCycle(t, e, spec.Skip)
	if err != nil {
		return Result{}, fmt.Errorf("relay test on %s: %v", spec.Block, err)
	}
	ku := UltimateGain(d, a)
	return Result{Block: spec.Block, Amplitude: d, ErrorAmp: a, Period: pu, Ku: ku, Cycles: cycles, Rules: TuningRules(ku, pu)}, nil
}

// withRelay is the rig with its k-th block, a PID, made a relay switching
// between bias-d and bias+d. Gains of other blocks still apply; the
// relay's own are dropped.
func withRelay(r *rig.Rig, k int, bias, d float64) *rig.Rig {
	old := r.Spec.Blocks[k]
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
	set := func(name string, v float64) {
		relay.Params = append(relay.Params, control.Param{Name: name, Value: v, Min: math.Inf(-1), Max: math.Inf(1)})
	}
	set("kp", relayGain)
	set("ki", 0)
	set("kd", 0)
	set("b", 1)
	set("min", bias-d)
	set("max", bias+d)
	set("tt", 0)
	spec := *r.Spec
	spec.Blocks = slices.Clone(r.Spec.Blocks)
	spec.Blocks[k] = &relay
	test := &rig.Rig{Robot: r.Robot, Spec: &spec}
	if r.Gains != nil {
		gs := control.GainSet{Rate: r.Gains.Rate}
		for _, g := range r.Gains.Gains {
			if !strings.HasPrefix(g.Path, old.Name+".") {
				gs.Gains = append(gs.Gains, g)
			}
		}
		test.Gains = &gs
	}
	return test
}

func paramValue(b *control.BlockSpec, name string, def float64) float64 {
	for _, p := range b.Params {
		if p.Name == name {
			return p.Value
		}
	}
	return def
}
