package sim

import (
	"math"
	"testing"

	"teeter/models"
)

// hangingArm is testdata/hanging_arm.yaml with its arm held at deg.
func hangingArm(t *testing.T, deg float64) *Plant {
	t.Helper()
	r, err := models.Load("../testdata/hanging_arm.yaml")
	if err != nil {
		t.Fatal(err)
	}
	if err := models.SetParam(r, "joints.pivot.initial", deg*math.Pi/180); err != nil {
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
