package loads

import (
	"math"
	"testing"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

func TestPeaksOfAHangingLoad(t *testing.T) {
	// testdata/hanging_arm.yaml: a 2 kg arm hanging from a base fixed to
	// the world, held at 30 deg by a rigid screw: at rest its pin carries m g and its screw the moment
	// m g d sin(theta) (statics, Meriam and Kraige, Engineering Mechanics:
	// Statics, ch. 3), so those are the campaign's peaks for a run with no
	// shove, and the screw's share of its 10 N*m rating is that over 10.
	const m, d, theta, rated = 2.0, 0.150, 30 * math.Pi / 180, 10.0
	r, err := models.Load("../../../testdata/hanging_arm.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// The screw is never commanded, so that nothing moves.
	still, err := control.ParseBytes("still.yaml", []byte(`
controller:
  rate: 1000 Hz
  blocks:
    - {name: zero, kind: constant, value: 0}
    - {name: drive, kind: actuator, actuator: screw, input: zero}
`))
	if err != nil {
		t.Fatal(err)
	}
	c := newCampaign(r)
	if err := c.run(&rig.Rig{Robot: r, Spec: still}, "none", sim.Shove{At: 0.1}, sim.Options{ControlRate: 1000}, 0.5); err != nil {
		t.Fatal(err)
	}
	res := c.result()
	w := m * sim.Gravity
	want := map[string]float64{"pivot": w, "screw": w * d * math.Sin(theta)}
	for _, p := range res.Parts {
		t.Logf("%s: peak %.4f %s (share %.4f); statics %.4f", p.Name, p.Peak, p.Unit, p.Share, want[p.Name])
		if math.Abs(p.Peak-want[p.Name]) > 1e-3*want[p.Name] {
			t.Errorf("%s: peak %.4f %s, statics %.4f", p.Name, p.Peak, p.Unit, want[p.Name])
		}
	}
	// Worst first: the screw carries 14.7 % of its rating, the pin 39 %.
	if res.Parts[0].Name != "pivot" || math.Abs(res.Parts[1].Share-want["screw"]/rated) > 1e-3 {
		t.Errorf("parts %+v: want the pin first, then the screw at %.4f of its rating", res.Parts, want["screw"]/rated)
	}
}
