package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"strings"

	"teeter/control"
	"teeter/sim/rig"
	"teeter/sim/study/tune"
)

func init() {
	commands = append(commands, command{"tune", "tune gains by Nelder-Mead over shoves and robot variants", cmdTune})
}

func cmdTune(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("tune", stderr)
	fs.StringVar(rf.gains, "start", "", "the same as --gains: the gain set to start from")
	paths := fs.String("param", "", "gains to tune, comma separated, e.g. body_loop.kp,body_loop.kd")
	var shoves multiFlag
	fs.Var(&shoves, "shove", "a shove to tune against, also tried mirrored (repeatable)")
	fs.Var(&shoves, "shoves", "same as --shove")
	robust := fs.Int("robust", 0, "also tune over this many random robot variants (backlash, ballast, battery)")
	iterations := fs.Int("iterations", 40, "Nelder-Mead iterations")
	durText := fs.String("duration", "", "simulated time per run (default: 3 s after the last shove)")
	effort := fs.Float64("effort-weight", 0.01, "weight of control effort against tilt ITAE in the cost, rad*s")
	out := fs.String("out", "", "write the tuned gain set here (.yaml or .json)")
	workers := fs.Int("workers", 0, "runs in parallel (default: every core)")
	seed := fs.Uint64("seed", 1, "seed for noise and for the robot variants")
	asJSON := fs.Bool("json", false, "print the result as JSON")
	if relayAlias(args) {
		return cmdRelay(args, stdout, stderr)
	}
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *paths == "" {
		return usageError{errors.New("give the gains to tune with --param, e.g. --param body_loop.kp,body_loop.ki")}
	}
	spec := tune.Spec{Paths: strings.Split(*paths, ","), Robust: *robust, Iterations: *iterations,
		EffortWeight: *effort, Workers: *workers, Seed: *seed}
	var err error
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
	var res *tune.Result
	if serr := runStudy(rf, stderr, "tune", func(ctx context.Context, r *rig.Rig, bar *progress) {
		spec.Progress = func(p tune.Progress) {
			bar.describe(fmt.Sprintf("tune: best cost %.4g %s", p.Best, tune.CostUnit))
			bar.update(p.Iteration, p.Iterations)
		}
		res, err = tune.Run(ctx, r, spec)
	}); serr != nil {
		return serr
	}
	if res == nil {
		return err
	}
	if *out != "" {
		if werr := control.WriteGains(*out, res.Gains); werr != nil {
			return werr
		}
	}
	if perr := printTune(stdout, res, *out, *asJSON); perr != nil {
		return perr
	}
	if err != nil {
		return fmt.Errorf("stopped early, best so far kept: %v", err)
	}
	return nil
}

// relayAlias tells whether the arguments ask for a relay test with --relay
// NAME, the older spelling of 'teeter relay --block NAME'.
func relayAlias(args []string) bool {
	for _, a := range args {
		name, _, _ := strings.Cut(strings.TrimLeft(a, "-"), "=")
		if strings.HasPrefix(a, "-") && name == "relay" {
			return true
		}
	}
	return false
}

func printTune(stdout io.Writer, res *tune.Result, out string, asJSON bool) error {
	if asJSON {
		return json.NewEncoder(stdout).Encode(res)
	}
	fmt.Fprintf(stdout, "tuned %d gains over %d cases in %d evaluations (%s): cost %.4g -> %.4g %s\n",
		len(res.Paths), res.Cases, res.Evaluations, res.Status, res.StartCost, res.BestCost, tune.CostUnit)
	fmt.Fprintf(stdout, "cost: %s\n", res.CostMeaning)
	for i, p := range res.Paths {
		fmt.Fprintf(stdout, "  %-28s %10.4g -> %10.4g\n", p, res.Start[i], res.Best[i])
	}
	if out != "" {
		fmt.Fprintf(stdout, "gain set: %s\n", out)
	}
	return nil
}
