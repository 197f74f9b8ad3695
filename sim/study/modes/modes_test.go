package modes

import (
	"math"
	"testing"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/metric"
)

// dominant is the mode of largest weight.
func dominant(modes []Mode) Mode {
	best := modes[0]
	for _, m := range modes {
		if m.Weight > best.Weight {
			best = m
		}
	}
	return best
}

func TestEraMassSpringDamper(t *testing.T) {
	// A mass-spring-damper kicked by a unit impulse: x(t) =
	// exp(-zeta wn t) sin(wd t)/(m wd), with wn = sqrt(k/m),
	// zeta = c/(2 sqrt(k m)) and wd = wn sqrt(1-zeta^2) (Ogata, Modern
	// Control Engineering, ch. 5). Sampled position and velocity as the two
	// outputs; the realisation must give back wn and zeta.
	const m, k, c, dt = 2.0, 180.0, 3.0, 0.01
	wn := math.Sqrt(k / m)
	zeta := c / (2 * math.Sqrt(k*m))
	wd := wn * math.Sqrt(1-zeta*zeta)
	y := make([][]float64, 300)
	for i := range y {
		tt := float64(i) * dt
		e := math.Exp(-zeta * wn * tt)
		x := e * math.Sin(wd*tt) / (m * wd)
		v := e * (wd*math.Cos(wd*tt) - zeta*wn*math.Sin(wd*tt)) / (m * wd)
		y[i] = []float64{x, v}
	}
	re, err := ERA(&Responses{Outputs: []string{"x", "v"}, Kicks: []Kick{{Name: "impulse"}}, T: dt, Y: y}, 0, 1e-6)
	if err != nil {
		t.Fatal(err)
	}
	modes, err := re.Modes()
	if err != nil {
		t.Fatal(err)
	}
	if len(modes) != 1 {
		t.Fatalf("want one mode, got %v", modes)
	}
	got := modes[0]
	t.Logf("identified %.4f Hz, zeta %.4f; closed form %.4f Hz, zeta %.4f", got.FrequencyHz, got.Damping, wn/(2*math.Pi), zeta)
	if math.Abs(got.FrequencyHz*2*math.Pi-wn)/wn > 1e-3 || math.Abs(got.Damping-zeta)/zeta > 1e-3 {
		t.Errorf("identified %.5f rad/s, zeta %.5f; want %.5f rad/s, zeta %.5f", got.FrequencyHz*2*math.Pi, got.Damping, wn, zeta)
	}
}

// pdPendulum is the built-in pendulum on a backdrivable torque motor at the
// ankle (torque = 20 N*m per unit command times the command), with a PD
// controller u = -a*tilt - b*rate at the physics rate, no sensor latency,
// no joint friction, and stiff, well-damped pads so that the foot stays
// put. a and b place the closed loop's roots at wn, zeta by the linearised
// inverted pendulum's characteristic equation
// I s^2 + (K b + c) s + (K a - m g d) = 0 (e.g. Ogata, ch. 3), with I the
// pole's inertia about the ankle (parallel-axis theorem), d the
// ankle-to-centre-of-mass distance, c the joint's viscous damping, g
// standard gravity and K the torque per unit command.
func pdPendulum(t *testing.T, wn, zeta float64) *rig.Rig {
	t.Helper()
	const mass, icom, d, c, g = 1.5, 0.069, 0.633, 0.02, 9.80665 // from models/builtin/pendulum.yaml
	const torque = 20.0                                          // N*m per unit command
	inertia := icom + mass*d*d
	a := (inertia*wn*wn + mass*g*d) / torque
	b := (2*zeta*wn*inertia - c) / torque
	base, err := rig.Load("builtin:pendulum", "", "")
	if err != nil {
		t.Fatal(err)
	}
	r := base.Robot.Clone()
	r.Battery = nil
	for i := range r.Joints {
		r.Joints[i].Friction = 0
	}
	act := &r.Actuators[0]
	act.Kind = models.TorqueMotor
	act.StallForce = torque
	act.TimeConstant = 0
	for i := range r.Sensors {
		r.Sensors[i].Latency = 0
		r.Sensors[i].Rate = 1000
	}
	for i := range r.Feet {
		for k := range r.Feet[i].Pads {
			r.Feet[i].Pads[k].Stiffness = 5e5
			r.Feet[i].Pads[k].Damping = 3000
		}
	}
	spec, err := control.ParseBytes("pd.yaml", []byte(`
controller:
  rate: 1000 Hz
  blocks:
    - {name: tilt, kind: sensor, channel: pole_imu.tilt}
    - {name: rate, kind: sensor, channel: pole_imu.rate}
    - {name: p, kind: gain, k: 1, input: tilt}
    - {name: d, kind: gain, k: 1, input: rate}
    - {name: u, kind: sum, signs: "--", input: [p, d]}
    - {name: drive, kind: actuator, actuator: ankle, input: u}
`))
	if err != nil {
		t.Fatal(err)
	}
	pd := &rig.Rig{Robot: r, Spec: spec, Gains: &control.GainSet{Gains: []control.Gain{{Path: "p.k", Value: a}, {Path: "d.k", Value: b}}}}
	if _, _, err := pd.Build(sim.Options{}); err != nil {
		t.Fatal(err)
	}
	return pd
}

func TestModesOfPDPendulum(t *testing.T) {
	// The PD pendulum's roots placed at 2 Hz, zeta 0.3 by the inverted
	// pendulum's characteristic equation (see pdPendulum; Ogata, ch. 3).
	wn, zeta := 2*math.Pi*2.0, 0.3
	modes, err := Identify(pdPendulum(t, wn, zeta), Options{Span: 3})
	if err != nil {
		t.Fatal(err)
	}
	checkDominant(t, "identified", modes, wn, zeta, 0.03, 0.05)
}

// checkDominant compares the dominant mode with the roots wn, zeta, within
// relative tolerances on the frequency and on zeta.
func checkDominant(t *testing.T, how string, modes []Mode, wn, zeta, freqTol, zetaTol float64) {
	t.Helper()
	got := dominant(modes)
	t.Logf("modes:\n%s", Table(modes, 0))
	t.Logf("dominant %.4f Hz, zeta %.4f; characteristic equation %.4f Hz, zeta %.4f", got.FrequencyHz, got.Damping, wn/(2*math.Pi), zeta)
	if math.Abs(got.FrequencyHz*2*math.Pi-wn)/wn > freqTol || math.Abs(got.Damping-zeta)/zeta > zetaTol {
		t.Errorf("%s %.4f Hz, zeta %.4f; want %.4f Hz, zeta %.4f", how, got.FrequencyHz, got.Damping, wn/(2*math.Pi), zeta)
	}
}

// The identified modes must show which mode a gain change moves. Raising
// the frontal demo's leg-angle gains from 2 to 4 takes the lightly damped
// sway mode near 4 Hz to the edge of instability, and the simulation,
// nonlinear and with noise, then oscillates far more: a mode that loses
// its damping grows until the nonlinearities hold it (Hopf bifurcation;
// Strogatz, Nonlinear Dynamics and Chaos, ch. 8). The frequencies are not
// compared: at these amplitudes the feet rock on their pads, which the
// linear model about the flat stance does not describe.
func TestRaisingLegGainsMovesTheSwayMode(t *testing.T) {
	if testing.Short() {
		t.Skip("several seconds of identification and simulation")
	}
	base, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		t.Fatal(err)
	}
	paths := []string{"leg_angle_left.kp", "leg_angle_right.kp"}
	amp, _ := metric.Lookup("osc_amplitude")
	sway := func(kp float64) (Mode, float64) {
		v, err := base.Variant(paths, []float64{kp, kp})
		if err != nil {
			t.Fatal(err)
		}
		modes, err := Identify(v, Options{})
		if err != nil {
			t.Fatal(err)
		}
		var best Mode
		for _, m := range modes {
			if m.FrequencyHz > 2.5 && m.FrequencyHz < 7 && m.Weight > best.Weight {
				best = m
			}
		}
		if best.Weight == 0 {
			t.Fatalf("kp %g: no mode between 2.5 and 7 Hz", kp)
		}
		o, err := v.Run(10, sim.Options{Seed: 1})
		if err != nil {
			t.Fatal(err)
		}
		return best, amp.Eval(o)
	}
	low, lowAmp := sway(2)
	high, highAmp := sway(4)
	t.Logf("kp 2: sway mode %.2f Hz, damping %.3f (weight %.0f%%), simulated oscillation %.3f deg", low.FrequencyHz, low.Damping, 100*low.Weight, lowAmp)
	t.Logf("kp 4: sway mode %.2f Hz, damping %.3f (weight %.0f%%), simulated oscillation %.3f deg", high.FrequencyHz, high.Damping, 100*high.Weight, highAmp)
	if !(high.Damping < low.Damping) || !(high.Damping < 0.05) {
		t.Errorf("the sway mode's damping went from %.3f to %.3f; want it to fall close to zero", low.Damping, high.Damping)
	}
	if !(highAmp > 5*lowAmp) {
		t.Errorf("simulated oscillation %.3f deg at kp 4 against %.3f deg at kp 2; want it to grow several times", highAmp, lowAmp)
	}
}

func TestLinearisedPDPendulum(t *testing.T) {
	// The same pendulum and characteristic equation as
	// TestModesOfPDPendulum (Ogata, ch. 3), its modes now from the
	// eigenvalues of the closed loop linearised by finite differences.
	wn, zeta := 2*math.Pi*2.0, 0.3
	lin, err := Linearise(pdPendulum(t, wn, zeta), Options{})
	if err != nil {
		t.Fatal(err)
	}
	modes, err := lin.Modes()
	if err != nil {
		t.Fatal(err)
	}
	// The loop is sampled at 1 kHz and the foot sits on stiff pads, which
	// the equation leaves out: allow 1 % on the frequency, 3 % on zeta.
	checkDominant(t, "linearised", modes, wn, zeta, 0.01, 0.03)
	for _, m := range modes {
		if m.Unstable() {
			t.Errorf("the stable PD pendulum has an unstable mode: %+v", m)
		}
	}
}

func TestCrossCheckOfPDPendulum(t *testing.T) {
	// Both methods on the PD pendulum whose roots the characteristic
	// equation places (Ogata, ch. 3; see pdPendulum): the linearised
	// dominant mode must find its identified twin, and they must agree.
	wn, zeta := 2*math.Pi*2.0, 0.3
	r := pdPendulum(t, wn, zeta)
	lin, err := Linearise(r, Options{})
	if err != nil {
		t.Fatal(err)
	}
	linear, err := lin.Modes()
	if err != nil {
		t.Fatal(err)
	}
	identified, err := Identify(r, Options{Span: 3})
	if err != nil {
		t.Fatal(err)
	}
	checked := CrossCheck(linear, identified)
	t.Logf("\n%s", CheckedTable(checked, 0))
	top := dominant(linear)
	for _, c := range checked {
		if c.Mode != top {
			continue
		}
		if !c.Agrees() {
			t.Fatalf("the dominant mode %.3f Hz, zeta %.3f found no identified twin (%v)", c.FrequencyHz, c.Damping, c.Identified)
		}
		if got := c.Identified.FrequencyHz * 2 * math.Pi; math.Abs(got-wn)/wn > 0.03 {
			t.Errorf("paired with an identified mode at %.3f rad/s; the roots are at %.3f rad/s", got, wn)
		}
		return
	}
	t.Fatal("the dominant mode is not among the checked ones")
}

func TestCrossCheckPairsByDistanceInThePlane(t *testing.T) {
	// s = -1 + 27j (|s| 27.02) against identified modes at -0.5 + 23j
	// (|ds| 4.03, 14.9 % of |s|) and -1.3 + 26.9j (|ds| 0.32, 1.2 %): the
	// nearer is the same mode. Alone, -0.5 + 21j (|ds| 6.02, 22 %) is
	// another mode; -100 is 75 % from -25. Worked by hand.
	lin := []Mode{{Real: -1, Imag: 27}, {Real: -100}}
	id := []Mode{{Real: -0.5, Imag: 23}, {Real: -1.3, Imag: 26.9}, {Real: -25}}
	got := CrossCheck(lin, id)
	if got[0].Identified == nil || *got[0].Identified != id[1] {
		t.Errorf("-1+27j paired with %v, want %v", got[0].Identified, id[1])
	}
	if got[1].Identified != nil {
		t.Errorf("-100 paired with %v, 75 %% of |s| away", got[1].Identified)
	}
	if got := CrossCheck(lin[:1], []Mode{{Real: -0.5, Imag: 21}}); got[0].Identified != nil {
		t.Errorf("-1+27j paired with %v, 22 %% of |s| away", got[0].Identified)
	}
}
