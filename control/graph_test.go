package control

import (
	"strings"
	"testing"
)

// build parses and builds a controller from YAML text for a robot with the
// given channels and actuators.
func build(t *testing.T, text string, channels, actuators []string) *Graph {
	t.Helper()
	spec, err := ParseBytes("test.yaml", []byte(text))
	if err != nil {
		t.Fatalf("parse: %v", err)
	}
	g, err := Build(spec, channels, actuators)
	if err != nil {
		t.Fatalf("build: %v", err)
	}
	return g
}

func signal(t *testing.T, g *Graph, name string) float64 {
	t.Helper()
	vals := make([]float64, len(g.SignalNames()))
	g.Signals(vals)
	for i, n := range g.SignalNames() {
		if n == name {
			return vals[i]
		}
	}
	t.Fatalf("no signal %q in %s", name, strings.Join(g.SignalNames(), ", "))
	return 0
}

func TestSmoke(t *testing.T) {
	g := build(t, `
rate: 100 Hz
blocks:
  - {name: tilt, kind: sensor, channel: imu.tilt}
  - {name: loop, kind: pid, kp: 2, input: {setpoint: 0, measurement: tilt}}
  - {name: out, kind: actuator, actuator: ankle, input: loop}
`, []string{"imu.tilt"}, []string{"ankle"})
	cmd := []float64{0}
	g.Tick(0, []float64{0.1}, cmd)
	// P control: u = kp*(0 - y) = -0.2 (Astrom and Murray, Feedback Systems, eq. 10.1 with ki = kd = 0).
	if cmd[0] != -0.2 {
		t.Fatalf("command %v, want -0.2", cmd[0])
	}
}
