package main

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strings"

	"teeter/models"
	"teeter/sim/study/wobble"
)

func init() {
	commands = append(commands, command{"wobble", "backlash limit cycle: describing-function prediction beside the simulation, each screw alone and all together", cmdWobble})
}

func cmdWobble(args []string, stdout, stderr io.Writer) error {
	fs, rf := newSimFlags("wobble", stderr)
	backlashText := fs.String("backlash", "0.4mm", "total play given to each listed screw (a length, or an angle for rotary screws)")
	acts := fs.String("actuators", "hip_left,hip_right,ankle_left,ankle_right", "lead screws given the backlash, comma separated")
	durText := fs.String("duration", "40s", "simulated time")
	seed := fs.Uint64("seed", 1, "seed for sensor noise")
	asJSON := fs.Bool("json", false, "print the result as JSON")
	if err := parseFlags(fs, args); err != nil {
		return err
	}
	dur, err := parseDuration(*durText)
	if err != nil {
		return err
	}
	backlash, _, err := models.ParseQuantity(*backlashText, models.Length)
	if err != nil {
		if backlash, _, err = models.ParseQuantity(*backlashText, models.Angle); err != nil {
			return usageError{fmt.Errorf("--backlash %q: want a length such as 0.4mm or an angle such as 1deg", *backlashText)}
		}
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	res, err := wobble.Run(r, wobble.Spec{Actuators: strings.Split(*acts, ","), Backlash: backlash, Duration: dur, Seed: *seed})
	if err != nil {
		return err
	}
	if *asJSON {
		return json.NewEncoder(stdout).Encode(res)
	}
	unit := func(rotary bool, v float64) string {
		if rotary {
			return fmt.Sprintf("%.3f deg", v*180/math.Pi)
		}
		return fmt.Sprintf("%.3f mm", v*1000)
	}
	simulated := func(label string, rotary bool, s wobble.Simulated, screws bool) { // screws: one screw's amplitudes mean something
		switch {
		case s.Fell:
			fmt.Fprintf(stdout, "%-12s %-10s the robot fell\n", label, "simulated")
		case !s.Dominant:
			fmt.Fprintf(stdout, "%-12s %-10s no dominant frequency: the tilt swings %.3f deg at most in one line\n", label, "simulated", s.TiltAmp)
		case screws:
			fmt.Fprintf(stdout, "%-12s %-10s %12s %12s %10.3f %10.3f\n", label, "simulated", unit(rotary, s.ScrewAmp), unit(rotary, s.OutputAmp), s.TiltAmp, s.FrequencyHz)
		default:
			fmt.Fprintf(stdout, "%-12s %-10s %12s %12s %10.3f %10.3f\n", label, "simulated", "", "", s.TiltAmp, s.FrequencyHz)
		}
	}
	fmt.Fprintf(stdout, "backlash %s in %s of %s: each screw alone (the others without play), then all together (all: the same amplitude at each screw, the largest screw's shown); every run shoved at 1 s\n", *backlashText, *acts, r.Robot.Name)
	fmt.Fprintf(stdout, "%-12s %-10s %12s %12s %10s %10s\n", "", "", "screw amp", "output amp", "tilt deg", "freq Hz")
	for _, l := range append(res.Loops, res.All) {
		p := l.Prediction
		if p.Found {
			fmt.Fprintf(stdout, "%-12s %-10s %12s %12s %10.3f %10.3f\n", p.Actuator, "predicted", unit(p.Rotary, p.ScrewAmp), unit(p.Rotary, p.OutputAmp), p.TiltAmp, p.FrequencyHz)
		} else {
			fmt.Fprintf(stdout, "%-12s %-10s %s\n", p.Actuator, "predicted", p.Why)
		}
		simulated("", p.Rotary, l.Sim, p.Actuator != "all")
	}
	return nil
}
