package main

import (
	"encoding/json"
	"fmt"
	"io"
	"time"

	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

func init() {
	commands = append(commands, command{"run", "run a scenario without a window and summarise it", cmdRun})
}

func cmdRun(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("run", stderr)
	rf.addExecFlags(fs)
	durText := fs.String("duration", "10s", "simulated time to run")
	seed := fs.Uint64("seed", 1, "seed for sensor noise")
	csvFile := fs.String("csv", "", "write every recorded signal to this CSV file")
	recordRate := fs.String("record-rate", "", "record a row at this rate: the physics rate or a whole fraction of it (default: a row per control tick)")
	asJSON := fs.Bool("json", false, "print the summary as one JSON object")
	var shoves multiFlag
	fs.Var(&shoves, "shove", "a shove, e.g. at=2s,impulse=3N*s,dir=left (repeatable)")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	duration, err := parseDuration(*durText)
	if err != nil {
		return err
	}
	opt := sim.Options{Seed: *seed}
	if opt.Shoves, err = parseShoves(shoves); err != nil {
		return err
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	if r.RecordRate, err = parseRate("record-rate", *recordRate); err != nil {
		return err
	}
	start := time.Now()
	// A failing controller still gives the run up to its failure: its
	// summary and recording are written before the error.
	o, runErr := r.Run(duration, opt)
	if o == nil {
		return runErr
	}
	sum := runSummary{Summary: o.Summary, WallSeconds: time.Since(start).Seconds()}
	if sum.WallSeconds > 0 {
		sum.RealtimeFactor = sum.SimSeconds / sum.WallSeconds
	}
	if *csvFile != "" {
		if err := models.WriteFileAtomic(*csvFile, o.Rec.WriteCSV); err != nil {
			return err
		}
	}
	if *asJSON {
		if err := json.NewEncoder(stdout).Encode(sum); err != nil {
			return err
		}
		return runErr
	}
	fmt.Fprintf(stdout, "robot %s, %.2f s simulated in %.2f s (%.0fx real time)\n",
		r.Robot.Name, sum.SimSeconds, sum.WallSeconds, sum.RealtimeFactor)
	if sum.Fell {
		fmt.Fprintf(stdout, "FELL at %.3f s: %s\n", sum.FallTime, sum.FallReason)
	} else if runErr == nil {
		fmt.Fprintln(stdout, "stayed up")
	}
	fmt.Fprintf(stdout, "torso tilt: peak %.2f deg, final %.2f deg\n", sum.PeakTilt, sum.FinalTilt)
	if *csvFile != "" {
		fmt.Fprintf(stdout, "recording: %s (%d rows)\n", *csvFile, o.Rec.Len())
	}
	return runErr
}

// runSummary is the run's summary with the wall-clock time it took, which
// the command measures: a study's results never depend on the clock.
type runSummary struct {
	rig.Summary
	WallSeconds    float64 `json:"wall_seconds"`
	RealtimeFactor float64 `json:"realtime_factor"`
}
