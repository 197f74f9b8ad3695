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
	acts := fs.String("actuators", "", "lead screws given the backlash, comma separated (default every lead screw of the robot but the ballast's)")
	durText := fs.String("duration", "40s", "simulated time")
	seed := fs.Uint64("seed", 1, "seed for sensor noise")
	kicksText := fs.String("kicks", "", "the shoves at 1 s, one simulated run each, comma separated (default five from 0.02 to 0.16 N*s per kg of robot)")
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
	var kicks []float64
	if *kicksText != "" {
		for _, k := range strings.Split(*kicksText, ",") {
			v, _, err := models.ParseQuantity(k, models.Impulse)
			if err != nil {
				return usageError{fmt.Errorf("--kicks %q: %w", k, err)}
			}
			kicks = append(kicks, v)
		}
	}
	r, err := rf.load()
	if err != nil {
		return err
	}
	var screws []string
	if *acts != "" {
		screws = strings.Split(*acts, ",")
	}
	res, err := wobble.Run(r, wobble.Spec{Actuators: screws, Backlash: backlash, Duration: dur, Seed: *seed, Kicks: kicks})
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
	row := "%-12s %-10s %12s %12s %10s %10s  %s\n"
	simulated := func(l wobble.Loop, screws bool) { // screws: one screw's amplitudes mean something
		n := len(l.Sims)
		shoves := fmt.Sprintf("%.2f to %.2f N*s", l.Sims[0].Kick, l.Sims[n-1].Kick)
		if n == 1 {
			shoves = fmt.Sprintf("%.2f N*s", l.Sims[0].Kick)
		}
		if fell := l.Count(func(s *wobble.Simulated) bool { return s.Fell }); fell > 0 {
			fmt.Fprintf(stdout, "%-12s %-10s fell after %d of %d shoves (%s)\n", "", "simulated", fell, n, shoves)
			if fell == n {
				return
			}
		}
		w := l.Wobbles()
		if w == nil {
			fmt.Fprintf(stdout, "%-12s %-10s calm after every shove that left it up (%s): no swing of the tilt over %.2f deg in one line\n", "", "simulated", shoves, wobble.Calm)
			return
		}
		kind := "steady"
		if !w.Dominant {
			kind = "irregular"
		}
		screw, out := "", ""
		if screws {
			screw, out = unit(l.Rotary, w.ScrewAmp), unit(l.Rotary, w.OutputAmp)
		}
		fmt.Fprintf(stdout, row, "", "simulated", screw, out, fmt.Sprintf("%.3f", w.TiltAmp), fmt.Sprintf("%.3f", w.FrequencyHz),
			fmt.Sprintf("%s, after %.2f N*s; %d of %d shoves (%s) leave it wobbling", kind, w.Kick, l.Count((*wobble.Simulated).Wobbling), n, shoves))
	}
	names := make([]string, len(res.Loops))
	for i, l := range res.Loops {
		names[i] = l.Actuator
	}
	fmt.Fprintf(stdout, "backlash %s in %s of %s: each screw alone (the others without play), then, for more than one, all together (all: the largest screw's amplitudes shown); each case simulated after each shove at 1 s, the largest wobble shown\n", *backlashText, strings.Join(names, ","), r.Robot.Name)
	fmt.Fprintf(stdout, "%-12s %-10s %12s %12s %10s %10s\n", "", "", "screw amp", "output amp", "tilt deg", "freq Hz")
	loops := res.Loops
	if res.All != nil {
		loops = append(loops, *res.All)
	}
	for _, l := range loops {
		p := l.Prediction
		if p.Found {
			fmt.Fprintf(stdout, row, p.Actuator, "predicted", unit(p.Rotary, p.ScrewAmp), unit(p.Rotary, p.OutputAmp), fmt.Sprintf("%.3f", p.TiltAmp), fmt.Sprintf("%.3f", p.FrequencyHz), "describing function")
		} else {
			fmt.Fprintf(stdout, "%-12s %-10s %s\n", p.Actuator, "predicted", p.Why)
		}
		simulated(l, p.Actuator != "all")
		if l.NotValid != "" {
			fmt.Fprintf(stdout, "%-12s %-10s %s\n", "", "", l.NotValid)
		}
	}
	return nil
}
