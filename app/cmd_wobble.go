package main

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"teeter/models"
	"teeter/sim/study/wobble"
)

func init() {
	commands = append(commands, command{"wobble", "backlash limit cycle: describing-function prediction beside the simulation", cmdWobble})
}

func cmdWobble(args []string, stdout, stderr io.Writer) error {
	fs := newFlags("wobble", stderr)
	rf := addRigFlags(fs)
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
			return fmt.Sprintf("%.3f deg", v*180/3.141592653589793)
		}
		return fmt.Sprintf("%.3f mm", v*1000)
	}
	fmt.Fprintf(stdout, "backlash %s in %s of %s\n", *backlashText, *acts, r.Robot.Name)
	fmt.Fprintf(stdout, "%-12s %12s %12s %10s %10s\n", "", "screw amp", "output amp", "tilt deg", "freq Hz")
	for _, p := range res.Predictions {
		if !p.Found {
			fmt.Fprintf(stdout, "%-12s no limit cycle predicted (harmonic balance residual %.3g)\n", p.Actuator, p.Residual)
			continue
		}
		fmt.Fprintf(stdout, "%-12s %12s %12s %10.3f %10.3f   predicted, this loop alone\n", p.Actuator, unit(p.Rotary, p.ScrewAmp), unit(p.Rotary, p.OutputAmp), p.TiltAmp, p.FrequencyHz)
	}
	if res.Fell {
		fmt.Fprintln(stdout, "simulated: the robot fell")
		return nil
	}
	fmt.Fprintf(stdout, "%-12s %12s %12s %10.3f %10.3f   simulated, all listed screws\n", "torso", "", "", res.TiltAmp, res.FrequencyHz)
	for _, p := range res.Predictions {
		fmt.Fprintf(stdout, "%-12s %12s %12s\n", p.Actuator, unit(p.Rotary, res.ScrewAmp[p.Actuator]), unit(p.Rotary, res.OutputAmp[p.Actuator]))
	}
	return nil
}
