package main

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/signal"
	"strings"

	"teeter/models"
	"teeter/sim/study/fit"
)

func init() {
	commands = append(commands, command{"fit", "fit robot parameters to a log recorded on the robot", cmdFit})
}

func cmdFit(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("fit", stderr)
	logFile := fs.String("log", "", "the log: CSV with a time column and columns named like teeter run --csv writes")
	paths := fs.String("param", "", "parameters to fit, comma separated, e.g. actuators.backlash,feet.pad_stiffness")
	signals := fs.String("signals", "", "log columns to compare, comma separated (default: every sensor channel in the log)")
	fromText := fs.String("from", "", "compare from this time after the log's first row (default: the start)")
	toText := fs.String("to", "", "compare up to this time after the log's first row (default: the end)")
	var shoves multiFlag
	fs.Var(&shoves, "shove", "a shove given while logging, timed from the log's first row (repeatable)")
	out := fs.String("out", "", "write the fitted robot file here")
	plotFile := fs.String("plot", "", "write the overlay of logged and simulated signals here (.png)")
	asJSON := fs.Bool("json", false, "print the result as one JSON object")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	if *logFile == "" || *paths == "" {
		return usageError{errors.New("give the log with --log and the parameters with --param")}
	}
	spec := fit.Spec{Paths: strings.Split(*paths, ",")}
	if *signals != "" {
		spec.Signals = strings.Split(*signals, ",")
	}
	var err error
	if *fromText != "" {
		if spec.From, err = parseDuration(*fromText); err != nil {
			return err
		}
	}
	if *toText != "" {
		if spec.To, err = parseDuration(*toText); err != nil {
			return err
		}
	}
	if spec.Shoves, err = parseShoves(shoves); err != nil {
		return err
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	data, err := os.ReadFile(*logFile)
	if err != nil {
		return err
	}
	if spec.Log, err = fit.ReadLogFor(*logFile, data, r); err != nil {
		return err
	}
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt)
	defer stop()
	bar := newProgress(stderr, "fit")
	spec.Progress = func(p fit.Progress) {
		bar.describe(fmt.Sprintf("fit: %d replays, best cost %.4g", p.Evaluations, p.Best))
	}
	res, err := fit.Run(ctx, r, spec)
	bar.finish()
	if res == nil {
		return err
	}
	if *out != "" {
		if werr := models.SaveFile(*out, res.Robot); werr != nil {
			return werr
		}
	}
	if *plotFile != "" {
		if werr := fit.Overlay(res, *plotFile); werr != nil {
			return werr
		}
	}
	if perr := printFit(stdout, res, *out, *plotFile, *asJSON); perr != nil {
		return perr
	}
	if err != nil {
		return fmt.Errorf("stopped early: %v", err)
	}
	return nil
}

// fitJSON is the result as one object; an uncertainty the log does not
// give is null.
type fitJSON struct {
	Params       map[string]float64   `json:"params"`
	Uncertainty  map[string]*float64  `json:"uncertainty"`
	Identifiable map[string]bool      `json:"identifiable"`
	Start        map[string]float64   `json:"start"`
	Estimate     map[string]float64   `json:"estimate"`
	Notes        map[string]string    `json:"notes,omitempty"`
	Signals      map[string]fitSignal `json:"signals"`
	CostBefore   float64              `json:"cost_before"`
	CostAfter    float64              `json:"cost_after"`
	ReducedChi2  float64              `json:"reduced_chi_square"`
	Poor         string               `json:"uncertainties_not_valid,omitempty"`
	Rows         int                  `json:"rows"`
	Evaluations  int                  `json:"evaluations"`
	Status       string               `json:"status"`
	Held         []string             `json:"actuators_without_commands,omitempty"`
}

type fitSignal struct {
	Unit      string  `json:"unit"`
	Noise     float64 `json:"noise"`
	RMSBefore float64 `json:"rms_before"`
	RMSAfter  float64 `json:"rms_after"`
}

func printFit(stdout io.Writer, res *fit.Result, out, plotFile string, asJSON bool) error {
	if asJSON {
		j := fitJSON{Params: map[string]float64{}, Uncertainty: map[string]*float64{}, Identifiable: map[string]bool{},
			Start: map[string]float64{}, Estimate: map[string]float64{}, Notes: map[string]string{}, Signals: map[string]fitSignal{},
			CostBefore: res.CostBefore, CostAfter: res.CostAfter, ReducedChi2: res.ReducedChiSquare, Poor: res.Poor, Rows: res.Rows, Evaluations: res.Evaluations, Status: res.Status, Held: res.Missing}
		for _, p := range res.Params {
			j.Params[p.Path], j.Identifiable[p.Path], j.Start[p.Path], j.Estimate[p.Path] = p.Value, p.Identifiable, p.Start, p.Estimate
			j.Uncertainty[p.Path] = nil
			if !math.IsInf(p.Uncertainty, 0) && !math.IsNaN(p.Uncertainty) {
				u := p.Uncertainty
				j.Uncertainty[p.Path] = &u
			}
			if p.Note != "" {
				j.Notes[p.Path] = p.Note
			}
		}
		for _, s := range res.Signals {
			j.Signals[s.Name] = fitSignal{s.Unit, s.Noise, s.RMSBefore, s.RMSAfter}
		}
		return json.NewEncoder(stdout).Encode(j)
	}
	fmt.Fprintf(stdout, "fitted %d parameters to %d rows in %d replays (%s): cost %.4g -> %.4g, %.3g per degree of freedom\n",
		len(res.Params), res.Rows, res.Evaluations, res.Status, res.CostBefore, res.CostAfter, res.ReducedChiSquare)
	if res.Poor != "" {
		fmt.Fprintf(stdout, "uncertainties not valid: %s\n", res.Poor)
	}
	for _, p := range res.Params {
		switch {
		case p.Identifiable && math.IsNaN(p.Uncertainty):
			fmt.Fprintf(stdout, "  %-34s %12.5g -> %12.5g +- (not valid)\n", p.Path, p.Start, p.Value)
		case p.Identifiable:
			fmt.Fprintf(stdout, "  %-34s %12.5g -> %12.5g +- %.2g\n", p.Path, p.Start, p.Value, p.Uncertainty)
		default:
			fmt.Fprintf(stdout, "  %-34s %12.5g    not identifiable (%s); kept\n", p.Path, p.Start, p.Note)
		}
		if p.Identifiable && p.Note != "" {
			fmt.Fprintf(stdout, "  %-34s %s\n", "", p.Note)
		}
	}
	fmt.Fprintln(stdout, "RMS error per signal (noise, before -> after):")
	for _, s := range res.Signals {
		fmt.Fprintf(stdout, "  %-28s %10.4g %10.4g -> %10.4g %s\n", s.Name, s.Noise, s.RMSBefore, s.RMSAfter, s.Unit)
	}
	if len(res.Missing) > 0 {
		fmt.Fprintf(stdout, "no commands in the log for %s: held at 0\n", strings.Join(res.Missing, ", "))
	}
	if out != "" {
		fmt.Fprintf(stdout, "fitted robot: %s (comments of the input are not kept)\n", out)
	}
	if plotFile != "" {
		fmt.Fprintf(stdout, "overlay: %s\n", plotFile)
	}
	return nil
}
