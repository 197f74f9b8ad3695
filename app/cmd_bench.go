package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"

	"teeter/sim/rig"
	"teeter/sim/study/bench"
)

func init() {
	commands = append(commands, command{"bench", "measure simulation speed, sweep scaling and margin search time", cmdBench})
}

func cmdBench(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("bench", stderr)
	model := fs.String("model", "builtin:frontal", "robot: builtin:NAME or a robot file")
	runs := fs.Int("runs", 40, "points in the sweep timed on one and on two workers")
	asJSON := fs.Bool("json", false, "print the measurements as JSON")
	physicsRate := fs.String("physics-rate", "", physicsRateUsage)
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	rate, err := parseRate("physics-rate", *physicsRate)
	if err != nil {
		return err
	}
	if *runs < 2 {
		return usageError{fmt.Errorf("--runs %d: want at least 2", *runs)}
	}
	r, err := rig.Load(*model, "", "")
	if err != nil {
		return err
	}
	r.PhysicsRate = rate
	rep, err := bench.Measure(context.Background(), r, *runs)
	if err != nil {
		return err
	}
	if *asJSON {
		return json.NewEncoder(stdout).Encode(rep)
	}
	fmt.Fprintf(stdout, "robot %s\n", rep.Robot)
	fmt.Fprintf(stdout, "  one run:      %.0f steps/s (%.0fx real time)\n", rep.StepsPerSecond, rep.RealtimeFactor)
	fmt.Fprintf(stdout, "  sweep of %d:  %.2f s on 1 worker, %.2f s on 2 (speed-up %.2f)\n", rep.SweepRuns, rep.Sweep1, rep.Sweep2, rep.SweepSpeedup)
	fmt.Fprintf(stdout, "  margin:       %.2f s for left and right (%d runs)\n", rep.MarginSeconds, rep.MarginRuns)
	return nil
}
