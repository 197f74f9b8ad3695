package fit

import (
	"context"
	"testing"

	"teeter/models"
	"teeter/sim"
)

// BenchmarkFrontalFit4 times the fit of 4 parameters of the frontal robot
// to a 20 s log of it shoved left and right (aim: under 60 s on 2 cores),
// from 40-100 % off.
func BenchmarkFrontalFit4(b *testing.B) {
	start := frontal(b)
	if err := models.SetParam(start.Robot, "actuators.backlash", 0.3e-3); err != nil {
		b.Fatal(err)
	}
	var shoves []sim.Shove
	for at := 1.0; at < 20; at += 2 {
		shoves = append(shoves, sim.Shove{At: at, Impulse: models.Vec2{X: 1}})
		shoves = append(shoves, sim.Shove{At: at + 1, Impulse: models.Vec2{X: -1}})
	}
	hidden := map[string]float64{"actuators.backlash": 0.5e-3, "feet.pad_stiffness": 3e4,
		"actuators.no_load_speed": 14e-3, "actuators.time_constant": 35e-3}
	l := synthetic(b, start, hidden, 20, shoves, 21)
	spec := Spec{Log: l, Shoves: shoves, Paths: []string{"actuators.backlash", "feet.pad_stiffness", "actuators.no_load_speed", "actuators.time_constant"}}
	evals := 0
	for b.Loop() {
		res, err := Run(context.Background(), start, spec)
		if err != nil {
			b.Fatal(err)
		}
		evals = res.Evaluations
		for _, p := range res.Params {
			b.Logf("%s: %.4g (hidden %.4g)", p.Path, p.Estimate, hidden[p.Path])
		}
	}
	b.ReportMetric(float64(evals), "replays")
}
