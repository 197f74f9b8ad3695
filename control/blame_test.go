package control

import (
	"strings"
	"testing"
)

// faultyBlock writes past the graph's signal slots, as a block with an
// indexing bug would.
type faultyBlock struct{ ports }

func (k *faultyBlock) reset(g *Graph) {}
func (k *faultyBlock) tick(g *Graph)  { g.vals[k.out+len(g.vals)] = k.input(g, 0) }

// tickPanic ticks g once and returns what it panicked with, nil if nothing.
func tickPanic(g *Graph) (r any) {
	defer func() { r = recover() }()
	g.Tick(0, []float64{0.1}, []float64{0})
	return nil
}

func TestPanicInATickNamesTheBlock(t *testing.T) {
	kinds["faulty"] = &kind{
		parse: func(r *reader) { r.inputs("in"); r.outputs("out") },
		build: func(b *BlockSpec, c *buildContext) block { return &faultyBlock{c.ports()} },
	}
	t.Cleanup(func() { delete(kinds, "faulty") })
	g := build(t, `
rate: 100 Hz
blocks:
  - {name: tilt, kind: sensor, channel: imu.tilt}
  - {name: body_loop, kind: faulty, input: tilt}
  - {name: out, kind: actuator, actuator: ankle, input: body_loop}
`, []string{"imu.tilt"}, []string{"ankle"})
	r := tickPanic(g)
	err, ok := r.(error)
	if !ok {
		t.Fatalf("Tick panicked with %v (%T), want an error naming the block", r, r)
	}
	// The block's name and kind as written above, then the runtime's own
	// text for a bad index (Go runtime, "runtime error: index out of range").
	want := `control: block "body_loop" (faulty): runtime error: index out of range`
	if !strings.HasPrefix(err.Error(), want) {
		t.Fatalf("Tick panicked with %q, want it to start %q", err, want)
	}
}
