package main

import (
	"encoding/json"
	"fmt"
	"io"

	"teeter/models"
	"teeter/sim"
)

func init() {
	commands = append(commands, command{"run", "run a scenario without a window and summarise it", cmdRun})
}

func cmdRun(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("run", stderr)
	rf := addRigFlags(fs, true)
	durText := fs.String("duration", "10s", "simulated time to run")
	seed := fs.Uint64("seed", 1, "seed for sensor noise")
	csvFile := fs.String("csv", "", "write every recorded signal to this CSV file")
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
	rig, err := rf.load()
	if err != nil {
		return err
	}
	plant, sum, err := rig.Run(duration, opt)
	if err != nil {
		return err
	}
	if *csvFile != "" {
		if err := models.WriteFileAtomic(*csvFile, plant.Recorder().WriteCSV); err != nil {
			return err
		}
	}
	if *asJSON {
		enc := json.NewEncoder(stdout)
		return enc.Encode(sum)
	}
	fmt.Fprintf(stdout, "robot %s, %.2f s simulated in %.2f s (%.0fx real time)\n",
		rig.Robot.Name, sum.SimSeconds, sum.WallSeconds, sum.RealtimeFactor)
	if sum.Fell {
		fmt.Fprintf(stdout, "FELL at %.3f s: %s\n", sum.FallTime, sum.FallReason)
	} else {
		fmt.Fprintln(stdout, "stayed up")
	}
	fmt.Fprintf(stdout, "torso tilt: peak %.2f deg, final %.2f deg\n", sum.PeakTilt, sum.FinalTilt)
	if *csvFile != "" {
		fmt.Fprintf(stdout, "recording: %s (%d rows)\n", *csvFile, plant.Recorder().Len())
	}
	return nil
}
