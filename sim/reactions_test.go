package sim

import (
	"fmt"
	"math"
	"testing"

	"teeter/models"
)

// hangingArm is a 2 kg arm hanging from a base fixed to the world through
// a revolute joint 150 mm above its centre of mass, held at an angle by a
// rigid rotary lead screw that is never commanded.
func hangingArm(t *testing.T, deg float64) *Plant {
	t.Helper()
	r, err := models.Parse("arm.yaml", []byte(`
name: arm
plane: sagittal
root: base
links:
  - {name: base, shape: {box: {width: 400 mm, height: 100 mm}}, mass: 10 kg, position: [0, 50 mm], fixed: true}
  - {name: arm, shape: {capsule: {length: 300 mm, radius: 10 mm}}, mass: 2 kg}
joints:
  - {name: pivot, kind: revolute, parent: base, child: arm, parent_anchor: [0, 600 mm], child_anchor: [0, 150 mm], limits: [-90 deg, 90 deg], initial: `+fmt.Sprintf("%g deg", deg)+`}
actuators:
  - {name: pivot, kind: lead_screw, joint: pivot, no_load_speed: 30 rpm, stall_force: 100 N*m}
fall:
  torso_link: base
`))
	if err != nil {
		t.Fatal(err)
	}
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(0.5); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestReactionOfAHangingLoad(t *testing.T) {
	// Statics of a body hanging from a pin (Meriam and Kraige, Engineering
	// Mechanics: Statics, ch. 3): at rest the pin carries the weight,
	// R = m g straight up, whatever the angle; held at an angle theta the
	// moment about the pin, m g d sin(theta), is the screw's to carry.
	const m, d = 2.0, 0.150
	for _, deg := range []float64{0, 30, -60} {
		theta := deg * math.Pi / 180
		p := hangingArm(t, deg)
		reaction := make([]models.Vec2, 1)
		load := make([]float64, 1)
		p.JointReactions(reaction)
		p.ActuatorLoads(load)
		w := m * Gravity
		t.Logf("%g deg: reaction (%.4f, %.4f) N, screw %.4f N*m; statics (0, %.4f) N, %.4f N*m", deg, reaction[0].X, reaction[0].Y, load[0], w, w*d*math.Sin(theta))
		if math.Abs(reaction[0].X) > 1e-3*w || math.Abs(reaction[0].Y-w) > 1e-3*w {
			t.Errorf("%g deg: reaction (%.4f, %.4f) N, want (0, %.4f) N", deg, reaction[0].X, reaction[0].Y, w)
		}
		if want := w * d * math.Sin(theta); math.Abs(math.Abs(load[0])-math.Abs(want)) > 1e-3*w*d {
			t.Errorf("%g deg: screw load %.4f N*m, want %.4f N*m in size", deg, load[0], want)
		}
	}
}
