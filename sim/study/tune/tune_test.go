package tune

import (
	"context"
	"math"
	"testing"

	"teeter/sim"
	"teeter/sim/rig"
)

func TestTuneFindsTheBestGainOfAnIntegrator(t *testing.T) {
	// testdata/integrator.yaml: from command to arm angle the loop is w0/s
	// (w0 = pi rad/s); the arm is held at theta0 = 3 deg until the setpoint
	// steps to 0 at 0.5 s, and a P gain kp brings it back as
	// theta0 exp(-kp w0 t), the command staying below 1.
	// For that curve ITAE = integral of t theta0 exp(-a t) = theta0/a^2
	// with a = kp w0, and the effort, the integral of u^2 = (kp theta)^2,
	// is kp theta0^2/(2 w0). The cost theta0/(kp w0)^2 + w kp theta0^2/(2 w0)
	// is least where its derivative is 0: kp^3 = 4/(w theta0 w0) (worked
	// by hand from the exponential's integrals). A shove of nothing at
	// 0.5 s starts the measurement there; it and its mirror make two equal
	// cases; before it the error, so the command, is 0. The loop's tick of delay and the sampled measurement bend the
	// curve by about 1 %, which moves the best gain by less than that.
	r, err := rig.Load("testdata/integrator.yaml", "", "")
	if err != nil {
		t.Fatal(err)
	}
	const w, w0 = 1.0, math.Pi
	theta0 := 3 * math.Pi / 180
	cost := func(kp float64) float64 {
		return 2 * (theta0/(kp*w0*kp*w0) + w*kp*theta0*theta0/(2*w0))
	}
	best := math.Cbrt(4 / (w * theta0 * w0))
	var last Progress
	res, err := Run(context.Background(), r, Spec{
		Paths: []string{"servo_loop.kp"}, Shoves: []sim.Shove{{At: 0.5}},
		Duration: 3.5, EffortWeight: w, Iterations: 40,
		Progress: func(p Progress) {
			if p.Fraction() < last.Fraction() {
				t.Errorf("progress went back from %g to %g", last.Fraction(), p.Fraction())
			}
			last = p
		},
	})
	if err != nil {
		t.Fatal(err)
	}
	if last.Fraction() != 1 {
		t.Errorf("the tuning ended at %g of its progress, not 1", last.Fraction())
	}
	t.Logf("kp %.4g -> %.4g (theory %.4g), cost %.4g -> %.4g (theory %.4g at best)",
		res.Start[0], res.Best[0], best, res.StartCost, res.BestCost, cost(best))
	if math.Abs(res.Best[0]-best)/best > 0.03 {
		t.Errorf("tuned kp %g, want %g within 3 %%", res.Best[0], best)
	}
	if math.Abs(res.StartCost-cost(1))/cost(1) > 0.03 {
		t.Errorf("cost at kp 1: %g, want %g within 3 %%", res.StartCost, cost(1))
	}
	if math.Abs(res.BestCost-cost(best))/cost(best) > 0.03 {
		t.Errorf("tuned cost %g, want the least cost %g within 3 %%", res.BestCost, cost(best))
	}
}
