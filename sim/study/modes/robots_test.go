package modes

import (
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/stat"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// A small disturbance of a loop linearised about an equilibrium grows or
// dies as exp(Re(s) t) along each mode (Lyapunov's indirect method;
// Khalil, Nonlinear Systems, ch. 4). These tests hold the linearised modes
// of the built-in robots to that: the idealised rig (the loop linearised,
// see Ideal) is kicked a little and simulated, and what its tilt does is
// set beside the eigenvalues.

// kicked simulates the idealised rig for span seconds after a sideways
// shove of 0.002 N*s per kg at 2 s, and returns the time and torso tilt
// from the shove on.
func kicked(t *testing.T, r *rig.Rig, span float64) (times, tilt []float64) {
	t.Helper()
	ideal := Ideal(r)
	mass := 0.0
	for _, l := range ideal.Robot.Links {
		mass += l.Mass
	}
	const at = 2.0
	o, err := ideal.Run(at+span, sim.Options{Seed: 1, Shoves: []sim.Shove{{At: at, Impulse: models.Vec2{X: 0.002 * mass}}}})
	if err != nil {
		t.Fatal(err)
	}
	if o.Summary.Fell {
		t.Fatalf("%s fell after the kick", r.Robot.Name)
	}
	ts, ys := o.Rec.Column("time"), o.Rec.Column("torso_tilt")
	for i := range ts {
		if ts[i] >= at {
			times, tilt = append(times, ts[i]-at), append(tilt, ys[i])
		}
	}
	return times, tilt
}

// growth is the rate, 1/s, at which the oscillation of y near hz grows
// between from and to: its envelope by complex demodulation (y times
// exp(-j w t), averaged over one period; Bloomfield, Fourier Analysis of
// Time Series, ch. 7) and the least-squares slope of the envelope's log.
func growth(times, y []float64, hz, from, to float64) float64 {
	dt := times[1] - times[0]
	n := int(math.Round(1 / (hz * dt)))
	w := 2 * math.Pi * hz
	var sum complex128
	var ts, logs []float64
	for k := range times {
		sum += complex(y[k], 0) * cmplx.Exp(complex(0, -w*times[k]))
		if k >= n {
			sum -= complex(y[k-n], 0) * cmplx.Exp(complex(0, -w*times[k-n]))
		}
		mid := times[k] - float64(n-1)*dt/2
		if k+1 < n || mid < from || mid > to {
			continue
		}
		ts, logs = append(ts, mid), append(logs, math.Log(cmplx.Abs(sum)))
	}
	_, rate := stat.LinearRegression(ts, logs, nil, false)
	return rate
}

// linearised returns the rig's linearised modes.
func linearised(t *testing.T, r *rig.Rig) []Mode {
	t.Helper()
	lin, err := Linearise(r, Options{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	ms, err := lin.Modes()
	if err != nil {
		t.Fatal(err)
	}
	return ms
}

// swayMode is the frontal robot's heaviest mode between 3 and 7 Hz.
func swayMode(t *testing.T, ms []Mode) Mode {
	t.Helper()
	var best Mode
	for _, m := range ms {
		if m.FrequencyHz > 3 && m.FrequencyHz < 7 && m.Weight > best.Weight {
			best = m
		}
	}
	if best.Weight == 0 {
		t.Fatalf("no sway mode between 3 and 7 Hz:\n%s", Table(ms, 0))
	}
	return best
}

func legGains(t *testing.T, base *rig.Rig, kp float64) *rig.Rig {
	t.Helper()
	v, err := base.Variant([]string{"leg_angle_left.kp", "leg_angle_right.kp"}, []float64{kp, kp})
	if err != nil {
		t.Fatal(err)
	}
	return v
}

func TestBuiltinRobotsThatSettleHaveNoGrowingMode(t *testing.T) {
	// Settling is judged on the simulation alone: 30 s after the kick the
	// tilt has stayed within 0.02 deg of where it was 5 s after it (common
	// practice for "stands still"), so no mode grows that the kick
	// reached. Then no linearised mode may have negative damping.
	for _, name := range []string{"frontal", "sagittal", "pendulum"} {
		r, err := rig.Load("builtin:"+name, "", "")
		if err != nil {
			t.Fatal(err)
		}
		times, tilt := kicked(t, r, 35)
		ref, worst := math.NaN(), 0.0
		for i := range times {
			if times[i] >= 5 && math.IsNaN(ref) {
				ref = tilt[i]
			}
			if times[i] >= 5 {
				worst = math.Max(worst, math.Abs(tilt[i]-ref))
			}
		}
		settles := worst < 0.02*math.Pi/180
		ms := linearised(t, r)
		t.Logf("%s: after the kick the tilt strays %.4f deg from 5 s to 35 s; linearised modes:\n%s", name, worst*180/math.Pi, Table(ms, 0))
		if !settles {
			t.Errorf("%s does not settle after a kick (its tilt strays %.3f deg)", name, worst*180/math.Pi)
			continue
		}
		for _, m := range ms {
			if m.Damping < 0 {
				t.Errorf("%s settles, yet a linearised mode has negative damping: %.3f Hz, zeta %.3f", name, m.FrequencyHz, m.Damping)
			}
		}
	}
}

func TestLinearisedGrowthIsTheSimulatedGrowth(t *testing.T) {
	// The rates themselves: the sagittal robot given integral action on
	// its torso tilt creeps away slowly, which the linearised loop shows as
	// a growing real mode; the frontal robot's sway mode dies away at the
	// demo's leg gains and grows at twice them. Each simulated rate must
	// be the eigenvalue's real part to within 15 % (the kick, 0.002 N*s/kg,
	// is small but not zero, and the envelope's fit has the other modes in
	// it).
	sag, err := rig.Load("builtin:sagittal", "", "")
	if err != nil {
		t.Fatal(err)
	}
	creeping, err := sag.Variant([]string{"body_loop.ki"}, []float64{0.2})
	if err != nil {
		t.Fatal(err)
	}
	var creep Mode
	for _, m := range linearised(t, creeping) {
		if m.Imag == 0 && m.Real > creep.Real {
			creep = m
		}
	}
	if !(creep.Real > 0) {
		t.Fatalf("no growing real mode in the sagittal robot with ki 0.2")
	}
	times, tilt := kicked(t, creeping, 60)
	// A real mode: once the kick's oscillations have died, the tilt's rate
	// (over whole seconds, to pass over what is left of them) grows as
	// exp(s t) by itself, whatever the level it creeps from.
	var ts, logs []float64
	dt := times[1] - times[0]
	second := int(math.Round(1 / dt))
	for i := range times {
		if times[i] >= 20 && i+second < len(times) {
			ts, logs = append(ts, times[i]), append(logs, math.Log(math.Abs(tilt[i+second]-tilt[i])))
		}
	}
	_, simRate := stat.LinearRegression(ts, logs, nil, false)
	t.Logf("sagittal, ki 0.2: linearised real mode %.4f 1/s, simulated creep %.4f 1/s", creep.Real, simRate)
	if math.Abs(simRate-creep.Real) > 0.15*creep.Real {
		t.Errorf("sagittal creep: simulated %.4f 1/s, linearised %.4f 1/s", simRate, creep.Real)
	}

	base, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		t.Fatal(err)
	}
	for _, kp := range []float64{2, 4} {
		v := legGains(t, base, kp)
		sway := swayMode(t, linearised(t, v))
		times, tilt := kicked(t, v, 3)
		simRate := growth(times, tilt, sway.Imag/(2*math.Pi), 0.5, 2.5)
		t.Logf("frontal, leg kp %g: sway mode %.3f Hz, Re s %.3f 1/s; simulated envelope %.3f 1/s", kp, sway.FrequencyHz, sway.Real, simRate)
		if math.Abs(simRate-sway.Real) > 0.15*math.Abs(sway.Real) {
			t.Errorf("frontal, leg kp %g: simulated %.3f 1/s, linearised %.3f 1/s", kp, simRate, sway.Real)
		}
	}
}

func TestSwayDampingCrossesZeroWhereTheOscillationStartsToGrow(t *testing.T) {
	// Raising the frontal robot's leg-angle gains takes the sway mode's
	// damping through zero (a Hopf bifurcation; Strogatz, Nonlinear
	// Dynamics and Chaos, ch. 8). The gain where the linearised damping
	// crosses zero, found by bisection, must be where the simulated
	// oscillation turns from dying to growing: dying at 10 % below it,
	// growing at 10 % above.
	base, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		t.Fatal(err)
	}
	damping := func(kp float64) Mode { return swayMode(t, linearised(t, legGains(t, base, kp))) }
	lo, hi := 2.0, 4.0
	if !(damping(lo).Damping > 0) || !(damping(hi).Damping < 0) {
		t.Fatalf("the sway mode's damping does not change sign between leg kp %g and %g", lo, hi)
	}
	for hi-lo > 0.02 {
		if mid := (lo + hi) / 2; damping(mid).Damping > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	edge := (lo + hi) / 2
	for _, kp := range []float64{0.9 * edge, 1.1 * edge} {
		v := legGains(t, base, kp)
		sway := damping(kp)
		times, tilt := kicked(t, v, 4)
		simRate := growth(times, tilt, sway.Imag/(2*math.Pi), 0.5, 3.5)
		t.Logf("leg kp %.3f (edge %.3f): sway %.3f Hz, zeta %.4f; simulated envelope %.3f 1/s", kp, edge, sway.FrequencyHz, sway.Damping, simRate)
		if grows := simRate > 0; grows != (kp > edge) {
			t.Errorf("leg kp %.3f, the linearised edge at %.3f: the simulated oscillation's rate is %.3f 1/s", kp, edge, simRate)
		}
	}
}
