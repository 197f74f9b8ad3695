package margin

import (
	"context"
	"math"
	"testing"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// idealAnkle holds the pendulum's pole upright as hard as the worm gear
// can: a stiff PD on the pole's tilt saturating the command at full PWM.
const idealAnkle = `
controller:
  rate: 500 Hz
  blocks:
    - {name: pole_tilt, kind: sensor, channel: pole_imu.tilt}
    - {name: hold, kind: pid, kp: 200, kd: 20, n: 20, limits: [-1, 1], input: {setpoint: 0, measurement: pole_tilt}}
    - {name: ankle_pwm, kind: actuator, actuator: ankle, input: hold}
`

func TestPendulumMarginWithinCapturePointBound(t *testing.T) {
	r, err := rig.Load("builtin:pendulum", "", "")
	if err != nil {
		t.Fatal(err)
	}
	if r.Spec, err = control.ParseBytes("idealAnkle", []byte(idealAnkle)); err != nil {
		t.Fatal(err)
	}
	// Where the whole robot's centre of mass stands at rest.
	p, _, err := r.Build(sim.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(0.2); err != nil {
		t.Fatal(err)
	}
	comX, comZ := p.Recorder().Column("com.x"), p.Recorder().Column("com.y")
	x0, z0 := comX[len(comX)-1], comZ[len(comZ)-1]
	mass := 0.0
	for _, l := range r.Robot.Links {
		mass += l.Mass
	}
	toeEdge, heelEdge := math.Inf(-1), math.Inf(1)
	for _, f := range r.Robot.Feet {
		for _, pd := range f.Pads {
			mass += pd.Mass
			toeEdge = math.Max(toeEdge, pd.Position.X+pd.Width/2)
			heelEdge = math.Min(heelEdge, pd.Position.X-pd.Width/2)
		}
	}
	const tol = 0.02
	res, err := Find(context.Background(), r, Spec{Dirs: []string{"forward", "back"}, Tol: tol})
	if err != nil {
		t.Fatal(err)
	}
	// Capture point of the linear inverted pendulum (Pratt et al., 2006;
	// Kajita et al., 2001): with the centre of pressure at most at the foot
	// edge, a centre-of-mass velocity v is recoverable only if
	// v <= omega * (edge - x), omega = sqrt(g/z). The pads are springs, so
	// the ground gives no impulse back during the shove and the centre of
	// mass's velocity change is the impulse over the whole mass.
	omega := math.Sqrt(sim.Gravity / z0)
	for _, m := range res {
		edge := toeEdge - x0
		if m.Dir == "back" {
			edge = x0 - heelEdge
		}
		bound := omega * edge
		dv := m.Survived / mass
		t.Logf("%s: survived %.3f N*s, fell at %.3f N*s: dv %.3f m/s, capture-point bound %.3f m/s (%.0f %%)", m.Dir, m.Survived, m.Fell, dv, bound, 100*dv/bound)
		if m.Capped || m.Unpushed || m.Fell-m.Survived > tol+1e-12 {
			t.Errorf("%s: search did not close: %+v", m.Dir, m)
		}
		if (m.Fell / mass) > bound {
			t.Errorf("%s: survives %.3f m/s, beyond the capture-point bound %.3f m/s", m.Dir, m.Fell/mass, bound)
		}
		// The linear model lets the centre of pressure reach the edge at
		// once and keeps the height; a rigid robot tipping on a corner of
		// springy pads gets less, so ask for 30 %.
		if dv < 0.3*bound {
			t.Errorf("%s: survives only %.3f m/s, under 30 %% of the bound %.3f m/s", m.Dir, dv, bound)
		}
	}
}

func TestSearchFindsAKnownEdge(t *testing.T) {
	// A plant that survives every impulse below a known edge and no impulse
	// from it on: bracketing and bisection must end with Survived < edge <=
	// Fell and Fell - Survived <= Tol (the bisection method's invariant;
	// e.g. Burden and Faires, Numerical Analysis, sec. 2.1), whatever the
	// number of impulses tried per round.
	const tol = 0.05
	for _, edge := range []float64{0.37, 7.3, 41} {
		for _, perDir := range []int{1, 2, 4, 7} {
			spec := Spec{Tol: tol, Max: 100}.Filled(&models.Robot{Plane: models.Frontal})
			s := &search{ctx: context.Background(), spec: spec, perDir: perDir,
				try: func(_ sim.Shove, j float64) bool { return j < edge }}
			res := s.direction("left", sim.Shove{})
			if res.Capped || res.Unpushed || !(res.Survived < edge && edge <= res.Fell && res.Fell-res.Survived <= tol) {
				t.Errorf("edge %g, %d per round: %+v", edge, perDir, res)
			}
		}
	}
	// An edge above Max is capped; a plant that falls unpushed says so.
	spec := Spec{Tol: tol, Max: 20}.Filled(&models.Robot{})
	capped := (&search{ctx: context.Background(), spec: spec, perDir: 2, try: func(sim.Shove, float64) bool { return true }}).direction("left", sim.Shove{})
	if !capped.Capped || capped.Survived != 20 {
		t.Errorf("no edge below the limit: %+v", capped)
	}
	unpushed := (&search{ctx: context.Background(), spec: spec, perDir: 2, try: func(sim.Shove, float64) bool { return false }}).direction("left", sim.Shove{})
	if !unpushed.Unpushed {
		t.Errorf("falls unpushed: %+v", unpushed)
	}
}

func TestDefaultsByPlane(t *testing.T) {
	// Shoves across the plane the robot moves in: left and right for a
	// frontal robot, back and forward for a sagittal one (models/SCHEMA.md,
	// plane).
	r, err := rig.Load("builtin:pendulum", "", "")
	if err != nil {
		t.Fatal(err)
	}
	if d := (Spec{}).Filled(r.Robot).Dirs; r.Robot.Plane == models.Frontal || d[0] != "back" || d[1] != "forward" {
		t.Errorf("pendulum (%v): directions %v", r.Robot.Plane, d)
	}
	if _, err := Find(context.Background(), r, Spec{Dirs: []string{"sideways"}}); err == nil {
		t.Error("a bad direction was accepted")
	}
}
