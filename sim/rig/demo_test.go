package rig_test

import (
	"errors"
	"math"
	"testing"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/metric"
)

// The demo checks: the built-in robots with their built-in controllers do
// what a builder trying the program expects of them.

const deg = math.Pi / 180

func loadDemo(t *testing.T, model, controller string) *rig.Rig {
	t.Helper()
	r, err := rig.Load(model, controller, "")
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// run steps a plant to the end or a fall; a blow-up fails the test.
func runPlant(t *testing.T, p *sim.Plant, duration float64) {
	t.Helper()
	if err := p.RunFor(duration); err != nil && !errors.Is(err, sim.ErrFallen) {
		t.Fatal(err)
	}
}

func TestDemoRobotsStand(t *testing.T) {
	// Each built-in robot with its built-in controller stays up 20 s with
	// its sensor noise as written. A robot that stands is what the fall
	// limit of its file says (fall.max_tilt, models/SCHEMA.md), and the
	// steady commands stay off full PWM (common practice: a loop that sits
	// at its limit in steady state is mistuned).
	for _, name := range []string{"frontal", "sagittal", "pendulum"} {
		r := loadDemo(t, "builtin:"+name, "")
		o, err := r.Run(20, sim.Options{Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		s := o.Summary
		t.Logf("%s: fell %v (%s at %.2f s), peak tilt %.3f deg, final %.3f deg", name, s.Fell, s.FallReason, s.FallTime, s.PeakTilt, s.FinalTilt)
		if s.Fell {
			t.Errorf("%s fell at %.2f s: %s", name, s.FallTime, s.FallReason)
			continue
		}
		for _, a := range models.ActuatorNames(r.Robot) {
			c := Window(o.Rec, a+".command", 15, 20)
			t.Logf("  %s: last 5 s command max |%.2f|, mean change per tick %.3f", a, MaxAbs(c), MeanAbsChange(c))
			if MaxAbs(c) > 0.9 {
				t.Errorf("%s: %s sits at %.2f of full PWM in steady state", name, a, MaxAbs(c))
			}
		}
	}
}

func TestDemoFrontalNoiseAndShoves(t *testing.T) {
	r := loadDemo(t, "builtin:frontal", "")
	r.Robot = r.Robot.Clone()
	if err := models.SetParam(r.Robot, "sensors.noise", 1); err != nil {
		t.Fatal(err)
	}
	o, err := r.Run(30, sim.Options{Seed: 7})
	if err != nil {
		t.Fatal(err)
	}
	s := o.Summary
	t.Logf("30 s with noise: fell %v, peak tilt %.3f deg", s.Fell, s.PeakTilt)
	if s.Fell {
		t.Fatalf("fell with sensor noise at %.2f s: %s", s.FallTime, s.FallReason)
	}
	// A 3 N*s shove at the torso, each way. The limits (no fall, back
	// within 1 deg within 3 s) are the demo's brief; impulse-momentum
	// (textbook: J = m dv) gives the torso about 0.26 m/s.
	for _, dir := range []string{"left", "right"} {
		sh, err := sim.ParseShove("at=2s,impulse=3N*s,dir=" + dir)
		if err != nil {
			t.Fatal(err)
		}
		p, _, err := r.Build(sim.Options{Seed: 3, Shoves: []sim.Shove{sh}})
		if err != nil {
			t.Fatal(err)
		}
		runPlant(t, p, 10)
		if f, fell := p.Fall(); fell {
			t.Errorf("shove %s: fell at %.2f s: %s", dir, f.Time, f.Reason)
			continue
		}
		rec := p.Recorder()
		peak := MaxAbs(Window(rec, "torso_tilt", 2, 10)) / deg
		at, ok := SettledAt(rec, "torso_tilt", 2, 1*deg)
		t.Logf("shove %s: peak tilt %.3f deg, within 1 deg from %.3f s (%.3f s after the shove)", dir, peak, at, at-2)
		if !ok || at-2 > 3 {
			t.Errorf("shove %s: torso not back within 1 deg within 3 s (settled %v at %.2f s)", dir, ok, at)
		}
		if peak < 0.2 {
			t.Errorf("shove %s: peak tilt %.3f deg: the shove did not reach the robot", dir, peak)
		}
	}
}

func TestDemoFrontalBacklashLimitCycle(t *testing.T) {
	// Slack in a position loop around a non-backdrivable screw, with
	// integral action outside it, makes the loop hunt: a limit cycle whose
	// size grows with the slack (describing-function analysis of backlash,
	// e.g. Ogata, Modern Control Engineering, from memory). Same gains,
	// backlash 0 and 0.4 mm on the hip and ankle screws.
	pp := func(backlash float64) float64 {
		r := loadDemo(t, "builtin:frontal", "")
		r.Robot = r.Robot.Clone()
		for _, a := range []string{"hip_left", "hip_right", "ankle_left", "ankle_right"} {
			if err := models.SetParam(r.Robot, "actuators."+a+".backlash", backlash); err != nil {
				t.Fatal(err)
			}
		}
		o, err := r.Run(20, sim.Options{Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		if o.Summary.Fell {
			t.Fatalf("backlash %g m: fell at %.2f s", backlash, o.Summary.FallTime)
		}
		return PeakToPeak(Window(o.Rec, "torso_tilt", 15, 20)) / deg
	}
	tight, slack := pp(0), pp(0.4e-3)
	t.Logf("torso tilt peak-to-peak over the last 5 s: %.3f deg without backlash, %.3f deg with 0.4 mm", tight, slack)
	if tight > 0.2 {
		t.Errorf("without backlash the torso should settle: %.3f deg peak-to-peak", tight)
	}
	if slack < 0.5 || slack < 4*tight {
		t.Errorf("with 0.4 mm of backlash no clear wobble: %.3f deg (tight %.3f deg)", slack, tight)
	}
}

func TestDemoFrontalStepping(t *testing.T) {
	r := loadDemo(t, "builtin:frontal", "builtin:frontal_stepping")
	p, g, err := r.Build(sim.Options{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	var snap sim.Snapshot
	feet := map[string][]string{"left": {"left_inner", "left_outer"}, "right": {"right_inner", "right_outer"}}
	type stepState struct {
		up   bool
		high float64
	}
	steps := map[string]int{}
	var cur = map[string]*stepState{"left": {}, "right": {}}
	stopAt, stopped := 0.0, false
	var stopState float64
	rec := p.Recorder()
	for p.Time() < 60 {
		if err := p.Step(); err != nil {
			t.Fatal(err)
		}
		p.Snapshot(&snap)
		for side, pads := range feet {
			load, low := 0.0, math.Inf(1)
			for _, ps := range snap.Pads {
				for _, n := range pads {
					if ps.Name == n {
						load += ps.Force
						low = math.Min(low, ps.Position.Y-ps.Thickness/2)
					}
				}
			}
			c := cur[side]
			// A step: the foot's pads carry under 2 N and its lowest
			// pad is over 5 mm up (the brief's clearance), then it lands.
			if load < 2 && low > 5e-3 {
				c.up, c.high = true, math.Max(c.high, low)
			} else if c.up && load > 20 {
				c.up = false
				steps[side]++
				t.Logf("%.2f s: %s foot down after clearing %.1f mm", p.Time(), side, c.high*1e3)
				c.high = 0
			}
		}
		if !stopped && steps["left"]+steps["right"] >= 7 {
			stopAt, stopped = p.Time(), true
			if err := g.Request("stepper", "stop"); err != nil {
				t.Fatal(err)
			}
		}
		if stopped && stopState == 0 {
			// Taken when the sequence sets every output back to zero.
			if l, a, b := lastOf(rec, "stepper.lean"), lastOf(rec, "stepper.lift_left"), lastOf(rec, "stepper.lift_right"); l == 0 && a == 0 && b == 0 {
				stopState = p.Time()
			}
		}
		if stopped && p.Time() > stopAt+12 {
			break
		}
	}
	if f, fell := p.Fall(); fell {
		t.Fatalf("fell at %.2f s: %s", f.Time, f.Reason)
	}
	t.Logf("steps: left %d, right %d; stop requested at %.2f s, taken (settle) at %.2f s", steps["left"], steps["right"], stopAt, stopState)
	if steps["left"]+steps["right"] < 6 || steps["left"] < 3 || steps["right"] < 3 {
		t.Errorf("want at least six steps, three each side: left %d, right %d", steps["left"], steps["right"])
	}
	if !stopped || stopState == 0 {
		t.Fatalf("the stop was not taken")
	}
	// Stopped: the sequence stays in one state, both feet carry load,
	// torso upright.
	if states := Window(rec, "stepper.state", p.Time()-5, p.Time()+1); PeakToPeak(states) != 0 {
		t.Errorf("after the stop the sequence still moves: states %g..%g", states[0], states[len(states)-1])
	}
	left := Window(rec, "load_left.out", p.Time()-1, p.Time()+1)
	right := Window(rec, "load_right.out", p.Time()-1, p.Time()+1)
	tilt := MaxAbs(Window(rec, "torso_tilt", p.Time()-1, p.Time()+1)) / deg
	t.Logf("after stopping: loads left %.1f N, right %.1f N, torso tilt %.3f deg", left[len(left)-1], right[len(right)-1], tilt)
	if left[len(left)-1] < 20 || right[len(right)-1] < 20 || tilt > 1 {
		t.Errorf("not standing on both feet upright after the stop")
	}
	// The first lean is the larger (the brief).
	first, err := g.Get("stepper.first_shift_right.lean")
	if err != nil {
		t.Fatal(err)
	}
	later, err := g.Get("stepper.shift_right.lean")
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(first) <= math.Abs(later) {
		t.Errorf("first lean %.1f deg is not larger than the later %.1f deg", first/deg, later/deg)
	}
}

func TestDemoSagittalBallastDampsRocking(t *testing.T) {
	// A 2 N*s shove from the front; the damping ratio of the torso pitch
	// from the logarithmic decrement (textbook vibration analysis, e.g.
	// Thomson, Theory of Vibration, from memory) must be larger with the
	// ballast loop working than with its gain at zero. The rocking is
	// measured from 2 s after the shove: the robot first tips back onto its
	// heels and returns, a swing ten times the rocking's.
	zeta := func(ballastKp float64) (float64, bool) {
		r := loadDemo(t, "builtin:sagittal", "")
		sh, err := sim.ParseShove("at=2s,impulse=2N*s,dir=back")
		if err != nil {
			t.Fatal(err)
		}
		p, g, err := r.Build(sim.Options{Seed: 1, Shoves: []sim.Shove{sh}})
		if err != nil {
			t.Fatal(err)
		}
		if ballastKp >= 0 {
			if err := g.Set("ballast_loop.kp", ballastKp); err != nil {
				t.Fatal(err)
			}
		}
		runPlant(t, p, 10)
		if f, fell := p.Fall(); fell {
			t.Fatalf("ballast kp %g: fell at %.2f s", ballastKp, f.Time)
		}
		z := metric.LogDecrement(Window(p.Recorder(), "torso_tilt", 4, 10))
		return z, !math.IsNaN(z)
	}
	// With the ballast on the rocking may die within a cycle, leaving no
	// second peak above the floor: that is the most damping there is.
	on, okOn := zeta(-1)
	off, okOff := zeta(0)
	t.Logf("damping ratio of torso pitch after the shove: ballast on %.3f (%v), off %.3f (%v)", on, okOn, off, okOff)
	if !okOff {
		t.Fatalf("no rocking to measure with the ballast off")
	}
	if okOn && on <= off {
		t.Errorf("ballast loop does not add damping: on %.3f, off %.3f", on, off)
	}
	if !okOn && off > 0.5 {
		t.Errorf("with the ballast off the rocking should decay slowly: zeta %.3f", off)
	}
}

func lastOf(rec *sim.Recorder, column string) float64 {
	v := rec.Column(column)
	if len(v) == 0 {
		return math.NaN()
	}
	return v[len(v)-1]
}

// Measures of a recorded run used by the demo checks: what a builder reads
// off the trace of a built-in robot standing, shoved or stepping.

// Window is the part of a recorded column with time in [From, To).
func Window(rec *sim.Recorder, column string, from, to float64) []float64 {
	t, v := rec.Column("time"), rec.Column(column)
	var out []float64
	for i := range t {
		if i < len(v) && t[i] >= from && t[i] < to {
			out = append(out, v[i])
		}
	}
	return out
}

// PeakToPeak is the largest value less the smallest, 0 for no values.
func PeakToPeak(v []float64) float64 {
	if len(v) == 0 {
		return 0
	}
	lo, hi := v[0], v[0]
	for _, x := range v {
		lo, hi = math.Min(lo, x), math.Max(hi, x)
	}
	return hi - lo
}

// MeanAbsChange is the mean of |v[i] - v[i-1]|: how much a command jumps
// from one controller tick to the next.
func MeanAbsChange(v []float64) float64 {
	if len(v) < 2 {
		return 0
	}
	s := 0.0
	for i := 1; i < len(v); i++ {
		s += math.Abs(v[i] - v[i-1])
	}
	return s / float64(len(v)-1)
}

// MaxAbs is the largest |v[i]|.
func MaxAbs(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}

// SettledAt is the first time from which |column| stays within band to the
// end of the recording, looking only at rows at or after from; ok is false
// if it never settles there.
func SettledAt(rec *sim.Recorder, column string, from, band float64) (at float64, ok bool) {
	t, v := rec.Column("time"), rec.Column(column)
	at, ok = math.NaN(), false
	for i := range t {
		if t[i] < from || i >= len(v) {
			continue
		}
		if math.Abs(v[i]) > band {
			ok = false
		} else if !ok {
			at, ok = t[i], true
		}
	}
	return at, ok
}
