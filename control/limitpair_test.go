package control

import (
	"strings"
	"testing"
)

// A low output limit above the high one would make a PID clamp to the low
// limit whatever the error (a saturation block must keep min <= max, common
// practice), so neither a live change nor a gain set may cross them.
func TestLimitsCannotCross(t *testing.T) {
	g := build(t, `
rate: 100 Hz
blocks:
  - {name: y, kind: constant, value: 0}
  - {name: loop, kind: pid, kp: 1, limits: [-1, 1], input: {setpoint: 0, measurement: y}}
`, nil, nil)
	if err := g.Set("loop.min", 2); err == nil || !strings.Contains(err.Error(), "above loop.max") {
		t.Errorf("Set(loop.min, 2) with max 1: err = %v, want a refusal naming loop.max", err)
	}
	if err := g.Set("loop.max", -2); err == nil || !strings.Contains(err.Error(), "below loop.min") {
		t.Errorf("Set(loop.max, -2) with min -1: err = %v, want a refusal naming loop.min", err)
	}
	if err := g.Apply(GainSet{Gains: []Gain{{Path: "loop.min", Value: 3}}}); err == nil {
		t.Error("a gain set raising min above max was applied")
	}
	if v, _ := g.Get("loop.min"); v != -1 {
		t.Errorf("loop.min = %g after refused changes, want -1", v)
	}
	// Moving both limits together is fine even though the new min is above
	// the old max.
	if err := g.Apply(GainSet{Gains: []Gain{{Path: "loop.max", Value: 5}, {Path: "loop.min", Value: 2}}}); err != nil {
		t.Errorf("moving the pair together: %v", err)
	}
	if err := g.Set("loop.min", 4); err != nil {
		t.Errorf("Set(loop.min, 4) under max 5: %v", err)
	}
}
