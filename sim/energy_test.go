package sim

import (
	"math"
	"testing"

	"teeter/models"
)

// mechanicalEnergy is the robot's total mechanical energy: kinetic energy
// of every body (translation and rotation), gravitational potential, the
// pads' springs (1/2 k x^2, x the compression) and the joints' springs
// (1/2 k (q - rest)^2).
func mechanicalEnergy(p *Plant) float64 {
	e := 0.0
	for _, b := range p.bodies {
		v, w := b.Velocity(), b.AngularVelocity()
		e += 0.5*b.Mass()*v.Dot(v) + 0.5*b.Moment()*w*w + b.Mass()*Gravity*b.Position().Y
	}
	for i := range p.pads {
		c := p.pads[i].contact
		if d, _ := c.ground.depth(c.point()); d > 0 {
			e += 0.5 * c.stiffness * d * d
		}
	}
	for i := range p.joints {
		mj := &p.robot.Joints[i]
		x := p.joints[i].position() - mj.Initial
		e += 0.5 * mj.Stiffness * x * x
	}
	return e
}

// heldStill builds a built-in robot without noise and with every command
// zero: its lead screws are not backdrivable, so nothing moves them and
// the robot is a passive mechanism (pads with dampers, joint friction).
func heldStill(t *testing.T, name string, shoves ...Shove) *Plant {
	t.Helper()
	r := loadBuiltin(t, name)
	r.NoiseScale = 0
	p, err := New(r, nil, Options{Shoves: shoves})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

func TestPassiveRobotLosesEnergyAfterShove(t *testing.T) {
	// A passive mechanism with dissipative elements cannot gain energy:
	// dE/dt = -(power in the dampers and friction) <= 0 (conservation of
	// energy; any mechanics text, e.g. Goldstein, Classical Mechanics).
	const at = 5.0 // s: the drop onto the pads has settled
	for _, tc := range []struct {
		robot   string
		impulse float64 // N*s, at the torso's centre of mass
	}{{"sagittal", 1.5}, {"frontal", 1.5}, {"pendulum", 0.3}} {
		p := heldStill(t, tc.robot, Shove{At: at, Impulse: models.Vec2{X: tc.impulse}})
		if err := p.RunFor(at - 0.01); err != nil {
			t.Fatal(err)
		}
		rest := mechanicalEnergy(p)
		if err := p.RunFor(0.011); err != nil { // the shove's step
			t.Fatal(err)
		}
		e0 := mechanicalEnergy(p)
		added := e0 - rest
		if !(added > 1e-3) {
			t.Fatalf("%s: the shove added %.3g J; the test would see nothing", tc.robot, added)
		}
		rise := 0.0
		for p.Time() < at+10 {
			if err := p.Step(); err != nil {
				t.Fatalf("%s: %v", tc.robot, err)
			}
			rise = math.Max(rise, mechanicalEnergy(p)-e0)
		}
		left := (mechanicalEnergy(p) - rest) / added
		t.Logf("%s: shove added %.4f J; largest rise above that %.2g J; 10 s later %.1f %% of it is left", tc.robot, added, rise, left*100)
		// The tolerance, 0.5 % of what the shove added, covers the
		// integrator's own energy error (symplectic Euler keeps it
		// bounded and of order (w dt)^2 of the oscillation's energy).
		if rise > 0.005*added {
			t.Errorf("%s: energy rose %.3g J above its value after the shove (%.3g J added)", tc.robot, rise, added)
		}
		// Decays: the pads' dampers take most of it within 10 s.
		if left > 0.2 {
			t.Errorf("%s: %.0f %% of the shove's energy left after 10 s", tc.robot, left*100)
		}
	}
}

func TestPassiveRobotAtRestStaysAtRest(t *testing.T) {
	// Nothing drives a robot whose screws are held: once the drop onto the
	// pads has died away it stays where it is (a passive system cannot
	// start moving by itself: its energy never rises; Goldstein).
	for _, name := range []string{"sagittal", "frontal", "pendulum"} {
		p := heldStill(t, name)
		if err := p.RunFor(10); err != nil {
			t.Fatal(err)
		}
		e0 := mechanicalEnergy(p)
		b := p.torso.body
		lo, hi, rise := math.Inf(1), math.Inf(-1), 0.0
		for p.Time() < 30 {
			if err := p.Step(); err != nil {
				t.Fatalf("%s: %v", name, err)
			}
			lo, hi = math.Min(lo, tilt(b)), math.Max(hi, tilt(b))
			rise = math.Max(rise, mechanicalEnergy(p)-e0)
		}
		pp := (hi - lo) * 180 / math.Pi
		t.Logf("%s: torso tilt peak-to-peak %.2g deg over 20 s, energy rose at most %.2g J", name, pp, rise)
		if pp > 0.03 {
			t.Errorf("%s at rest rocked %.3f deg peak-to-peak over 20 s", name, pp)
		}
		if rise > 1e-4 {
			t.Errorf("%s at rest gained %.3g J", name, rise)
		}
	}
}
