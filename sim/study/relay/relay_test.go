package relay

import (
	"math"
	"testing"
)

// thirdOrderLag simulates 1/(s+1)^3 by RK4 under a relay of amplitude d on
// e = -y (setpoint 0) and returns the time and error samples.
func thirdOrderLag(d, dt, duration float64) (ts, es []float64) {
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
		ts, es = append(ts, t), append(es, e)
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
	return ts, es
}

func TestRelayOnThirdOrderLag(t *testing.T) {
	// 1/(s+1)^3 has phase -180 deg at w = sqrt(3) rad/s, where its gain is
	// 1/8: ultimate gain 8, ultimate period 2 pi/sqrt(3) (standard textbook
	// example, e.g. Astrom and Hagglund, PID Controllers, 1995). The relay
	// estimate rests on the describing function, so allow 3 %.
	ts, es := thirdOrderLag(0.5, 0.001, 80)
	a, pu, cycles, err := LimitCycle(ts, es, 30)
	if err != nil {
		t.Fatal(err)
	}
	if cycles < 10 {
		t.Fatalf("only %d cycles", cycles)
	}
	ku := UltimateGain(0.5, a)
	wu := 2 * math.Pi / pu
	t.Logf("relay: Ku %.4f, wu %.4f rad/s over %d cycles", ku, wu, cycles)
	if math.Abs(ku-8)/8 > 0.03 {
		t.Errorf("Ku = %g, want 8 within 3 %%", ku)
	}
	if math.Abs(wu-math.Sqrt(3))/math.Sqrt(3) > 0.03 {
		t.Errorf("wu = %g rad/s, want sqrt(3) within 3 %%", wu)
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
