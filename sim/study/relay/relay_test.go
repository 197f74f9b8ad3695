package relay

import (
	"math"
	"strings"
	"testing"

	"teeter/sim/rig"
)

// thirdOrderLag simulates 1/(s+1)^3 by RK4 under a relay of amplitude d on
// e = -y (setpoint 0) and returns the time, relay output and error samples.
func thirdOrderLag(d, dt, duration float64) (ts, us, es []float64) {
	x := [3]float64{0.1, 0, 0} // a nudge to start the cycle
	deriv := func(x [3]float64, u float64) [3]float64 {
		return [3]float64{u - x[0], x[0] - x[1], x[1] - x[2]}
	}
	for t := 0.0; t < duration; t += dt {
		e := -x[2]
		u := d
		if e < 0 {
			u = -d
		}
		ts, us, es = append(ts, t), append(us, u), append(es, e)
		k1 := deriv(x, u)
		var y [3]float64
		for i := range y {
			y[i] = x[i] + dt/2*k1[i]
		}
		k2 := deriv(y, u)
		for i := range y {
			y[i] = x[i] + dt/2*k2[i]
		}
		k3 := deriv(y, u)
		for i := range y {
			y[i] = x[i] + dt*k3[i]
		}
		k4 := deriv(y, u)
		for i := range x {
			x[i] += dt / 6 * (k1[i] + 2*k2[i] + 2*k3[i] + k4[i])
		}
	}
	return ts, us, es
}

func TestRelayOnThirdOrderLag(t *testing.T) {
	// 1/(s+1)^3 has phase -180 deg at w = sqrt(3) rad/s, where its gain is
	// 1/8: ultimate gain 8, ultimate period 2 pi/sqrt(3) (standard textbook
	// example, e.g. Astrom and Hagglund, PID Controllers, 1995). The relay
	// estimate rests on the describing function, so allow 3 %.
	ts, us, es := thirdOrderLag(0.5, 0.001, 80)
	a, pu, cycles, err := LimitCycle(ts, es, 30)
	if err != nil {
		t.Fatal(err)
	}
	if cycles < 10 {
		t.Fatalf("only %d cycles", cycles)
	}
	ku, wu := UltimateGain(0.5, a), 2*math.Pi/pu
	t.Logf("peak to peak: Ku %.4f, wu %.4f rad/s over %d cycles", ku, wu, cycles)
	if math.Abs(ku-8)/8 > 0.03 {
		t.Errorf("Ku = %g, want 8 within 3 %%", ku)
	}
	if math.Abs(wu-math.Sqrt(3))/math.Sqrt(3) > 0.03 {
		t.Errorf("wu = %g rad/s, want sqrt(3) within 3 %%", wu)
	}
	// The fundamentals of the relay's square wave (4d/pi) and of the error
	// are tied by G at the frequency the loop actually runs at, a little
	// off sqrt(3) because of the harmonics: 4d/(pi a1) = 1/|G(jw)| =
	// (1 + w^2)^(3/2), exactly but for the sampling.
	c, err := RelayCycle(ts, us, es, 30)
	if err != nil {
		t.Fatal(err)
	}
	w := 2 * math.Pi / c.Period
	ku, want := UltimateGain(0.5, c.Amplitude), math.Pow(1+w*w, 1.5)
	t.Logf("fundamental: Ku %.4f at %.4f rad/s, 1/|G| there %.4f", ku, w, want)
	if math.Abs(ku-want)/want > 0.01 {
		t.Errorf("fundamental: 4d/(pi a) = %g, want 1/|G(j%.4g)| = %g within 1 %%", ku, w, want)
	}
	if math.Abs(ku-8)/8 > 0.05 {
		t.Errorf("fundamental: Ku = %g, want 8 within 5 %%", ku)
	}
}

// servoRig is testdata/servo.yaml: from command to arm angle the loop is
// w0/(s (tau s + 1)) with w0 = pi rad/s and tau = 50 ms.
func servoRig(t *testing.T) *rig.Rig {
	t.Helper()
	r, err := rig.Load("testdata/servo.yaml", "", "")
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func TestRelayWithHysteresisOnServo(t *testing.T) {
	// Harmonic balance of G(jw) = w0/(jw (1 + jw tau)) with a relay of
	// amplitude d and hysteresis eps, whose describing function is
	// N(a) = 4d/(pi a) (sqrt(1 - (eps/a)^2) - j eps/a) (Gelb and Vander
	// Velde, Multiple-Input Describing Functions, 1968; Astrom and
	// Hagglund, PID Controllers, 1995, sec. 6.5): G = -1/N(a) gives
	//   Im: w0/(w (1 + w^2 tau^2)) = pi eps/(4d)
	//   Re: w0 tau/(1 + w^2 tau^2) = pi sqrt(a^2 - eps^2)/(4d).
	// With w0 = pi, tau = 0.05, d = 0.2, eps = 0.02 the first gives
	// w (1 + w^2/400) = 40, so w = 20 rad/s (w tau = 1); the second gives
	// sqrt(a^2 - eps^2) = 0.02, so a = 0.02 sqrt(2), and the point found is
	// |G| = pi a/(4d) = 1/9.003 at phase -135 deg (worked by hand). The
	// describing function drops the square wave's harmonics and the loop
	// has a tick or two of delay the formula leaves out, so allow 5 %.
	res, err := Test(servoRig(t), Spec{Block: "servo_loop", Amplitude: 0.2, Hysteresis: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("%+v", res)
	wantPu, wantKu := 2*math.Pi/20, 20*math.Sqrt2/math.Pi
	if math.Abs(res.Period-wantPu)/wantPu > 0.05 {
		t.Errorf("period %g s, want %g s within 5 %%", res.Period, wantPu)
	}
	if math.Abs(res.Ku-wantKu)/wantKu > 0.05 {
		t.Errorf("Ku %g, want %g within 5 %%", res.Ku, wantKu)
	}
	if math.Abs(res.Phase+135) > 3 {
		t.Errorf("phase %g deg, want -135 within 3 deg", res.Phase)
	}
}

func TestRelayChatterIsNotValid(t *testing.T) {
	// Without hysteresis the relay on w0/(s (tau s + 1)) switches as fast as
	// the loop's delay lets it; at a 50 Hz control rate that is a few ticks
	// (for a delay L << tau the period is about 2 pi sqrt(tau L); Astrom and
	// Hagglund 1995, sec. 6.5), which the test must refuse to read.
	r := servoRig(t)
	spec := *r.Spec
	spec.Rate = 50
	r.Spec = &spec
	_, err := Test(r, Spec{Block: "servo_loop", Amplitude: 0.2, Hysteresis: 1e-6})
	if err == nil || !strings.Contains(err.Error(), "not valid") {
		t.Fatalf("got %v, want a test that is not valid", err)
	}
}

func TestRelayCycleWantsASteadyCycle(t *testing.T) {
	// Switches at irregular times (half periods of 0.1 s and 0.3 s in turn)
	// are no steady cycle (common practice: a limit cycle repeats).
	var ts, us, es []float64
	u, next := 1.0, 0.1
	for i := range 20000 {
		tt := float64(i) * 0.001
		if tt >= next {
			u = -u
			next += 0.1 + 0.2*float64(int(next*10)%2)
		}
		ts, us, es = append(ts, tt), append(us, u), append(es, -u)
	}
	if _, err := RelayCycle(ts, us, es, 1); err == nil {
		t.Error("an irregular switching was read as a steady cycle")
	}
}

func TestTuningRuleTables(t *testing.T) {
	// Ziegler and Nichols (1942): PI 0.45 Ku, Pu/1.2; PID 0.6 Ku, Pu/2,
	// Pu/8. Tyreus and Luyben (1992): PI Ku/3.2, 2.2 Pu; PID Ku/2.2,
	// 2.2 Pu, Pu/6.3 (from memory, as tabulated in Luyben's process control
	// texts).
	ku, pu := 5.0, 2.0
	want := map[string][3]float64{
		"ziegler-nichols-pi":  {0.45 * 5, 2.0 / 1.2, 0},
		"ziegler-nichols-pid": {3, 1, 0.25},
		"tyreus-luyben-pi":    {5 / 3.2, 4.4, 0},
		"tyreus-luyben-pid":   {5 / 2.2, 4.4, 2 / 6.3},
	}
	rules := TuningRules(ku, pu)
	if len(rules) != len(want) {
		t.Fatalf("%d rules", len(rules))
	}
	for _, r := range rules {
		w, ok := want[r.Rule]
		if !ok {
			t.Errorf("unexpected rule %s", r.Rule)
			continue
		}
		close := func(a, b float64) bool { return math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(b)) }
		if !close(r.Kp, w[0]) || !close(r.Ti, w[1]) || !close(r.Td, w[2]) {
			t.Errorf("%s: Kp %g Ti %g Td %g, want %v", r.Rule, r.Kp, r.Ti, r.Td, w)
		}
		// The parallel form's gains follow from Kp, Ti, Td.
		if !close(r.Ki, w[0]/w[1]) || !close(r.Kd, w[0]*w[2]) {
			t.Errorf("%s: ki %g kd %g", r.Rule, r.Ki, r.Kd)
		}
	}
}
