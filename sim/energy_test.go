package sim

import (
	"math"
	"testing"

	"github.com/jakecoffman/cp/v2"

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
		for k := range c.edges {
			if d, _ := c.ground.depth(c.point(&c.edges[k])); d > 0 {
				e += 0.5 * c.edges[k].stiffness * d * d
			}
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

// stepEnergy measures the energy of symplectic Euler's steps honestly: its
// velocities sit half a step from its positions, so the kinetic energy is
// taken with each body's velocity averaged over the last step, the
// leapfrog velocity at the positions' time (Hairer, Lubich and Wanner,
// Geometric Numerical Integration, on the Stormer-Verlet method). With the
// raw velocity a conservative double pendulum's energy wobbles by 0.24 %,
// an artefact of the staggering, not a gain.
type stepEnergy struct {
	v []cp.Vector
	w []float64
}

// step advances the plant one step and returns its energy after it.
func (s *stepEnergy) step(t *testing.T, p *Plant) float64 {
	t.Helper()
	s.v, s.w = s.v[:0], s.w[:0]
	for _, b := range p.bodies {
		s.v = append(s.v, b.Velocity())
		s.w = append(s.w, b.AngularVelocity())
	}
	if err := p.Step(); err != nil {
		t.Fatal(err)
	}
	e := mechanicalEnergy(p)
	for i, b := range p.bodies {
		v, w := b.Velocity(), b.AngularVelocity()
		vm, wm := v.Add(s.v[i]).Mult(0.5), (w+s.w[i])/2
		e += 0.5*b.Mass()*(vm.Dot(vm)-v.Dot(v)) + 0.5*b.Moment()*(wm*wm-w*w)
	}
	return e
}

func TestFrictionlessPendulumKeepsItsEnergy(t *testing.T) {
	// A 0.40 x 0.08 m, 1.7 kg box hung from a corner, released at rest with
	// its centre of mass 40 deg out, frictionless: its swing energy
	// m g d (1 - cos 40 deg) is conserved (conservation of energy;
	// Goldstein, Classical Mechanics). Over 60 s at the default rate it may
	// lose 1 % and gain nothing beyond the integrator's own error, which a
	// symplectic method keeps bounded, of relative size (omega dt)^2 with
	// the half-step velocity (Hairer, Lubich and Wanner): neither the swing
	// energy nor the angle at any turning point may pass the release by
	// more than that fraction. The pendulum's omega^2 = m g d / I about the
	// pivot (physical pendulum, any mechanics text).
	const m, w, h, theta0 = 1.7, 0.08, 0.40, 40 * math.Pi / 180
	lean := math.Atan((w / 2) / (h / 2)) // of the centre of mass from the box's long side
	r := pendulum(models.Shape{Kind: models.Box, Width: w, Height: h, Center: models.Vec2{X: w / 2, Y: -h / 2}}, m, theta0-lean)
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	d := math.Hypot(w/2, h/2)
	swing0 := m * Gravity * d * (1 - math.Cos(theta0))
	hanging := m * Gravity * (2 - d) // the centre of mass straight below the pivot at y = 2
	var s stepEnergy
	swingOf := func() float64 { return s.step(t, p) - hanging }
	angle := func() float64 { return p.joints[0].position() + lean }
	// Turning points: where the rate changes sign, refined by the parabola
	// through the three angles around it.
	a0, a1 := angle(), angle()
	widest, swing := 0.0, 0.0
	for p.Time() < 60 {
		swing = swingOf()
		a2 := angle()
		if (a1-a0)*(a2-a1) < 0 {
			den := a0 - 2*a1 + a2
			top := a1 - (a2-a0)*(a2-a0)/(8*den)
			widest = math.Max(widest, math.Abs(top))
		}
		a0, a1 = a1, a2
	}
	loss := 1 - swing/swing0
	inertia := m*(w*w+h*h)/12 + m*d*d
	bound := m * Gravity * d / inertia * p.dt * p.dt
	t.Logf("swing energy %.5f J, after 60 s %.5f J: lost %.4f %%; widest turning point %.5f deg (released at %.5f deg); integrator bound %.2g",
		swing0, swing, loss*100, widest*180/math.Pi, theta0*180/math.Pi, bound)
	if loss > 0.01 || loss < -bound {
		t.Errorf("lost %.4f %% of the swing energy in 60 s, want at most 1 %% and no gain beyond %.2g %%", loss*100, bound*100)
	}
	if widest > theta0*(1+bound) {
		t.Errorf("swung out to %.5f deg, beyond the release at %.5f deg", widest*180/math.Pi, theta0*180/math.Pi)
	}
}

func TestFrictionlessDoublePendulumKeepsItsEnergy(t *testing.T) {
	// Two 1 kg, 0.5 m bars, the upper hung from a fixed base, released at
	// rest at 1 rad and 0.5 rad more: a chaotic conservative system whose
	// energy is constant (conservation of energy; Goldstein, Classical
	// Mechanics). Over 20 s it may lose 2 % and gain 0.1 % of its swing
	// energy (the integrator's bounded error).
	const m, l, w = 1.0, 0.5, 0.05
	bar := models.Shape{Kind: models.Box, Width: w, Height: l, Center: models.Vec2{Y: -l / 2}}
	r := pendulum(bar, m, 1)
	r.Links = append(r.Links, models.Link{Name: "lower", Mass: m, Shape: bar})
	r.Joints = append(r.Joints, models.Joint{Name: "elbow", Kind: models.Revolute, Parent: "bob", Child: "lower",
		ParentAnchor: models.Vec2{Y: -l}, Initial: 0.5})
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// Hanging straight down, the centres of mass are l/2 and 3l/2 below
	// the pivot at y = 2.
	hanging := m * Gravity * ((2 - l/2) + (2 - 3*l/2))
	e0 := mechanicalEnergy(p)
	swing0 := e0 - hanging
	var s stepEnergy
	hi, lo := e0, e0
	for p.Time() < 20 {
		e := s.step(t, p)
		hi, lo = math.Max(hi, e), math.Min(lo, e)
	}
	gain, loss := (hi-e0)/swing0, (e0-lo)/swing0
	t.Logf("swing energy %.4f J: over 20 s at most %.4f %% above, %.4f %% below", swing0, gain*100, loss*100)
	if gain > 0.001 {
		t.Errorf("gained %.3f %% of its swing energy", gain*100)
	}
	if loss > 0.02 {
		t.Errorf("lost %.2f %% of its swing energy", loss*100)
	}
}

// stopEnergy is the energy in the pads' end stops (1/2 ks x^2 past the
// travel).
func stopEnergy(p *Plant) float64 {
	e := 0.0
	for i := range p.pads {
		c := p.pads[i].contact
		for k := range c.edges {
			ed := &c.edges[k]
			if d, _ := c.ground.depth(c.point(ed)); d > ed.travel {
				e += 0.5 * stopStiffness * ed.stiffness * (d - ed.travel) * (d - ed.travel)
			}
		}
	}
	return e
}

func TestHeldBipedDroppedNeverGainsEnergy(t *testing.T) {
	// The frontal biped, screws held, tipped 3 deg and let go on the edge
	// of its lowest pad: it falls onto its pads, which bottom out on their
	// stops. A passive mechanism with dampers cannot gain energy
	// (conservation of energy; Goldstein, Classical Mechanics): its total
	// energy may never rise more than 0.5 % of what the drop releases
	// above its start, the first hard-stop impact included.
	r := loadBuiltin(t, "frontal")
	r.NoiseScale = 0
	r.Links[0].Angle = 3 * math.Pi / 180
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	energy := func() float64 { return mechanicalEnergy(p) + stopEnergy(p) }
	var s stepEnergy
	e0 := energy()
	hi, stopped := e0, false
	for p.Time() < 5 {
		e := s.step(t, p) + stopEnergy(p)
		hi = math.Max(hi, e)
		for i := range p.pads {
			stopped = stopped || p.pads[i].stop > 0
		}
	}
	released := e0 - energy()
	t.Logf("the drop released %.4f J; energy rose at most %.3g J (%.3f %%) above its start; a stop was hit: %v", released, hi-e0, 100*(hi-e0)/released, stopped)
	if !stopped {
		t.Fatal("no pad reached its stop: the test would see no hard-stop impact")
	}
	if hi-e0 > 0.005*released {
		t.Errorf("energy rose %.3g J above its start (%.2f %% of the %.4f J released)", hi-e0, 100*(hi-e0)/released, released)
	}
}

func TestPendulumWithASlideKeepsItsEnergy(t *testing.T) {
	// A 1 kg bar swinging from a fixed base with a 0.5 kg ballast held
	// 0.1 m out along a slide across it: one rigid body as far as energy
	// goes, conserved when frictionless (conservation of energy;
	// Goldstein, Classical Mechanics). The slide turns with the bar, which
	// drifted cp's groove off its line each step as it did the pivot.
	const m, l = 1.0, 0.5
	r := pendulum(models.Shape{Kind: models.Box, Width: 0.05, Height: l, Center: models.Vec2{Y: -l / 2}}, m, 0.7)
	r.Ballast = &models.Ballast{Name: "weight", Link: "bob", Mass: 0.5, Origin: models.Vec2{Y: -l}, Axis: models.Vec2{X: 1},
		Position: 0.1, Min: -0.2, Max: 0.2, Size: 0.03}
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var s stepEnergy
	e0 := s.step(t, p)
	lowest := math.Inf(1)
	for p.Time() < 60 {
		lowest = math.Min(lowest, s.step(t, p))
	}
	// The swing energy: above the lowest the system can be, the bar and
	// ballast hanging with their joint centre of mass below the pivot.
	bar, ballast := models.Vec2{Y: -l / 2}, models.Vec2{X: 0.1, Y: -l}
	cm := math.Hypot((m*bar.X+0.5*ballast.X)/1.5, (m*bar.Y+0.5*ballast.Y)/1.5)
	hanging := 1.5 * Gravity * (2 - cm)
	swing0 := e0 - hanging
	loss := (e0 - lowest) / swing0
	t.Logf("swing energy %.4f J; lowest over 60 s %.4f %% below", swing0, loss*100)
	if loss > 0.01 {
		t.Errorf("lost %.2f %% of its swing energy in 60 s", loss*100)
	}
}
