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
	"teeter/sim/study"
)

func init() {
	commands = append(commands, command{"margin", "find the largest shove the robot survives, per direction", cmdMargin})
}

func cmdMargin(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("margin", stderr)
	rf := addRigFlags(fs, true)
	at := fs.String("at", "", "link to shove (default: the robot's fall-watch link, the torso)")
	point := fs.String("point", "", "where on the link, x:y in the link frame (default: its centre of mass)")
	dirs := fs.String("dir", "", "directions, comma separated: left, right, forward, back or degrees (default: left,right or back,forward by the robot's plane)")
	tolText := fs.String("tol", "0.05N*s", "precision of the answer")
	maxText := fs.String("max", "100N*s", "largest impulse tried")
	settleText := fs.String("settle", "3s", "time the robot must stay up after the shove")
	holdText := fs.String("hold", "0s", "spread the shove over this long")
	workers := fs.Int("workers", 0, "runs in parallel (default: every core)")
	seed := fs.Uint64("seed", 1, "seed for sensor noise")
	asJSON := fs.Bool("json", false, "print the result as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	rig, err := rf.load()
	if err != nil {
		return err
	}
	spec := study.MarginSpec{Link: *at, Workers: *workers, Seed: *seed}
	quantity := func(name, text string, kind models.Kind) (float64, error) {
		v, _, err := models.ParseQuantity(text, kind)
		if err != nil || v < 0 {
			return 0, usageError{fmt.Errorf("--%s %q: %v", name, text, err)}
		}
		return v, nil
	}
	if spec.Tol, err = quantity("tol", *tolText, models.Impulse); err != nil {
		return err
	}
	if spec.Max, err = quantity("max", *maxText, models.Impulse); err != nil {
		return err
	}
	if spec.Settle, err = quantity("settle", *settleText, models.Duration); err != nil {
		return err
	}
	if spec.Hold, err = quantity("hold", *holdText, models.Duration); err != nil {
		return err
	}
	if *point != "" {
		xs, ys, ok := strings.Cut(*point, ":")
		var p models.Vec2
		var ex, ey error
		p.X, _, ex = models.ParseQuantity(xs, models.Length)
		p.Y, _, ey = models.ParseQuantity(ys, models.Length)
		if !ok || ex != nil || ey != nil {
			return usageError{fmt.Errorf("--point %q: want x:y lengths such as 0:0.2m", *point)}
		}
		spec.Point = &p
	}
	switch {
	case *dirs != "":
		spec.Dirs = strings.Split(*dirs, ",")
	case rig.Robot.Plane == models.Frontal:
		spec.Dirs = []string{"left", "right"}
	default:
		spec.Dirs = []string{"back", "forward"}
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	bar := newProgress(stderr, "margin")
	spec.Progress = bar.update
	res, err := rig.Margin(ctx, spec)
	bar.finish()
	if err != nil {
		return err
	}
	if *asJSON {
		return json.NewEncoder(stdout).Encode(jsonSafe(res))
	}
	fmt.Fprintf(stdout, "recovery margin of %s (shove at %.2f s, must stay up %.1f s after):\n", rig.Robot.Name, study.MarginShoveAt, spec.Settle)
	for _, r := range res {
		switch {
		case r.Unpushed:
			fmt.Fprintf(stdout, "  %-8s falls without any shove\n", r.Dir)
		case r.Capped:
			fmt.Fprintf(stdout, "  %-8s survives even %.3g N*s (the --max)\n", r.Dir, r.Survived)
		default:
			fmt.Fprintf(stdout, "  %-8s %.3f N*s (falls at %.3f N*s; %d runs)\n", r.Dir, r.Survived, r.Fell, r.Runs)
		}
	}
	return nil
}

// jsonSafe replaces an infinite "fell" (never fell) by -1, which JSON can
// carry.
func jsonSafe(res []study.MarginResult) []study.MarginResult {
	out := make([]study.MarginResult, len(res))
	for i, r := range res {
		if r.Capped || r.Unpushed {
			r.Fell = -1
		}
		out[i] = r
	}
	return out
}
