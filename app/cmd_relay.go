package main

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"

	"teeter/sim/study/relay"
)

func init() {
	commands = append(commands, command{"relay", "relay test of one PID block: ultimate gain and period, tuning rules", cmdRelay})
}

func cmdRelay(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("relay", stderr)
	block := fs.String("block", "", "the PID block the relay stands in for")
	fs.StringVar(block, "relay", "", "the same as --block (as 'teeter tune --relay' takes it)")
	amplitude := fs.Float64("amplitude", 0, "relay amplitude in the block's output units (default: a quarter of its output range, halved while the cycle is too fast)")
	hyst := fs.Float64("hysteresis", 0, "relay hysteresis in the block's error units (default: 3 standard deviations of the error while standing)")
	durText := fs.String("duration", "12s", "simulated time")
	seed := fs.Uint64("seed", 1, "seed for sensor noise")
	asJSON := fs.Bool("json", false, "print the result as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *block == "" {
		return usageError{errors.New("give the PID block to test with --block")}
	}
	spec := relay.Spec{Block: *block, Amplitude: *amplitude, Hysteresis: *hyst, Seed: *seed}
	var err error
	if spec.Duration, err = parseDuration(*durText); err != nil {
		return err
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	res, err := relay.Test(r, spec)
	if err != nil {
		return err
	}
	if *asJSON {
		return json.NewEncoder(stdout).Encode(res)
	}
	fmt.Fprintf(stdout, "relay test on %s: relay +/-%.4g with hysteresis %.4g, error amplitude %.4g over %d cycles\n",
		res.Block, res.Amplitude, res.Hysteresis, res.ErrorAmp, res.Cycles)
	fmt.Fprintf(stdout, "ultimate gain Ku %.4g, ultimate period Pu %.4g s (%.0f control ticks), at loop phase %.1f deg\n",
		res.Ku, res.Period, res.Ticks, res.Phase)
	fmt.Fprintf(stdout, "%-22s %10s %10s %10s\n", "rule", "kp", "ki [1/s]", "kd [s]")
	for _, g := range res.Rules {
		fmt.Fprintf(stdout, "%-22s %10.4g %10.4g %10.4g\n", g.Rule, g.Kp, g.Ki, g.Kd)
	}
	return nil
}
