package control

import (
	"testing"
)

// The expected messages are this package's wording; the positions are
// counted by hand from the snippets (line:column of the element the message
// is about, columns from 1 as YAML editors show them).
type messageCase struct{ name, text, want string }

// checkMessages parses and builds each case for a robot with a torso IMU and
// a hip and an ankle actuator, and compares the problems with want.
func checkMessages(t *testing.T, cases []messageCase) {
	t.Helper()
	channels := []string{"torso_imu.tilt", "torso_imu.rate", "torso_imu.accel_tilt"}
	actuators := []string{"hip", "ankle"}
	for _, c := range cases {
		spec, err := ParseBytes("c.yaml", []byte(c.text))
		if err == nil {
			_, err = Build(spec, channels, actuators)
		}
		if err == nil {
			t.Errorf("%s: no error", c.name)
			continue
		}
		if err.Error() != c.want {
			t.Errorf("%s:\n got: %s\nwant: %s", c.name, err, c.want)
		}
	}
}

// TestBlockMessages checks the problems of each block and of the rate, found on their own.
func TestBlockMessages(t *testing.T) {
	checkMessages(t, []messageCase{
		{"unknown kind", `rate: 100 Hz
blocks:
  - {name: a, kind: wobble}`,
			`c.yaml:3:21: controller.blocks.a.kind: unknown block kind "wobble" (known: actuator, constant, deadband, delay, gain, limit, lowpass, pid, ramp, rate_limit, select, sensor, sequencer, sine, split, square, step, sum, tilt_filter, time)`},
		{"unknown port, so also unconnected", `rate: 100 Hz
blocks:
  - {name: a, kind: constant, value: 1}
  - {name: b, kind: gain, k: 2, input: {inn: a}}`,
			`c.yaml:4:5: controller.blocks.b.input.in: input "in" is not connected
c.yaml:4:41: controller.blocks.b.input.inn: input "inn" is not a port of gain block b (ports: in)`},
		{"unconnected input", `rate: 100 Hz
blocks:
  - {name: b, kind: gain, k: 2}`,
			`c.yaml:3:5: controller.blocks.b.input.in: input "in" is not connected`},
		{"unconnected input, block style", `rate: 100 Hz
blocks:
  - name: g
    kind: gain
    k: 2`,
			`c.yaml:3:5: controller.blocks.g.input.in: input "in" is not connected`},
		{"duplicate name", `rate: 100 Hz
blocks:
  - {name: a, kind: constant, value: 1}
  - {name: a, kind: constant, value: 2}`,
			`c.yaml:4:5: controller.blocks.a: duplicate block name "a" (first used at line 3)`},
		{"several problems at once", `rate: 100 Hz
blocks:
  - {name: a, kind: constant, value: 1, kp: 3}
  - {name: b, kind: pid, kp: 1 deg, input: {setpoint: a.outt, measurement: zz}}`,
			`c.yaml:3:41: controller.blocks.a.kp: unknown parameter "kp" for a constant block (it has name, kind, value)
c.yaml:4:30: controller.blocks.b.kp: "1 deg" is an angle, but a number is wanted
c.yaml:4:55: controller.blocks.b.input.setpoint: "a.outt": constant block a has no output "outt" (outputs: out)
c.yaml:4:76: controller.blocks.b.input.measurement: "zz": no block named "zz"`},
		{"missing rate", `blocks:
  - {name: a, kind: constant, value: 1}`,
			`c.yaml:1:1: controller.rate: missing: the rate the controller ticks at, e.g. 200 Hz`},
		{"bad rate unit", `rate: 100 mm
blocks: []`,
			`c.yaml:1:7: controller.rate: "100 mm" is a length, but a frequency is wanted`},
	})
}

// TestLoopMessages checks that a loop without a delay is named by one path through it.
func TestLoopMessages(t *testing.T) {
	checkMessages(t, []messageCase{
		{"algebraic loop", `rate: 100 Hz
blocks:
  - {name: a, kind: gain, k: 1, input: c}
  - {name: b, kind: gain, k: 1, input: a}
  - {name: c, kind: gain, k: 1, input: b}`,
			`c.yaml:3:5: controller.blocks.a: loop without a delay: a -> b -> c -> a`},
		{"loop with a branch: the path takes the lower block first", `rate: 100 Hz
blocks:
  - {name: a, kind: sum, input: [c, b]}
  - {name: b, kind: gain, k: 1, input: a}
  - {name: c, kind: gain, k: 1, input: a}`,
			`c.yaml:3:5: controller.blocks.a: loop without a delay: a -> b -> a`},
		{"self loop", `rate: 100 Hz
blocks:
  - {name: acc, kind: sum, input: [1, acc]}`,
			`c.yaml:3:5: controller.blocks.acc: loop without a delay: acc -> acc`},
	})
}

// TestRobotMessages checks channels and actuators the robot does not have.
func TestRobotMessages(t *testing.T) {
	checkMessages(t, []messageCase{
		{"missing sensor", `rate: 100 Hz
blocks:
  - {name: s, kind: sensor, channel: leg_imu.tilt}`,
			`c.yaml:3:38: controller.blocks.s.channel: the robot has no sensor "leg_imu" (for channel "leg_imu.tilt")`},
		{"missing channel", `rate: 100 Hz
blocks:
  - {name: s, kind: sensor, channel: torso_imu.tlt}`,
			`c.yaml:3:38: controller.blocks.s.channel: the robot has no channel "torso_imu.tlt" (torso_imu has torso_imu.tilt, torso_imu.rate, torso_imu.accel_tilt)`},
		{"missing actuator and a second driver", `rate: 100 Hz
blocks:
  - {name: a, kind: actuator, actuator: knee, input: 0}
  - {name: b, kind: actuator, actuator: hip, input: 0}
  - {name: c, kind: actuator, actuator: hip, input: 0}`,
			`c.yaml:3:41: controller.blocks.a.actuator: the robot has no actuator "knee" (it has hip, ankle)
c.yaml:5:41: controller.blocks.c.actuator: actuator "hip" is already driven by block b`},
	})
}

// TestSequencerMessages checks the states and transitions of a sequencer.
func TestSequencerMessages(t *testing.T) {
	checkMessages(t, []messageCase{
		{"sequencer to an unknown state", `rate: 100 Hz
blocks:
  - name: q
    kind: sequencer
    outputs: [x]
    states:
      - {name: one, next: [{after: 1 s, to: tow}]}`,
			`c.yaml:7:28: controller.blocks.q.states.one.next[0].to: no state named "tow"`},
		{"transition on a signal the sequencer does not have", `rate: 100 Hz
blocks:
  - name: q
    kind: sequencer
    outputs: [x]
    signals: [tilt]
    input: {tilt: 0}
    states:
      - {name: one, next: [{when: tlt, above: 1, to: one}]}`,
			`c.yaml:9:35: controller.blocks.q.states.one.next[0].when: "tlt" is not a signal of this sequencer (signals: tilt)`},
	})
}

func TestDelayBreaksLoop(t *testing.T) {
	// An accumulator y[k] = y[k-1] + x[k] is a sum fed back through a unit
	// delay z^-1 (Oppenheim and Schafer, Discrete-Time Signal Processing,
	// sec. 6.1); its output after n ticks of x = 1 is n.
	g := build(t, `
rate: 10 Hz
blocks:
  - {name: acc, kind: sum, input: [1, prev]}
  - {name: prev, kind: delay, input: acc}
`, nil, nil)
	for k := 0; k < 5; k++ {
		g.Tick(float64(k)/10, nil, nil)
	}
	if got := signal(t, g, "acc.out"); got != 5 {
		t.Fatalf("accumulator after 5 ticks: %g, want 5", got)
	}
	if got := signal(t, g, "prev.out"); got != 5 {
		t.Fatalf("delay after 5 ticks holds %g, want 5 (the last sum)", got)
	}
	g.Reset()
	g.Tick(0, nil, nil)
	if got := signal(t, g, "acc.out"); got != 1 {
		t.Fatalf("after Reset the accumulator gives %g, want 1", got)
	}
}

func TestEvaluationOrderFollowsWiringNotFileOrder(t *testing.T) {
	// Blocks written consumer first must still see this tick's value: a
	// chain of gains gives the product at once (no hidden delay).
	g := build(t, `
rate: 10 Hz
blocks:
  - {name: c, kind: gain, k: 3, input: b}
  - {name: b, kind: gain, k: 2, input: a}
  - {name: a, kind: sensor, channel: x}
`, []string{"x"}, nil)
	g.Tick(0, []float64{1.5}, nil)
	if got := signal(t, g, "c.out"); got != 9 {
		t.Fatalf("c = %g, want 3*2*1.5 = 9", got)
	}
}
