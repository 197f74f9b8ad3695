package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"

	"teeter/sim/study/loads"
	"teeter/sim/study/plot"
)

func init() {
	commands = append(commands, command{"loads", "peak loads on actuators and joints over a campaign of shoves, worst first", cmdLoads})
}

func cmdLoads(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("loads", stderr)
	dirs := fs.String("dir", "", "shove directions, comma separated (default: those of margin)")
	sizes := fs.Int("sizes", 4, "shoves per direction, evenly up to the margin")
	seeds := fs.Int("seeds", 2, "noise seeds the margin is found with")
	seed := fs.Uint64("seed", 0, "the first of them, and the campaign's")
	plotFile := fs.String("plot", "", "draw the shares of the limits as bars into this .png or .svg")
	asJSON := fs.Bool("json", false, "print the result as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	spec := loads.Spec{Sizes: *sizes, Seeds: *seeds, Seed: *seed}
	if *dirs != "" {
		spec.Dirs = strings.Split(*dirs, ",")
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	res, err := loads.Run(ctx, r, spec)
	if err != nil {
		return err
	}
	if *plotFile != "" {
		if err := plot.Loads(res, *plotFile); err != nil {
			return err
		}
	}
	if *asJSON {
		return json.NewEncoder(stdout).Encode(res)
	}
	fmt.Fprintf(stdout, "peak loads of %s over %d shoves (%s), worst first; a fall counts up to the touch\n", r.Robot.Name, len(res.Shoves), strings.Join(res.Shoves, ", "))
	fmt.Fprintf(stdout, "%-16s %-9s %12s %12s %12s %8s  %s\n", "part", "", "peak", "stall", "rated", "share", "in the shove")
	for _, p := range res.Parts {
		kind, stall, rated, share := "actuator", fmt.Sprintf("%.1f %s", p.Stall, p.Unit), "-", "-"
		if p.Joint {
			kind, stall = "joint", "-"
		}
		if p.Rated > 0 {
			rated = fmt.Sprintf("%.1f %s", p.Rated, p.Unit)
		}
		if p.Share > 0 {
			share = fmt.Sprintf("%.0f %%", 100*p.Share)
		}
		fmt.Fprintf(stdout, "%-16s %-9s %12s %12s %12s %8s  %s\n", p.Name, kind, fmt.Sprintf("%.1f %s", p.Peak, p.Unit), stall, rated, share, p.Shove)
	}
	return nil
}
