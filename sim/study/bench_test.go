package study

import (
	"context"
	"testing"
	"time"

	"teeter/models"
	"teeter/sim"
)

// BenchmarkSweepScaling times a sweep of 40 short runs on one and on two
// workers and reports the throughput ratio (aim: at least 1.8 on a quiet
// machine with two free cores).
func BenchmarkSweepScaling(b *testing.B) {
	rig, err := LoadRig("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	spec := SweepSpec{Axes: []Axis{{Path: "actuators.backlash", From: 0, To: 0.002, Steps: 40}}, Metrics: []string{"peak_tilt"},
		Duration: 1, Shoves: []sim.Shove{{At: 0.3, Impulse: models.Vec2{X: 0.5}}}}
	var t1, t2 time.Duration
	for b.Loop() {
		for _, w := range []int{1, 2} {
			spec.Workers = w
			start := time.Now()
			if _, err := rig.Sweep(context.Background(), spec); err != nil {
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

// BenchmarkMarginFrontal times a left and right recovery-margin search of
// the frontal demo (aim: at most 3 s).
func BenchmarkMarginFrontal(b *testing.B) {
	rig, err := LoadRig("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	runs := 0
	for b.Loop() {
		res, err := rig.Margin(context.Background(), MarginSpec{Dirs: []string{"left", "right"}})
		if err != nil {
			b.Fatal(err)
		}
		runs = res[0].Runs + res[1].Runs
	}
	b.ReportMetric(float64(runs), "runs")
}

// BenchmarkRobustTune times a tune of 6 gains over 8 cases (2 shoves, both
// ways, nominal robot and one variant) of short runs (aim: at most 2 min).
func BenchmarkRobustTune(b *testing.B) {
	rig, err := LoadRig("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	spec := TuneSpec{
		Paths:  []string{"body_loop.kp", "body_loop.ki", "body_loop.kd", "leg_angle_left.kp", "leg_angle_right.kp", "hip_left_loop.kp"},
		Shoves: []sim.Shove{{At: 0.3, Impulse: models.Vec2{X: 1}}, {At: 0.3, Impulse: models.Vec2{X: 2}}},
		Robust: 1, Duration: 1.5, Iterations: 20,
	}
	evals := 0
	for b.Loop() {
		res, err := rig.Tune(context.Background(), spec)
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

// BenchmarkStep measures physics steps per second of the frontal demo.
func BenchmarkStep(b *testing.B) {
	rig, err := LoadRig("builtin:frontal", "", "")
	if err != nil {
		b.Fatal(err)
	}
	p, _, err := rig.Build(sim.Options{RecordCapacity: 1000})
	if err != nil {
		b.Fatal(err)
	}
	start := time.Now()
	n := 0
	for b.Loop() {
		if err := p.Step(); err != nil {
			b.Fatal(err)
		}
		n++
	}
	b.ReportMetric(float64(n)/time.Since(start).Seconds(), "steps/s")
}
