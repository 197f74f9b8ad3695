package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"

	"teeter/models"
	"teeter/sim/study/margin"
)

func init() {
	commands = append(commands, command{"margin", "find the largest shove the robot survives, per direction", cmdMargin})
}

func cmdMargin(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("margin", stderr)
	rf := addRigFlags(fs)
	rf.addExecFlags(fs)
	at := fs.String("at", "", "link to shove (default: the robot's fall-watch link, the torso)")
	point := fs.String("point", "", "where on the link, x:y in the link frame (default: its centre of mass)")
	dirs := fs.String("dir", "", "directions, comma separated: left, right, forward, back or degrees (default: left,right or back,forward by the robot's plane)")
	var spec margin.Spec
	quantities := []struct {
		name, usage string
		kind        models.Kind
		dst         *float64
	}{
		{"tol", "precision of the answer (default 0.05N*s)", models.Impulse, &spec.Tol},
		{"max", "largest impulse tried (default 100N*s)", models.Impulse, &spec.Max},
		{"settle", "time the robot must stay up after the shove (default 3s)", models.Duration, &spec.Settle},
		{"hold", "spread the shove over this long (default at once)", models.Duration, &spec.Hold},
	}
	texts := make([]*string, len(quantities))
	for i, q := range quantities {
		texts[i] = fs.String(q.name, "", q.usage)
	}
	workers := fs.Int("workers", 0, "runs in parallel (default: every core)")
	seed := fs.Uint64("seed", 1, "seed for sensor noise")
	asJSON := fs.Bool("json", false, "print the result as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	for i, q := range quantities {
		if *texts[i] == "" {
			continue // the study's default
		}
		v, _, err := models.ParseQuantity(*texts[i], q.kind)
		if err != nil || v < 0 {
			return usageError{fmt.Errorf("--%s %q: %v", q.name, *texts[i], err)}
		}
		*q.dst = v
	}
	spec.Link, spec.Workers, spec.Seed = *at, *workers, *seed
	if *point != "" {
		p, err := parsePoint(*point)
		if err != nil {
			return err
		}
		spec.Point = &p
	}
	if *dirs != "" {
		spec.Dirs = strings.Split(*dirs, ",")
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
	spec = spec.Filled(r.Robot)
	fmt.Fprintf(stdout, "recovery margin of %s (shove at %.2f s, must stay up %.1f s after):\n", r.Robot.Name, spec.At, spec.Settle)
	for _, m := range res {
		switch {
		case m.Unpushed:
			fmt.Fprintf(stdout, "  %-8s falls without any shove\n", m.Dir)
		case m.Capped:
			fmt.Fprintf(stdout, "  %-8s survives even %.3g N*s (the --max)\n", m.Dir, m.Survived)
		default:
			fmt.Fprintf(stdout, "  %-8s %.3f N*s (falls at %.3f N*s; %d runs)\n", m.Dir, m.Survived, m.Fell, m.Runs)
		}
	}
	return nil
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
		if r.Capped || r.Unpushed {
			r.Fell = -1
		}
		out[i] = r
	}
	return out
}
