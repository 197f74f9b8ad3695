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
	spanText := fs.String("span", "4s", "response time used for the fit")
	order := fs.Int("order", 0, "model order (default: from the singular values)")
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
	ms, err := modes.Identify(r, modes.Options{Span: span, Order: *order, Seed: *seed})
	if err != nil {
		return err
	}
	if *asJSON {
		return json.NewEncoder(stdout).Encode(ms)
	}
	fmt.Fprintf(stdout, "closed-loop modes of %s standing (identified from kicks; no noise, quantization, deadband or backlash):\n", r.Robot.Name)
	fmt.Fprint(stdout, modes.Table(ms, *minWeight))
	return nil
}
