package rig

import (
	"strings"
	"testing"

	"teeter/sim"
)

func TestRigRatesAndNoController(t *testing.T) {
	r, err := Load("builtin:pendulum", NoController, "")
	if err != nil {
		t.Fatal(err)
	}
	if r.Spec != nil || !strings.Contains(r.Notice(), "every screw is held") {
		t.Errorf("--controller none: spec %v, notice %q", r.Spec, r.Notice())
	}
	own, err := Load("builtin:pendulum", "", "")
	if err != nil {
		t.Fatal(err)
	}
	if own.Notice() != "" {
		t.Errorf("a robot with its controller has the notice %q", own.Notice())
	}
	// Rows at the physics rate: a row every 1/f s at f Hz (definition of
	// a sampling rate).
	r.PhysicsRate, r.RecordRate = 2000, 2000
	o, err := r.Run(0.1, sim.Options{})
	if err != nil {
		t.Fatal(err)
	}
	tm := o.Rec.Column("time")
	if len(tm) != 200 || tm[1]-tm[0] != 1.0/2000 {
		t.Errorf("%d rows %g s apart, want 200 rows 0.5 ms apart", len(tm), tm[1]-tm[0])
	}
}
