package sil

import (
	"bufio"
	"fmt"
	"os"
	"strconv"
	"strings"
	"time"
)

// The test binary doubles as the controller programs the tests run: with
// helperEnv set it plays the program that variable names instead of running
// the tests. An init rather than TestMain, so that other test files of the
// package stay free to have theirs.

const (
	helperEnv = "TEETER_SIL_HELPER"
	logEnv    = "TEETER_SIL_LOG" // a file the program appends every line it reads to
)

func init() {
	mode := os.Getenv(helperEnv)
	if mode == "" {
		return
	}
	os.Exit(helper(mode))
}

// helper plays a controller program. Modes:
//
//	echo      answers each reading times a gain ("p gain V") plus the number
//	          of events requested so far, for the first M readings
//	count     answers the number of ticks it has seen since it started
//	exit      writes to stderr and exits with status 3 at once
//	refuse    answers the header with "error ..." and exits
//	noready   reads the header and says nothing
//	late-exit answers two ticks, then writes to stderr and exits with status 4
//	garbage   answers "hello world"
//	few       answers one command fewer than asked
//	many      answers one command more than asked
//	nan       answers NaN as its first command
//	word      answers a word as its second command
//	hang      stops answering at the third tick
func helper(mode string) int {
	in := bufio.NewScanner(os.Stdin)
	in.Buffer(nil, 1<<20)
	var log *os.File
	if name := os.Getenv(logEnv); name != "" {
		var err error
		if log, err = os.OpenFile(name, os.O_APPEND|os.O_CREATE|os.O_WRONLY, 0o644); err != nil {
			fmt.Fprintln(os.Stderr, err)
			return 1
		}
	}
	next := func() (string, bool) {
		if !in.Scan() {
			return "", false
		}
		if log != nil {
			fmt.Fprintln(log, in.Text())
		}
		return in.Text(), true
	}
	out := bufio.NewWriter(os.Stdout)
	say := func(s string) {
		out.WriteString(s + "\n")
		out.Flush()
	}
	if mode == "exit" {
		fmt.Fprintln(os.Stderr, "helper: starting up")
		fmt.Fprintln(os.Stderr, "helper: no motor driver found")
		return 3
	}
	first, _ := next()
	f := strings.Fields(first)
	if len(f) != 5 || f[0] != "teeter-sil" || f[1] != "1" {
		say("error not a teeter-sil 1 header: " + first)
		return 1
	}
	m, _ := strconv.Atoi(f[4])
	next()
	next()
	switch mode {
	case "refuse":
		say("error this firmware drives 7 actuators, the robot has " + f[4])
		return 1
	case "noready":
		time.Sleep(time.Hour)
	}
	say("ready")
	gain, events, ticks := 1.0, 0.0, 0
	for {
		line, ok := next()
		if !ok {
			return 0
		}
		f := strings.Fields(line)
		switch f[0] {
		case "p":
			if f[1] == "gain" {
				gain, _ = strconv.ParseFloat(f[2], 64)
			}
			continue
		case "e":
			events++
			continue
		}
		ticks++
		cmds := make([]string, m)
		for i := range cmds {
			switch mode {
			case "count":
				cmds[i] = strconv.Itoa(ticks)
			case "echo":
				v, _ := strconv.ParseFloat(f[2+i], 64)
				cmds[i] = strconv.FormatFloat(gain*v+events, 'g', -1, 64)
			default:
				cmds[i] = "0.25"
			}
		}
		switch mode {
		case "late-exit":
			if ticks == 3 {
				fmt.Fprintln(os.Stderr, "helper: watchdog tripped")
				return 4
			}
		case "garbage":
			say("hello world")
			continue
		case "few":
			cmds = cmds[1:]
		case "many":
			cmds = append(cmds, "0")
		case "nan":
			cmds[0] = "NaN"
		case "word":
			cmds[1] = "fast"
		case "hang":
			if ticks == 3 {
				time.Sleep(time.Hour)
			}
		}
		say("c " + strings.Join(cmds, " "))
	}
}
