package ui

import (
	"math"
	"slices"
	"strings"
	"testing"

	"teeter/sim/live"
)

func TestEntriesShowFriendlyUnitsAndKeepSI(t *testing.T) {
	// 1 deg = pi/180 rad and 1 mm = 0.001 m (SI definitions).
	var got float64
	f := newNumberField("rad", -1, 1, func(v float64) { got = v })
	f.show(math.Pi / 18)
	if f.Entry.Text != "10 deg" {
		t.Fatalf("pi/18 rad shows as %q, want 10 deg", f.Entry.Text)
	}
	for text, want := range map[string]float64{"5": 5 * math.Pi / 180, "5 deg": 5 * math.Pi / 180, "0.1 rad": 0.1} {
		if !f.submit(text) || math.Abs(got-want) > 1e-15 {
			t.Errorf("%q gave %g rad, want %g", text, got, want)
		}
	}
	if f.submit("5 mm") {
		t.Error("a length was taken for an angle")
	}
	m := newNumberField("m/s", 0, 1, func(v float64) { got = v })
	m.show(0.03)
	if m.Entry.Text != "30 mm/s" || !m.submit("12") || math.Abs(got-0.012) > 1e-15 {
		t.Fatalf("speed entry %q gave %g m/s for 12, want 0.012", m.Entry.Text, got)
	}
	// Plain numbers stay plain.
	k := newNumberField("", 0, 10, func(v float64) { got = v })
	k.show(1.2)
	if k.Entry.Text != "1.2" || !k.submit("3") || got != 3 {
		t.Fatalf("plain gain %q gave %g for 3", k.Entry.Text, got)
	}
}

func TestGainsPanelPutsLoopsFirstAndSequencesLast(t *testing.T) {
	w, _ := openTest(t, "builtin:frontal")
	blocks, kind := w.gainBlocks()
	// The frontal file lists the stepper first; the panel lists it last.
	if kind["stepper"] != "sequencer" || blocks[len(blocks)-1] != "stepper" {
		t.Fatalf("panel order %v: the stepper sequence is not last", blocks)
	}
	if kind[blocks[0]] != "pid" && kind[blocks[0]] != "split" && kind[blocks[0]] != "gain" {
		t.Fatalf("the panel starts with %s (%s), not a loop", blocks[0], kind[blocks[0]])
	}
	// Loops keep the controller's order: body_loop before leg_angle_left.
	if slices.Index(blocks, "body_loop") > slices.Index(blocks, "leg_angle_left") {
		t.Fatalf("controller order lost: %v", blocks)
	}
	seen := 0
	for _, b := range blocks {
		if tier := gainTier(kind[b]); tier < seen {
			t.Fatalf("%s (tier %d) after tier %d: %v", b, tier, seen, blocks)
		} else {
			seen = tier
		}
	}
	// The unit shown beside an angle limit is degrees.
	if row := w.gainRows["body_loop.max"]; row == nil || !strings.HasSuffix(row.field.Entry.Text, " deg") {
		t.Fatal("body_loop.max is not shown in degrees")
	}
}

func TestStepButtonsStartTheSequence(t *testing.T) {
	w, _ := openTest(t, "builtin:frontal")
	if got := w.sequencers(); len(got) != 1 || got[0] != "stepper" {
		t.Fatalf("sequences offered: %v, want the stepper", got)
	}
	names := w.run.SignalNames()
	lean := slices.Index(names, "stepper.lean")
	if lean < 0 {
		t.Fatalf("no stepper.lean signal in %v", names)
	}
	// Ticks one at a time, so the run stops exactly where asked.
	run := func(seconds float64) float64 {
		end := w.run.Status().Time + seconds
		for w.run.Status().Time < end-1e-9 {
			if err := <-w.run.StepOnce(); err != nil {
				t.Fatal(err)
			}
		}
		var tr live.Trace
		w.run.Recent(&tr, 0.05, []int{lean})
		return tr.Values[0][len(tr.Values[0])-1]
	}
	if v := run(0.3); v != 0 {
		t.Fatalf("the idle stepper leans %g rad before any request", v)
	}
	w.requestEvent("stepper", "start")
	// control/builtin/frontal.yaml: after start the stepper ramps its lean
	// to -11 deg over 1 s, so 0.3 s in it leans right but not yet fully.
	v := run(0.3)
	if !(v < 0 && v > -11*math.Pi/180) {
		t.Fatalf("0.3 s after start the lean is %g deg, want between -11 and 0", v*180/math.Pi)
	}
	if err := <-w.run.Request("stepper", "jump"); err == nil {
		t.Fatal("an event the sequence does not have was taken")
	}
}
