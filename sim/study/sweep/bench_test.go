package sweep

import (
	"context"
	"testing"
	"time"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// BenchmarkSweepScaling times a sweep of 40 short runs on one and on two
// workers and reports the throughput ratio (aim: at least 1.8 on a quiet
// machine with two free cores).
func BenchmarkSweepScaling(b *testing.B) {
	r, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	spec := Spec{Axes: []Axis{{Path: "actuators.backlash", From: 0, To: 0.002, Steps: 40}}, Metrics: []string{"peak_tilt"},
		Duration: 1, Shoves: []sim.Shove{{At: 0.3, Impulse: models.Vec2{X: 0.5}}}, Seeds: 1}
	var t1, t2 time.Duration
	for b.Loop() {
		for _, w := range []int{1, 2} {
			spec.Workers = w
			start := time.Now()
			if _, err := Run(context.Background(), r, spec); err != nil {
				b.Fatal(err)
			}
			if w == 1 {
				t1 += time.Since(start)
			} else {
				t2 += time.Since(start)
			}
		}
	}
	b.ReportMetric(t1.Seconds()/t2.Seconds(), "speedup_2v1")
}
