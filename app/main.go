// Command teeter is a 2D biped balance simulator for robots driven by slow,
// non-backdrivable actuators and kept up by nested PID loops.
//
// With no command it opens the window on the built-in frontal robot. The
// commands run the same simulation without a window:
//
//	teeter run     one scenario, with a summary, CSV and JSON output
//	teeter export  print or write a gain set as JSON, YAML or a C header
//	teeter margin  the largest shove the robot survives, per direction
//	teeter sweep   a parameter sweep on all cores, to CSV and a plot
//	teeter merge   join the shards of a sweep run as a job array
//	teeter tune    Nelder-Mead tuning of gains over shoves and robot variants
//	teeter relay   a relay test of one PID block, with tuning rules
//	teeter modes   closed-loop modes of the standing robot
//	teeter wobble  the backlash limit cycle, predicted and simulated
//	teeter loads   peak loads on actuators and joints over a campaign of shoves
//	teeter fit     fit robot parameters to a log recorded on the robot
//	teeter bench   speed measurements
//
// Run "teeter help" or "teeter COMMAND -h" for the options.
package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"time"

	"teeter/app/internal/quietinit"
	"teeter/models"
	"teeter/sim/rig"
	"teeter/sim/sil"
)

// command is one subcommand of teeter.
type command struct {
	name  string
	usage string
	run   func(args []string, stdout, stderr io.Writer) error
}

var commands []command

func main() {
	quietinit.Done()
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// run dispatches to a subcommand and turns its error into an exit status.
func run(args []string, stdout, stderr io.Writer) int {
	name, rest := "window", args
	if len(args) > 0 && len(args[0]) > 0 && args[0][0] != '-' {
		name, rest = args[0], args[1:]
	}
	if name == "help" {
		printHelp(stdout)
		return 0
	}
	for _, c := range commands {
		if c.name == name {
			err := c.run(rest, stdout, stderr)
			if err == nil {
				return 0
			}
			if errors.Is(err, flag.ErrHelp) {
				return 0
			}
			var ue usageError
			if errors.As(err, &ue) {
				fmt.Fprintf(stderr, "teeter %s: %v\n", name, err)
				return 2
			}
			fmt.Fprintf(stderr, "teeter %s: %v\n", name, err)
			return 1
		}
	}
	fmt.Fprintf(stderr, "teeter: unknown command %q\n", name)
	printHelp(stderr)
	return 2
}

func printHelp(w io.Writer) {
	fmt.Fprintln(w, "usage: teeter [COMMAND] [options]")
	fmt.Fprintln(w, "\nWith no command, teeter opens the window on builtin:frontal. Commands:")
	for _, c := range commands {
		fmt.Fprintf(w, "  %-8s %s\n", c.name, c.usage)
	}
	fmt.Fprintln(w, "\nRun 'teeter COMMAND -h' for a command's options.")
}

// usageError marks a mistake in the command line (exit status 2).
type usageError struct{ error }

func newFlags(name string, stderr io.Writer) *flag.FlagSet {
	fs := flag.NewFlagSet("teeter "+name, flag.ContinueOnError)
	fs.SetOutput(stderr)
	return fs
}

// parseFlags parses and wraps mistakes as usage errors.
func parseFlags(fs *flag.FlagSet, args []string) error {
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return err
		}
		return usageError{err}
	}
	if fs.NArg() > 0 {
		return usageError{fmt.Errorf("unexpected argument %q", fs.Arg(0))}
	}
	return nil
}

// multiFlag collects a flag given several times.
type multiFlag []string

func (m *multiFlag) String() string     { return fmt.Sprint(*m) }
func (m *multiFlag) Set(v string) error { *m = append(*m, v); return nil }

// rigFlags are the flags that choose what is simulated: the robot, its
// controller and a gain set on top, and on the commands that take one, a
// controller program in place of the graph.
type rigFlags struct {
	model, controller, gains *string
	exec, execTimeout        *string // nil without addExecFlags
	physicsRate              *string // nil on a command that does not simulate
}

// addRigFlags declares --model, --controller and --gains.
func addRigFlags(fs *flag.FlagSet) rigFlags {
	return rigFlags{
		model:      fs.String("model", "builtin:frontal", "robot: builtin:NAME or a robot file"),
		controller: fs.String("controller", "", "controller: a file, builtin:NAME or none (every screw held where it starts; default: the robot's own or built-in controller)"),
		gains:      fs.String("gains", "", "gain set file (JSON or YAML) applied on top of the controller"),
	}
}

// addExecFlags declares --controller-exec and --exec-timeout.
func (rf *rigFlags) addExecFlags(fs *flag.FlagSet) {
	rf.exec = fs.String("controller-exec", "", "run this controller program in place of the controller graph, over the line protocol on its standard input and output (the rate and gain paths still come from the controller)")
	rf.execTimeout = fs.String("exec-timeout", "1s", "with --controller-exec: how long to wait for the program's ready line and each answer")
}

// newSimFlags is the flag set of a command that simulates: the rig's
// flags and --physics-rate.
func newSimFlags(name string, stderr io.Writer) (*flag.FlagSet, rigFlags) {
	fs := newFlags(name, stderr)
	rf := addRigFlags(fs)
	rf.physicsRate = fs.String("physics-rate", "", physicsRateUsage)
	return fs, rf
}

const physicsRateUsage = "physics step rate, e.g. 2kHz (default: the robot file's physics_rate, else 1 kHz)"

// parseRate reads a rate flag: a frequency above zero, or "" for none (0).
func parseRate(flag, text string) (float64, error) {
	if text == "" {
		return 0, nil
	}
	f, _, err := models.ParseQuantity(text, models.Frequency)
	if err != nil || !(f > 0) {
		return 0, usageError{fmt.Errorf("--%s %q: want a frequency above zero such as 2kHz", flag, text)}
	}
	return f, nil
}

func (rf rigFlags) load() (*rig.Rig, error) {
	r, err := rig.Load(*rf.model, *rf.controller, *rf.gains)
	if err != nil {
		return nil, err
	}
	if rf.physicsRate != nil {
		if r.PhysicsRate, err = parseRate("physics-rate", *rf.physicsRate); err != nil {
			return nil, err
		}
	}
	if rf.exec == nil || *rf.exec == "" {
		return r, nil
	}
	timeout, _, err := models.ParseQuantity(*rf.execTimeout, models.Duration)
	if err != nil || !(timeout > 0) {
		return nil, usageError{fmt.Errorf("--exec-timeout %q: want a positive duration such as 1s", *rf.execTimeout)}
	}
	r.Program = &rig.Program{Path: *rf.exec, Options: sil.Options{Timeout: time.Duration(timeout * float64(time.Second))}}
	return r, nil
}
