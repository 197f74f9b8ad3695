package tune

import (
	"context"
	"testing"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// BenchmarkRobustTune times a tune of 6 gains over 8 cases (2 shoves, both
// ways, nominal robot and one variant) of short runs (aim: at most 2 min).
func BenchmarkRobustTune(b *testing.B) {
	r, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	spec := Spec{
		Paths:  []string{"body_loop.kp", "body_loop.ki", "body_loop.kd", "leg_angle_left.kp", "leg_angle_right.kp", "hip_left_loop.kp"},
		Shoves: []sim.Shove{{At: 0.3, Impulse: models.Vec2{X: 1}}, {At: 0.3, Impulse: models.Vec2{X: 2}}},
		Robust: 1, Duration: 1.5, Iterations: 20,
	}
	evals := 0
	for b.Loop() {
		res, err := Run(context.Background(), r, spec)
		if err != nil {
			b.Fatal(err)
		}
		if res.Cases != 8 {
			b.Fatalf("%d cases", res.Cases)
		}
		evals = res.Evaluations
	}
	b.ReportMetric(float64(evals), "evaluations")
}
