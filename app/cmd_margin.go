package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"slices"
	"strings"

	"teeter/models"
	"teeter/sim/study/margin"
)

func init() {
	commands = append(commands, command{"margin", "find the largest shove the robot survives, per direction", cmdMargin})
}

func cmdMargin(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("margin", stderr)
	rf.addExecFlags(fs)
	readSpec := addMarginFlags(fs)
	asJSON := fs.Bool("json", false, "print the result as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	spec, err := readSpec()
	if err != nil {
		return err
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	bar := newProgress(stderr, "margin")
	spec.Progress = bar.update
	res, err := margin.Find(ctx, r, spec)
	bar.finish()
	if err != nil {
		return err
	}
	if *asJSON {
		return json.NewEncoder(stdout).Encode(jsonSafe(res))
	}
	printMargin(stdout, r.Robot.Name, spec.Filled(r.Robot), res)
	return nil
}

// addMarginFlags adds the flags of the search; the function it returns
// reads them, after parsing, into a spec (the study fills what is not
// given).
func addMarginFlags(fs *flag.FlagSet) func() (margin.Spec, error) {
	at := fs.String("at", "", "link to shove (default: the robot's fall-watch link, the torso)")
	point := fs.String("point", "", "where on the link, x:y in the link frame (default: its centre of mass)")
	dirs := fs.String("dir", "", "directions, comma separated: left, right, forward, back or degrees (default: left,right or back,forward by the robot's plane)")
	var spec margin.Spec
	def := spec.Filled(&models.Robot{})
	quantities := []struct {
		name, usage string
		kind        models.Kind
		dst         *float64
	}{
		{"tol", fmt.Sprintf("precision of each seed's answer (default %gN*s)", def.Tol), models.Impulse, &spec.Tol},
		{"max", fmt.Sprintf("largest impulse tried (default %gN*s)", def.Max), models.Impulse, &spec.Max},
		{"settle", fmt.Sprintf("time the robot must stay up after the shove (default %gs)", def.Settle), models.Duration, &spec.Settle},
		{"hold", "spread the shove over this long (default at once)", models.Duration, &spec.Hold},
	}
	texts := make([]*string, len(quantities))
	for i, q := range quantities {
		texts[i] = fs.String(q.name, "", q.usage)
	}
	workers := fs.Int("workers", 0, "runs in parallel (default: every core)")
	seeds := fs.Int("seeds", def.Seeds, "noise seeds each direction is searched with")
	seed := fs.Uint64("seed", def.Seed, "the first of them")
	return func() (margin.Spec, error) {
		for i, q := range quantities {
			if *texts[i] == "" {
				continue // the study's default
			}
			v, _, err := models.ParseQuantity(*texts[i], q.kind)
			if err != nil || v < 0 {
				return spec, usageError{fmt.Errorf("--%s %q: %v", q.name, *texts[i], err)}
			}
			*q.dst = v
		}
		if *seeds < 1 {
			return spec, usageError{fmt.Errorf("--seeds %d: want at least 1", *seeds)}
		}
		spec.Link, spec.Workers, spec.Seeds, spec.Seed = *at, *workers, *seeds, *seed
		if *point != "" {
			p, err := parsePoint(*point)
			if err != nil {
				return spec, err
			}
			spec.Point = &p
		}
		if *dirs != "" {
			spec.Dirs = strings.Split(*dirs, ",")
		}
		return spec, nil
	}
}

// printMargin prints the margins found with the filled spec as a table.
func printMargin(stdout io.Writer, robot string, spec margin.Spec, res []margin.Result) {
	fmt.Fprintf(stdout, "recovery margin of %s (shove at %.2f s, must stay up %.1f s after; %d seeds from %d, each within %g N*s):\n",
		robot, spec.At, spec.Settle, spec.Seeds, spec.Seed, spec.Tol)
	fmt.Fprintf(stdout, "  %-10s %10s %10s %10s\n", "N*s", "trusted", "median", "felled")
	for _, m := range res {
		felled := fmt.Sprintf("%.3f", m.Felled)
		if math.IsInf(m.Felled, 1) {
			felled = "none"
		}
		fmt.Fprintf(stdout, "  %-10s %10.3f %10.3f %10s   (%d runs)\n", m.Dir, m.Trusted, m.Median, felled, m.Runs)
		for _, e := range m.Seeds {
			switch {
			case e.Unpushed:
				fmt.Fprintf(stdout, "  %-10s with seed %d it falls without any shove\n", "", e.Seed)
			case e.Capped:
				fmt.Fprintf(stdout, "  %-10s with seed %d it survives even %.3g N*s (the --max)\n", "", e.Seed, e.Survived)
			}
		}
	}
	fmt.Fprintln(stdout, "trusted: survived with every seed; median: over the seeds; felled: the smallest shove that felled any seed")
}

// parsePoint reads --point x:y, two lengths.
func parsePoint(text string) (models.Vec2, error) {
	xs, ys, ok := strings.Cut(text, ":")
	var p models.Vec2
	var ex, ey error
	p.X, _, ex = models.ParseQuantity(xs, models.Length)
	p.Y, _, ey = models.ParseQuantity(ys, models.Length)
	if !ok || ex != nil || ey != nil {
		return p, usageError{fmt.Errorf("--point %q: want x:y lengths such as 0:0.2m", text)}
	}
	return p, nil
}

// jsonSafe replaces an infinite "fell" (never fell) by -1, which JSON can
// carry.
func jsonSafe(res []margin.Result) []margin.Result {
	out := make([]margin.Result, len(res))
	for i, r := range res {
		r.Seeds = slices.Clone(r.Seeds)
		for k := range r.Seeds {
			if math.IsInf(r.Seeds[k].Fell, 1) {
				r.Seeds[k].Fell = -1
			}
		}
		if math.IsInf(r.Felled, 1) {
			r.Felled = -1
		}
		out[i] = r
	}
	return out
}
