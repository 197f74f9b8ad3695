package control

import (
	"fmt"
	"math"
	"testing"
)

// firstOrderPlant steps dy/dt = (-y + K*u)/T exactly over dt with u held,
// the zero-order-hold solution of the ODE.
func firstOrderPlant(y, u, k, tau, dt float64) float64 {
	target := k * u
	return target + (y-target)*math.Exp(-dt/tau)
}

// loopGraph is a PID wired from a sensor "y" to an actuator "u", with a
// setpoint step to r at t = 0.
func loopGraph(t *testing.T, rate, r float64, pid string) *Graph {
	t.Helper()
	return build(t, fmt.Sprintf(`
rate: %g Hz
blocks:
  - {name: y, kind: sensor, channel: plant.y}
  - {name: r, kind: step, time: 0 s, before: 0, after: %g}
  - {name: c, kind: pid, %s, input: {setpoint: r, measurement: y}}
  - {name: u, kind: actuator, actuator: drive, input: c}
`, rate, r, pid), []string{"plant.y"}, []string{"drive"})
}

func TestPICancellingThePlantPoleGivesFirstOrderLoop(t *testing.T) {
	// With Ti = kp/ki chosen as Ti = T the PI zero cancels the plant pole:
	// L(s) = kp*K/(T*s), so the closed loop is 1/(1 + s*T/(kp*K)), a first
	// order step response with time constant T/(kp*K) (Astrom and Murray,
	// Feedback Systems, 2nd ed., sec. 11.3 on pole-zero cancellation; step
	// response of a first-order system, sec. 5.3).
	const (
		K, T  = 2.0, 0.5
		kp    = 2.5
		ki    = kp / T
		rate  = 1000.0
		r     = 0.2
		tauCL = T / (kp * K)
	)
	g := loopGraph(t, rate, r, fmt.Sprintf("kp: %g, ki: %g", kp, ki))
	h := 1 / rate
	y := 0.0
	cmd := []float64{0}
	worst := 0.0
	for k := 0; k < 1000; k++ {
		now := float64(k) * h
		g.Tick(now, []float64{y}, cmd)
		want := r * (1 - math.Exp(-now/tauCL))
		worst = math.Max(worst, math.Abs(y-want))
		// The plant is simulated with ten fine steps per controller tick.
		for s := 0; s < 10; s++ {
			y = firstOrderPlant(y, cmd[0], K, T, h/10)
		}
	}
	// One tick of hold delay shifts the response by about h/2, an error of
	// r*h/(2*tauCL) = 0.001 at most; allow 1% of the step.
	if worst > 0.01*r {
		t.Fatalf("largest deviation from r*(1-exp(-t/%g)) is %g, over 1%% of the step", tauCL, worst)
	}
}

// overshoot runs PD control of a double integrator y” = u to a setpoint
// step and returns the relative overshoot.
func overshoot(t *testing.T, kp, kd float64) float64 {
	const rate, r = 4000.0, 0.004
	g := loopGraph(t, rate, r, fmt.Sprintf("kp: %g, kd: %g", kp, kd))
	h := 1 / rate
	y, v, peak := 0.0, 0.0, 0.0
	cmd := []float64{0}
	for k := 0; k < int(3*rate); k++ {
		g.Tick(float64(k)*h, []float64{y}, cmd)
		u := cmd[0]
		y += v*h + u*h*h/2
		v += u * h
		peak = math.Max(peak, y)
	}
	return (peak - r) / r
}

func TestPDOnDoubleIntegratorOvershoot(t *testing.T) {
	// y'' = kp*(r - y) - kd*y' is y'' + 2*zeta*wn*y' + wn^2*y = wn^2*r with
	// wn = sqrt(kp), zeta = kd/(2*sqrt(kp)); with the derivative on the
	// measurement there is no zero, and the peak overshoot is
	// Mp = exp(-pi*zeta/sqrt(1-zeta^2)) (Ogata, Modern Control Engineering,
	// 5th ed., eq. 5-21).
	const kp = 100.0
	for _, zeta := range []float64{0.2, 0.5, 0.7} {
		kd := 2 * zeta * math.Sqrt(kp)
		want := math.Exp(-math.Pi * zeta / math.Sqrt(1-zeta*zeta))
		got := overshoot(t, kp, kd)
		if math.Abs(got-want) > 0.01 {
			t.Errorf("zeta %g: overshoot %.4f, want %.4f", zeta, got, want)
		}
	}
}

// windupRun drives a first-order plant into saturation with a large step and
// returns the overshoot and the time after which the output stays within 2%
// of the setpoint.
func windupRun(t *testing.T, mode string) (over, settle float64) {
	const rate, r, K, T = 1000.0, 0.9, 1.0, 1.0
	opt := ""
	if mode != "" {
		opt = ", anti_windup: " + mode
	}
	g := loopGraph(t, rate, r, "kp: 2, ki: 6, limits: [-1, 1]"+opt)
	h := 1 / rate
	y, peak := 0.0, 0.0
	cmd := []float64{0}
	for k := 0; k < int(20*rate); k++ {
		now := float64(k) * h
		g.Tick(now, []float64{y}, cmd)
		y = firstOrderPlant(y, cmd[0], K, T, h)
		peak = math.Max(peak, y)
		if math.Abs(y-r) > 0.02*r {
			settle = now + h
		}
	}
	return (peak - r) / r, settle
}

func TestAntiWindupRecoversFaster(t *testing.T) {
	// Without anti-windup the integral grows while the actuator is
	// saturated and has to be unwound by an overshoot; conditional
	// integration and back-calculation both prevent that, giving less
	// overshoot and faster settling (Astrom and Hagglund, Advanced PID
	// Control, 2006, sec. 3.5, figs. 3.22-3.26).
	overNone, settleNone := windupRun(t, "none")
	if overNone < 0.05 {
		t.Fatalf("the case without anti-windup overshoots only %.3f; the test would not show windup", overNone)
	}
	for _, mode := range []string{"conditional", "back_calculation"} {
		over, settle := windupRun(t, mode)
		if over >= overNone/2 {
			t.Errorf("%s: overshoot %.3f, not under half of %.3f without anti-windup", mode, over, overNone)
		}
		if settle >= settleNone {
			t.Errorf("%s: settles in %.2f s, not faster than %.2f s without anti-windup", mode, settle, settleNone)
		}
	}
	// The default with limits is conditional integration.
	over, _ := windupRun(t, "")
	overCond, _ := windupRun(t, "conditional")
	if over != overCond {
		t.Errorf("default anti-windup overshoot %g differs from conditional %g", over, overCond)
	}
}

func TestBumplessGainChange(t *testing.T) {
	// Changing kp or b while running must not step the output: the integral
	// takes up the difference of the proportional terms (Astrom and
	// Hagglund, Advanced PID Control, 2006, sec. 13.5, "bumpless parameter
	// changes").
	const rate = 100.0
	text := "kp: 1.5, ki: 2, kd: 0.05, tf: 20 ms, b: 0.5"
	changed := loopGraph(t, rate, 1, text)
	steady := loopGraph(t, rate, 1, text)
	h := 1 / rate
	y := 0.0
	a, b := []float64{0}, []float64{0}
	for k := 0; k < 50; k++ {
		now := float64(k) * h
		if k == 30 {
			if err := changed.Set("c.kp", 4.5); err != nil {
				t.Fatal(err)
			}
			if err := changed.Set("c.b", 1); err != nil {
				t.Fatal(err)
			}
		}
		changed.Tick(now, []float64{y}, a)
		steady.Tick(now, []float64{y}, b)
		if k == 30 {
			// A plain change would move u by the change of kp*(b*r - y).
			naive := math.Abs(4.5*(1*1-y) - 1.5*(0.5*1-y))
			if naive < 0.1 {
				t.Fatalf("the change would only kick by %g; pick a case that shows a kick", naive)
			}
			if d := math.Abs(a[0] - b[0]); d > 1e-9 {
				t.Fatalf("output moved by %g at the tick kp and b changed", d)
			}
		}
		y = firstOrderPlant(y, a[0], 1, 0.5, h)
	}
	if v, _ := changed.Get("c.kp"); v != 4.5 {
		t.Fatalf("Get after Set gives %g", v)
	}
	if a[0] == b[0] {
		t.Fatalf("the new gain had no effect after the change")
	}
}

func TestDerivativeFilterStepResponse(t *testing.T) {
	// The filtered derivative of a measurement step Y is
	// D(t) = -(kd*Y/Tf)*exp(-t/Tf) (first-order filter kd*s/(Tf*s+1) on a
	// step; Astrom and Hagglund, Advanced PID Control, 2006, sec. 3.3).
	// Checked for Tf given and for Tf = Td/N with Td = kd/kp.
	const rate, Y = 10000.0, 0.3
	for _, c := range []struct {
		pid string
		kd  float64
		tf  float64
	}{
		{"kd: 0.2, tf: 40 ms", 0.2, 0.04},
		{"kp: 1, kd: 0.1, n: 5", 0.1, 0.1 / (1 * 5)},
	} {
		g := build(t, fmt.Sprintf(`
rate: %g Hz
blocks:
  - {name: y, kind: sensor, channel: m}
  - {name: c, kind: pid, %s, input: {setpoint: 0, measurement: y}}
`, rate, c.pid), []string{"m"}, nil)
		h := 1 / rate
		peak := c.kd * Y / c.tf
		worst := 0.0
		for k := 0; k < int(0.3*rate); k++ {
			y := 0.0
			if k >= 10 {
				y = Y
			}
			g.Tick(float64(k)*h, []float64{y}, nil)
			if k < 10 {
				continue
			}
			tt := float64(k-10) * h
			want := -peak * math.Exp(-tt/c.tf)
			worst = math.Max(worst, math.Abs(signal(t, g, "c.d")-want))
		}
		if worst > 0.01*peak {
			t.Errorf("%s: derivative deviates by %g from the exponential (peak %g)", c.pid, worst, peak)
		}
	}
}

func TestGainsSetBeforeTheFirstTickAreTheStartingGains(t *testing.T) {
	// A gain set applied before the controller has run is how it starts,
	// not a change while running: the first output is the new gains' own
	// P action, u = kp (b r - y) (the PID law; Astrom and Hagglund,
	// Advanced PID Control, 2006, sec. 3.5). Bumpless transfer applies
	// only to a change after an output exists.
	g := build(t, `
rate: 100 Hz
blocks:
  - {name: y, kind: sensor, channel: plant.y}
  - {name: r, kind: constant, value: 1}
  - {name: c, kind: pid, kp: 1, ki: 0, kd: 0, input: {setpoint: r, measurement: y}}
  - {name: u, kind: actuator, actuator: drive, input: c}
`, []string{"plant.y"}, []string{"drive"})
	if err := g.Set("c.kp", 0.5); err != nil {
		t.Fatal(err)
	}
	u := []float64{0}
	for k := 0; k < 3; k++ {
		g.Tick(float64(k)/100, []float64{0.2}, u)
		if want := 0.5 * (1 - 0.2); math.Abs(u[0]-want) > 1e-12 {
			t.Fatalf("tick %d: u = %g, want kp (r - y) = %g with the gain set before the start", k, u[0], want)
		}
	}
}
