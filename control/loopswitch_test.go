package control

import (
	"math"
	"slices"
	"testing"

	"teeter/models"
)

func TestBallastLoopOffAndOnAgain(t *testing.T) {
	// The sagittal controller's ballast loop is proportional, kp 50, on the
	// ballast position (control/builtin/sagittal.yaml). With the ballast
	// held 4 mm behind its rest point the command is kp times the error
	// (clamped to full PWM); switched off, the command is 0 at the next
	// tick; switched on, it is kp times the error again.
	r, err := models.Load("builtin:sagittal")
	if err != nil {
		t.Fatal(err)
	}
	spec, err := Builtin("sagittal")
	if err != nil {
		t.Fatal(err)
	}
	channels, actuators := models.Channels(r), models.ActuatorNames(r)
	g, err := Build(spec, channels, actuators)
	if err != nil {
		t.Fatal(err)
	}
	in := make([]float64, len(channels))
	in[slices.Index(channels, "pot_ballast.position")] = -0.004
	cmds := make([]float64, len(actuators))
	drive := slices.Index(actuators, "ballast_drive")
	h := 1 / g.Rate()
	tick := 0
	command := func() float64 {
		g.Tick(float64(tick)*h, in, cmds)
		tick++
		return cmds[drive]
	}
	want := math.Min(1, 50*0.004) // P on the error; the body loop sees level readings
	for _, step := range []struct {
		on   float64
		want float64
	}{{1, want}, {0, 0}, {1, want}, {0, 0}} {
		if err := g.Set("ballast_loop.on", step.on); err != nil {
			t.Fatal(err)
		}
		for range 5 {
			if got := command(); math.Abs(got-step.want) > 1e-9 {
				t.Fatalf("ballast loop on = %g: command %g, want %g", step.on, got, step.want)
			}
		}
	}
}

func TestPILoopSwitchedOnStartsFromZero(t *testing.T) {
	// Bumpless switch-on (Astrom and Hagglund, Advanced PID Control, 2006,
	// from memory): a PI loop switched off while its integral held a large
	// value, then on again with a constant error e, starts at 0 and ramps
	// at ki*e per second, u(t) = ki*e*t, without the old integral's kick.
	g := loopGraph(t, 100, 1, "kp: 2, ki: 4")
	in, out := []float64{0}, []float64{0}
	now := 0.0
	for range 50 { // 0.5 s at error 1: the integral reaches 2
		g.Tick(now, in, out)
		now += 0.01
	}
	if err := g.Set("c.on", 0); err != nil {
		t.Fatal(err)
	}
	in[0] = 0.5 // error 0.5 from now on
	for range 20 {
		g.Tick(now, in, out)
		now += 0.01
		if out[0] != 0 {
			t.Fatalf("off: command %g, want 0", out[0])
		}
	}
	if err := g.Set("c.on", 1); err != nil {
		t.Fatal(err)
	}
	for k := 0; k < 45; k++ { // below the actuator's clamp at 1
		g.Tick(now, in, out)
		now += 0.01
		// The integral is updated after the output, so tick k shows
		// k ticks of integration.
		if want := 4 * 0.5 * float64(k) * 0.01; math.Abs(out[0]-want) > 1e-9 {
			t.Fatalf("tick %d after switch-on: command %g, want %g", k, out[0], want)
		}
	}
}
