// Package bench measures how fast teeter runs on this machine, for
// `teeter bench`: one run's steps per second, a sweep's scaling from one to
// two workers, and the time of a margin search.
package bench

import (
	"context"
	"errors"
	"time"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/study/margin"
	"teeter/sim/study/sweep"
)

// Report is what Measure found, for `teeter bench`.
type Report struct {
	Robot string `json:"robot"`
	// StepsPerSecond is physics steps (with controller ticks) per wall
	// second, one run on one core.
	StepsPerSecond float64 `json:"steps_per_second"`
	RealtimeFactor float64 `json:"realtime_factor"`
	// SweepRuns runs took Sweep1 seconds on one worker and Sweep2 on two;
	// SweepSpeedup is Sweep1/Sweep2 (2 is perfect).
	SweepRuns    int     `json:"sweep_runs"`
	Sweep1       float64 `json:"sweep_1_worker_s"`
	Sweep2       float64 `json:"sweep_2_workers_s"`
	SweepSpeedup float64 `json:"sweep_speedup"`
	// MarginSeconds is the wall time of a left and right margin search.
	MarginSeconds float64 `json:"margin_s"`
	MarginRuns    int     `json:"margin_runs"`
}

// Measure times a 5 s run, a sweep of runs seconds-long points on one
// and on two workers, and a margin search, on the rig.
func Measure(ctx context.Context, r *rig.Rig, runs int) (Report, error) {
	rep := Report{Robot: r.Robot.Name, SweepRuns: runs}
	p, _, err := r.Build(sim.Options{})
	if err != nil {
		return rep, err
	}
	start := time.Now()
	const d = 5.0
	if err := p.RunFor(d); err != nil && !errors.Is(err, sim.ErrFallen) {
		return rep, err
	}
	wall := time.Since(start).Seconds()
	rep.RealtimeFactor = p.Time() / wall
	rep.StepsPerSecond = p.Time() * p.PhysicsRate() / wall
	spec := sweep.Spec{Axes: []sweep.Axis{{Path: "actuators.backlash", From: 0, To: 0.002, Steps: runs}}, Metrics: []string{"peak_tilt"},
		Duration: 1, Shoves: []sim.Shove{{At: 0.3, Impulse: models.Vec2{X: 0.5}}}, Seeds: 1}
	for _, w := range []int{1, 2} {
		spec.Workers = w
		start := time.Now()
		if _, err := sweep.Run(ctx, r, spec); err != nil {
			return rep, err
		}
		if w == 1 {
			rep.Sweep1 = time.Since(start).Seconds()
		} else {
			rep.Sweep2 = time.Since(start).Seconds()
		}
	}
	rep.SweepSpeedup = rep.Sweep1 / rep.Sweep2
	start = time.Now()
	res, err := margin.Find(ctx, r, margin.Spec{})
	if err != nil {
		return rep, err
	}
	rep.MarginSeconds = time.Since(start).Seconds()
	for _, m := range res {
		rep.MarginRuns += m.Runs
	}
	return rep, nil
}
