// Command teeter is a 2D biped balance simulator for robots driven by slow,
// non-backdrivable actuators and kept up by nested PID loops.
//
// With no command it opens the window on the built-in frontal robot. The
// commands run the same simulation without a window:
//
//	teeter run     one scenario, with a summary, CSV and JSON output
//	teeter export  print or write a gain set as JSON, YAML or a C header
//
// Run "teeter help" or "teeter COMMAND -h" for the options.
package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
)

// command is one subcommand of teeter.
type command struct {
	name  string
	usage string
	run   func(args []string, stdout, stderr io.Writer) error
}

var commands []command

func main() {
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
