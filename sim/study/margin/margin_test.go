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
	res, err := Find(context.Background(), r, Spec{Dirs: []string{"forward", "back"}, Tol: tol, Seeds: 2})
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
	for _, d := range res {
		edge := toeEdge - x0
		if d.Dir == "back" {
			edge = x0 - heelEdge
		}
		bound := omega * edge
		for _, m := range d.Seeds {
			dv := m.Survived / mass
			t.Logf("%s, seed %d: survived %.3f N*s, fell at %.3f N*s: dv %.3f m/s, capture-point bound %.3f m/s (%.0f %%)", d.Dir, m.Seed, m.Survived, m.Fell, dv, bound, 100*dv/bound)
			if m.Capped || m.Unpushed || m.Fell-m.Survived > tol+1e-12 {
				t.Errorf("%s: search did not close: %+v", d.Dir, m)
			}
			if (m.Fell / mass) > bound {
				t.Errorf("%s: survives %.3f m/s, beyond the capture-point bound %.3f m/s", d.Dir, m.Fell/mass, bound)
			}
			// The linear model lets the centre of pressure reach the edge
			// at once and keeps the height; a rigid robot tipping on a
			// corner of springy pads gets less, so ask for 30 %.
			if dv < 0.3*bound {
				t.Errorf("%s: survives only %.3f m/s, under 30 %% of the bound %.3f m/s", d.Dir, dv, bound)
			}
		}
	}
}

func TestSearchFindsAKnownEdge(t *testing.T) {
	// A plant that survives every impulse below a known edge and no impulse
	// from it on: bracketing and bisection must end with Survived < edge <=
	// Fell and Fell - Survived <= Tol (the bisection method's invariant;
	// e.g. Burden and Faires, Numerical Analysis, sec. 2.1), whatever the
	// number of impulses tried per round and wherever another seed's
	// answer puts the first bracket.
	const tol = 0.05
	spec := Spec{Tol: tol, Max: 100}.Filled(&models.Robot{Plane: models.Frontal})
	for _, edge := range []float64{0.37, 7.3, 41} {
		for _, perDir := range []int{1, 2, 4, 7} {
			for _, near := range []*Edge{nil, {Survived: 0.01}, {Survived: edge * 0.9}, {Survived: edge * 1.5}, {Survived: 100, Capped: true}, {Unpushed: true}} {
				s := &search{ctx: context.Background(), spec: spec, perDir: perDir,
					try: func(_ int, _ sim.Shove, j float64) (bool, error) { return j < edge, nil }}
				res := s.direction(0, sim.Shove{}, near)
				if res.Capped || res.Unpushed || !(res.Survived < edge && edge <= res.Fell && res.Fell-res.Survived <= tol) {
					t.Errorf("edge %g, %d per round, near %+v: %+v", edge, perDir, near, res)
				}
			}
		}
	}
	// An edge above Max is capped; a plant that falls unpushed says so.
	spec = Spec{Tol: tol, Max: 20}.Filled(&models.Robot{})
	capped := (&search{ctx: context.Background(), spec: spec, perDir: 2, try: func(int, sim.Shove, float64) (bool, error) { return true, nil }}).direction(0, sim.Shove{}, nil)
	if !capped.Capped || capped.Survived != 20 {
		t.Errorf("no edge below the limit: %+v", capped)
	}
	unpushed := (&search{ctx: context.Background(), spec: spec, perDir: 2, try: func(int, sim.Shove, float64) (bool, error) { return false, nil }}).direction(0, sim.Shove{}, nil)
	if !unpushed.Unpushed {
		t.Errorf("falls unpushed: %+v", unpushed)
	}
}

func TestSummary(t *testing.T) {
	// Trusted is the least Survived, Felled the least Fell and Median the
	// middle Survived, the mean of the two middle ones for an even count
	// (the sample median's definition, e.g. NIST/SEMATECH e-Handbook of
	// Statistical Methods, sec. 1.3.5.1).
	r := summarise("left", []Edge{{Survived: 7, Fell: 7.05}, {Survived: 10, Fell: 10.04}, {Survived: 8, Fell: 8.03}, {Survived: 9.5, Fell: 9.52}})
	if r.Trusted != 7 || r.Felled != 7.05 || r.Median != 8.75 {
		t.Errorf("trusted %g (want 7), felled %g (want 7.05), median %g (want 8.75)", r.Trusted, r.Felled, r.Median)
	}
	if r := summarise("left", []Edge{{Survived: 3, Fell: 3.1}, {Survived: 1, Fell: 1.1}, {Survived: 2, Fell: 2.1}}); r.Median != 2 {
		t.Errorf("median of 3, 1, 2: %g", r.Median)
	}
}

func TestStartingFromTheShoveTimeGivesTheSameVerdicts(t *testing.T) {
	// A run started from the robot saved standing at the shove time must
	// come to what the run from t = 0 with the same shove comes to (the
	// determinism DEVELOPERS.md promises), here for impulses on both sides
	// of the frontal robot's edges and two seeds.
	r, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		t.Fatal(err)
	}
	spec := Spec{}.Filled(r.Robot)
	left, _ := sim.ParseShove("impulse=1,dir=left")
	kinds := map[bool]int{}
	for _, seed := range []uint64{0, 1} {
		st := &standing{r: r, spec: spec, seed: seed}
		for _, j := range []float64{0, 4, 7, 7.5, 8, 9, 10.5, 14} {
			shove := []sim.Shove{{At: spec.At, Impulse: models.Vec2{X: -j}}}
			o, err := r.Run(spec.At+spec.Settle, sim.Options{Seed: seed, Shoves: shove})
			want := err == nil && !o.Summary.Fell
			if got, err := st.survives(left, j); err != nil || got != want {
				t.Errorf("seed %d, %g N*s: survives %v (%v) from the shove time, %v from t = 0", seed, j, got, err, want)
			}
			kinds[want]++
		}
	}
	if kinds[true] == 0 || kinds[false] == 0 {
		t.Errorf("the impulses do not straddle the edge: %v", kinds)
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
