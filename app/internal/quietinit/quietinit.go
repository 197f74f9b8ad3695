// Package quietinit keeps the window toolkit's start-up chatter off the
// command line. The toolkit logs through the standard logger from its
// package initialisers (a warning about the locale on machines with
// LANG=C.UTF-8, common in containers and CI), before main runs, for every
// command, though only the window uses it.
//
// Go initialises packages in import-path order among those whose imports are
// ready, so this package, which imports only the standard library and sorts
// before the toolkit's text/template dependency, runs its init before the
// toolkit's. app's tests check that a command prints nothing of the toolkit's.
package quietinit

import (
	"io"
	"log"
	"os"
)

func init() { log.SetOutput(io.Discard) }

// Done sends the standard logger to standard error again; main calls it
// first thing.
func Done() { log.SetOutput(os.Stderr) }
