package control

import (
	"testing"
)

const seqText = `
rate: 100 Hz
blocks:
  - {name: level, kind: sensor, channel: level}
  - name: seq
    kind: sequencer
    outputs: [x]
    signals: [level]
    events: [start, stop]
    input: {level: level}
    states:
      - name: idle
        set: {x: 0}
        next: [{on: start, to: rise}]
      - name: rise
        set: {x: 1}
        ramp: 1 s
        next:
          - {when: level, above: 0.5, to: hold}
          - {after: 2 s, to: hold}
      - name: hold
        next:
          - {on: stop, to: idle}
          - {after: 0.5 s, to: fall}
      - name: fall
        set: {x: -1}
        next: [{after: 0.5 s, to: hold}]
`

// The sequencer is checked against its own specification in SCHEMA.md, a
// state machine of the usual kind (a Moore machine whose outputs depend on
// the state and time in it): transitions on time, threshold and events, and
// a latched request that waits for a state that accepts it.
func TestSequencerTransitions(t *testing.T) {
	g := build(t, seqText, []string{"level"}, nil)
	tick := 0
	run := func(seconds, level float64) {
		for n := int(seconds * 100); n > 0; n-- {
			g.Tick(float64(tick)/100, []float64{level}, nil)
			tick++
		}
	}
	state := func() int { return int(signal(t, g, "seq.state")) }

	run(1, 0)
	if state() != 1 {
		t.Fatalf("without a start request the sequencer left idle: state %d", state())
	}
	if err := g.Request("seq", "start"); err != nil {
		t.Fatal(err)
	}
	run(0.01, 0)
	if state() != 2 {
		t.Fatalf("start did not lead to rise: state %d", state())
	}
	// Half way through the 1 s ramp from 0 to 1 the output is 0.5.
	run(0.5, 0)
	if x := signal(t, g, "seq.x"); x < 0.49 || x > 0.51 {
		t.Fatalf("half way up the ramp x = %g, want 0.5", x)
	}
	// The threshold leaves rise before its 2 s timeout.
	run(0.01, 0.7)
	if state() != 3 {
		t.Fatalf("level above 0.5 did not lead to hold: state %d", state())
	}
	// hold sets nothing, so x stays where the ramp left it.
	held := signal(t, g, "seq.x")
	if held < 0.49 || held > 0.51 {
		t.Fatalf("x in hold is %g, want the ramp's last value 0.5", held)
	}
	// After 0.5 s in hold the time transition goes to fall.
	run(0.49, 0.7)
	if state() != 3 {
		t.Fatalf("left hold early: state %d", state())
	}
	run(0.02, 0.7)
	if state() != 4 || signal(t, g, "seq.x") != -1 {
		t.Fatalf("after 0.5 s in hold: state %d x %g, want fall with x = -1", state(), signal(t, g, "seq.x"))
	}
	// A stop asked for in fall (which ignores it) waits for hold.
	if err := g.Request("seq", "stop"); err != nil {
		t.Fatal(err)
	}
	run(0.3, 0.7)
	if state() != 4 {
		t.Fatalf("stop was taken in fall, which has no stop transition: state %d", state())
	}
	run(0.3, 0.7)
	if state() != 1 {
		t.Fatalf("the latched stop was not honoured on reaching hold: state %d", state())
	}
	// Consumed: the next start runs the sequence again without stopping.
	g.Request("seq", "start")
	run(0.01, 0)
	if state() != 2 {
		t.Fatalf("second start: state %d", state())
	}
	if err := g.Request("seq", "jump"); err == nil {
		t.Fatal("an unknown event was accepted")
	}
	if err := g.Request("level", "start"); err == nil {
		t.Fatal("a request to a block that is not a sequencer was accepted")
	}
}

func TestSequencerEventInput(t *testing.T) {
	// An event input counts while it is above 0.5.
	g := build(t, `
rate: 100 Hz
blocks:
  - {name: go, kind: step, time: 0.5 s}
  - name: seq
    kind: sequencer
    outputs: [x]
    events: [start]
    input: {start: go}
    states:
      - {name: idle, next: [{on: start, to: run}]}
      - {name: run, set: {x: 2}}
`, nil, nil)
	for k := 0; k < 100; k++ {
		g.Tick(float64(k)/100, nil, nil)
		want := 0.0
		if k >= 50 {
			want = 2
		}
		if x := signal(t, g, "seq.x"); x != want {
			t.Fatalf("tick %d: x = %g, want %g", k, x, want)
		}
	}
}

func TestFrontalStoppingEndsOnBothFeet(t *testing.T) {
	// The built-in stepping sequence must honour stop only with both feet
	// down: from any state, after a stop request, it reaches idle with no
	// leg lifted at any tick in between where a stop was taken.
	spec, err := Builtin("frontal")
	if err != nil {
		t.Fatal(err)
	}
	robotChannels, robotActuators := frontalNames()
	for stopAfter := 0.5; stopAfter < 8; stopAfter += 0.37 {
		g, err := Build(spec, robotChannels, robotActuators)
		if err != nil {
			t.Fatal(err)
		}
		readings := make([]float64, len(robotChannels))
		commands := make([]float64, len(robotActuators))
		// Feet evenly loaded, so only timeouts move the sequence.
		for i, c := range robotChannels {
			if len(c) > 5 && c[:5] == "load_" {
				readings[i] = 28
			}
		}
		g.Request("stepper", "start")
		prevState := 0
		stopped := false
		for k := 0; k < 200*20; k++ {
			now := float64(k) / 200
			if !stopped && now >= stopAfter {
				g.Request("stepper", "stop")
				stopped = true
			}
			g.Tick(now, readings, commands)
			st := int(signal(t, g, "stepper.state"))
			if st == 11 && prevState != 11 {
				// Entered settle: both lifts must be zero right now.
				if l, r := signal(t, g, "stepper.lift_left"), signal(t, g, "stepper.lift_right"); l != 0 || r != 0 {
					t.Fatalf("stop at %.2f s: settle entered with lifts %g, %g", stopAfter, l, r)
				}
			}
			prevState = st
		}
		if prevState != 1 {
			t.Fatalf("stop at %.2f s: sequence did not return to idle (state %d)", stopAfter, prevState)
		}
	}
}
