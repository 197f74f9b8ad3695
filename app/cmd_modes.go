package main

import (
	"encoding/json"
	"fmt"
	"io"

	"teeter/sim/study/modes"
)

func init() {
	commands = append(commands, command{"modes", "closed-loop modes of the standing robot: frequency and damping", cmdModes})
}

func cmdModes(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("modes", stderr)
	kicksOnly := fs.Bool("kicks", false, "identify the modes from kicked runs only, without linearising (the way for a controller program, whose state is out of reach)")
	spanText := fs.String("span", "4s", "response time used for the identification from kicks")
	order := fs.Int("order", 0, "model order of the identification (default: from the singular values)")
	minWeight := fs.Float64("min-weight", 0.01, "leave out modes carrying less than this share of the response")
	seed := fs.Uint64("seed", 1, "seed")
	asJSON := fs.Bool("json", false, "print every mode as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	span, err := parseDuration(*spanText)
	if err != nil {
		return err
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	opt := modes.Options{Span: span, Order: *order, Seed: *seed}
	identified, err := modes.Identify(r, opt)
	if err != nil {
		return err
	}
	if *kicksOnly || r.Program != nil {
		if *asJSON {
			return json.NewEncoder(stdout).Encode(identified)
		}
		fmt.Fprintf(stdout, "closed-loop modes of %s standing, identified from kicks (%s):\n", r.Robot.Name, modes.IdealNote)
		fmt.Fprint(stdout, modes.Table(identified, *minWeight))
		fmt.Fprintln(stdout, "a light mode, and its damping's sign, may be an artefact of the fit")
		return nil
	}
	lin, err := modes.Linearise(r, opt)
	if err != nil {
		return err
	}
	linear, err := lin.Modes()
	if err != nil {
		return err
	}
	checked := modes.CrossCheck(linear, identified)
	if *asJSON {
		return json.NewEncoder(stdout).Encode(checked)
	}
	fmt.Fprintf(stdout, "closed-loop modes of %s standing, linearised about the stand (%s):\n", r.Robot.Name, modes.IdealNote)
	fmt.Fprint(stdout, modes.CheckedTable(checked, *minWeight))
	fmt.Fprintln(stdout, "from kicks: the nearest mode identified from kicked runs of the same rig, a cross-check; weight: the mode's share of the response to a shove and a spin of each link")
	return nil
}
