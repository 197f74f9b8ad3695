#!/usr/bin/env bash
# Runs every fuzz target of the module for a bounded time each (FUZZTIME,
# default 5s). A crasher is written by go test under the package's
# testdata/fuzz/ directory; commit it there as a regression case.
set -euo pipefail
fuzztime=${FUZZTIME:-5s}
for pkg in $(go list ./...); do
	for target in $(go test -list '^Fuzz' "$pkg" 2>/dev/null | grep '^Fuzz' || true); do
		echo "fuzz $pkg $target for $fuzztime"
		# Minimising a new input re-runs it thousands of times; with large
		# seeds (whole robot files) the default of 60 s would eat the budget.
		go test "$pkg" -run '^$' -fuzz "^${target}\$" -fuzztime "$fuzztime" -fuzzminimizetime 1s
	done
done
