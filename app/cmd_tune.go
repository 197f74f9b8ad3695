package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"

	"teeter/control"
	"teeter/sim/study"
)

func init() {
	commands = append(commands, command{"tune", "tune gains by Nelder-Mead over shoves and robot variants, or run a relay test", cmdTune})
}

func cmdTune(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("tune", stderr)
	rf := addRigFlags(fs, false)
	start := fs.String("start", "", "gain set file to start from (default: the controller's own values)")
	paths := fs.String("gains", "", "gains to tune, comma separated, e.g. body_loop.kp,body_loop.kd")
	var shoves multiFlag
	fs.Var(&shoves, "shove", "a shove to tune against, also tried mirrored (repeatable)")
	fs.Var(&shoves, "shoves", "same as --shove")
	robust := fs.Int("robust", 0, "also tune over this many random robot variants (backlash, ballast, battery)")
	iterations := fs.Int("iterations", 40, "Nelder-Mead iterations")
	durText := fs.String("duration", "", "simulated time per run (default: 3 s after the last shove)")
	effort := fs.Float64("effort-weight", 0.01, "weight of control effort against tilt ITAE in the cost")
	out := fs.String("out", "", "write the tuned gain set here (.yaml or .json)")
	relay := fs.String("relay", "", "instead of tuning, run a relay test on this PID block")
	amplitude := fs.Float64("amplitude", 0, "relay amplitude in the block's output units (default: a quarter of its output range)")
	workers := fs.Int("workers", 0, "runs in parallel (default: every core)")
	seed := fs.Uint64("seed", 1, "seed for noise and for the robot variants")
	asJSON := fs.Bool("json", false, "print the result as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	rig, err := study.LoadRig(*rf.model, *rf.controller, *start)
	if err != nil {
		return err
	}
	if *relay != "" {
		spec := study.RelaySpec{Block: *relay, Amplitude: *amplitude, Seed: *seed}
		if *durText != "" {
			if spec.Duration, err = parseDuration(*durText); err != nil {
				return err
			}
		}
		res, err := rig.RelayTest(spec)
		if err != nil {
			return err
		}
		if *asJSON {
			return json.NewEncoder(stdout).Encode(res)
		}
		fmt.Fprintf(stdout, "relay test on %s: relay +/-%.4g, error amplitude %.4g over %d cycles\n", res.Block, res.Amplitude, res.ErrorAmp, res.Cycles)
		fmt.Fprintf(stdout, "ultimate gain Ku %.4g, ultimate period Pu %.4g s\n", res.Ku, res.Period)
		fmt.Fprintf(stdout, "%-22s %10s %10s %10s\n", "rule", "kp", "ki [1/s]", "kd [s]")
		for _, g := range res.Rules {
			fmt.Fprintf(stdout, "%-22s %10.4g %10.4g %10.4g\n", g.Rule, g.Kp, g.Ki, g.Kd)
		}
		return nil
	}
	if *paths == "" {
		return usageError{errors.New("give the gains to tune with --gains, or a block with --relay")}
	}
	spec := study.TuneSpec{Paths: strings.Split(*paths, ","), Robust: *robust, Iterations: *iterations,
		EffortWeight: *effort, Workers: *workers, Seed: *seed}
	if spec.Shoves, err = parseShoves(shoves); err != nil {
		return err
	}
	if len(spec.Shoves) == 0 {
		return usageError{errors.New("give at least one --shove to tune against, e.g. at=0.5s,impulse=2N*s,dir=left")}
	}
	if *durText != "" {
		if spec.Duration, err = parseDuration(*durText); err != nil {
			return err
		}
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	bar := newProgress(stderr, "tune")
	total := (*iterations + 1) * (len(spec.Paths) + 2)
	spec.Progress = func(p study.TuneProgress) {
		bar.describe(fmt.Sprintf("tune: best cost %.4g", p.Best))
		bar.update(min(p.Evaluation, total), total)
	}
	res, err := rig.Tune(ctx, spec)
	bar.finish()
	if res == nil {
		return err
	}
	if *out != "" {
		if werr := control.WriteGains(*out, res.Gains); werr != nil {
			return werr
		}
	}
	if *asJSON {
		if jerr := json.NewEncoder(stdout).Encode(res); jerr != nil {
			return jerr
		}
	} else {
		fmt.Fprintf(stdout, "tuned %d gains over %d cases in %d evaluations (%s): cost %.4g -> %.4g\n",
			len(res.Paths), res.Cases, res.Evaluations, res.Status, res.StartCost, res.BestCost)
		for i, p := range res.Paths {
			fmt.Fprintf(stdout, "  %-28s %10.4g -> %10.4g\n", p, res.Start[i], res.Best[i])
		}
		if *out != "" {
			fmt.Fprintf(stdout, "gain set: %s\n", *out)
		}
	}
	if err != nil {
		return fmt.Errorf("stopped early, best so far kept: %v", err)
	}
	return nil
}
