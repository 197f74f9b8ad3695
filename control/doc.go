// Package control is the controller that keeps a robot up: a graph of blocks
// (sensors, generators, PID loops, filters, a sequencer, actuator outputs)
// read from a controller file, checked with positioned problems, ordered once
// and then ticked at a fixed rate without allocating.
//
// A Graph satisfies the plant's controller interface (Reset, Tick, and the
// optional SignalNames and Signals) without importing the plant. Every
// tunable number of a graph has a path "block.param"; gain sets of those
// paths are saved and loaded as JSON or YAML and exported as a C header for
// firmware. SCHEMA.md in this directory describes the file form.
//
// The package imports nothing of teeter's but models.
package control
