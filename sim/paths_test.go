package sim

import (
	"math"
	"testing"

	"teeter/models"
)

// arm is a base fixed to the world with an arm on a revolute joint at the
// base's centre; the arm's link frame is at the pivot.
func arm(shape models.Shape, mass float64, j models.Joint) *models.Robot {
	j.Name, j.Kind, j.Parent, j.Child = "pivot", models.Revolute, "base", "arm"
	return &models.Robot{Name: "arm", Root: "base", NoiseScale: 1,
		Links: []models.Link{
			{Name: "base", Mass: 5, Fixed: true, Shape: models.Shape{Kind: models.Box, Width: 0.2, Height: 0.05}, Position: models.Vec2{Y: 2}},
			{Name: "arm", Mass: mass, Shape: shape},
		},
		Joints: []models.Joint{j}}
}

func TestTorqueMotorHoldsPendulumOut(t *testing.T) {
	// A 1 kg bob 0.5 m below the pivot, turned by a torque motor of 5 N*m
	// stall at a constant command: at rest where the motor's torque
	// balances gravity's, u T = m g l sin(theta) (statics of a pendulum,
	// any mechanics text). Joint damping lets it settle.
	const m, l, stall = 1.0, 0.5, 5.0
	r := arm(models.Shape{Kind: models.Circle, Radius: 0.01, Center: models.Vec2{Y: -l}}, m, models.Joint{Damping: 0.5})
	r.Actuators = []models.Actuator{{Name: "motor", Kind: models.TorqueMotor, Joint: "pivot", NominalVoltage: 12, StallForce: stall}}
	for _, u := range []float64{0.3, -0.6} {
		p := newPlant(t, r, constant(u))
		if err := p.RunFor(15); err != nil {
			t.Fatal(err)
		}
		got := p.joints[0].position()
		want := math.Asin(u * stall / (m * Gravity * l))
		if math.Abs(got-want) > 1e-3 {
			t.Errorf("command %g: pendulum at %.4f rad, want %.4f rad", u, got, want)
		}
		if w := p.link("arm").body.AngularVelocity(); math.Abs(w) > 1e-3 {
			t.Errorf("command %g: still turning at %g rad/s", u, w)
		}
	}
}

func TestFixedBallastShiftsCentreOfMass(t *testing.T) {
	// A 1 kg ballast held 50 mm along its slide on a 5 kg body: the centre
	// of mass is the mass-weighted mean of the parts' centres (definition
	// of the centre of mass).
	r := &models.Robot{Name: "ballasted", Root: "base", NoiseScale: 1,
		Links: []models.Link{{Name: "base", Mass: 5, Fixed: true, Shape: models.Shape{Kind: models.Box, Width: 0.2, Height: 0.05}, Position: models.Vec2{Y: 1}}},
		Ballast: &models.Ballast{Name: "weight", Link: "base", Mass: 1, Origin: models.Vec2{Y: 0.1}, Axis: models.Vec2{X: 1},
			Position: 0.05, Min: -0.1, Max: 0.1, Size: 0.03}}
	p := newPlant(t, r, nil)
	if err := p.RunFor(1); err != nil {
		t.Fatal(err)
	}
	got := p.centreOfMass()
	wantX, wantY := (5*0+1*0.05)/6.0, (5*1+1*1.1)/6.0
	if math.Abs(got.X-wantX) > 1e-5 || math.Abs(got.Y-wantY) > 1e-5 {
		t.Errorf("centre of mass (%.6f, %.6f), want (%.6f, %.6f)", got.X, got.Y, wantX, wantY)
	}
	if x := p.ballast.position(); math.Abs(x-0.05) > 1e-5 {
		t.Errorf("undriven ballast moved to %.6f m, written at 0.05 m", x)
	}
}

func TestPrismaticJointFriction(t *testing.T) {
	// A 5 kg carriage on a level rail with 5 N of Coulomb friction, pushed
	// by a force motor: below 5 N it stays, above it accelerates at
	// (F - 5 N)/m (Coulomb friction, any physics textbook).
	const m, friction, stall = 5.0, 5.0, 400.0
	for _, force := range []float64{4, 8} {
		p := newPlant(t, slider(m, models.Vec2{X: 1}, models.TorqueMotor, 0, friction, 0), constant(force/stall))
		x0 := p.joints[0].position()
		const d = 0.5
		if err := p.RunFor(d); err != nil {
			t.Fatal(err)
		}
		moved := p.joints[0].position() - x0
		want := math.Max(force-friction, 0) / m * d * d / 2
		if force <= friction {
			if math.Abs(moved) > 1e-6 {
				t.Errorf("%g N against %g N of friction: moved %g m", force, friction, moved)
			}
			continue
		}
		if math.Abs(moved/want-1) > 0.01 {
			t.Errorf("%g N against %g N of friction: moved %.5f m in %g s, want %.5f m", force, friction, moved, d, want)
		}
	}
}

func TestJointSpringPeriod(t *testing.T) {
	// A 2 kg disc of radius 0.1 m turning about its centre on a torsional
	// spring of 0.5 N*m/rad: T = 2 pi sqrt(I/k), I = m r^2/2 (any physics
	// textbook). Its centre is on the pivot, so gravity adds no torque.
	const m, rad, k = 2.0, 0.1, 0.5
	r := arm(models.Shape{Kind: models.Circle, Radius: rad}, m, models.Joint{Stiffness: k})
	p := newPlant(t, r, nil)
	p.link("arm").body.SetAngle(0.2)
	got := period(t, p, "arm", 4)
	want := 2 * math.Pi * math.Sqrt(m*rad*rad/2/k)
	if math.Abs(got/want-1) > 2e-3 {
		t.Errorf("period %.5f s, want %.5f s", got, want)
	}
}

func TestIMUUnderAcceleration(t *testing.T) {
	// A level carriage pushed along x at a = 2 m/s^2: the accelerometer
	// measures the specific force a - g, which points atan(a/g) away from
	// the vertical, so accel_tilt reads that much off the true tilt (an
	// accelerometer cannot tell acceleration from gravity; any inertial
	// navigation text).
	const m, a, stall = 0.5, 2.0, 400.0
	r := slider(m, models.Vec2{X: 1}, models.TorqueMotor, 0, 0, 0)
	r.NoiseScale = 0
	r.Sensors = []models.Sensor{{Name: "imu", Kind: models.IMU, Link: "carriage", Rate: 1000}}
	p := newPlant(t, r, constant(m*a/stall))
	if err := p.RunFor(0.1); err != nil {
		t.Fatal(err)
	}
	got := p.Readings()
	if want := math.Atan(a / Gravity); math.Abs(got[2]-got[0]-want) > 1e-3 {
		t.Errorf("accel_tilt %.5f rad, tilt %.5f rad: off by %.5f rad, want atan(a/g) = %.5f rad", got[2], got[0], got[2]-got[0], want)
	}
	if math.Abs(got[0]) > 1e-6 {
		t.Errorf("the carriage tilted %g rad on a level rail", got[0])
	}
}

func TestSetBacklashWhileRunning(t *testing.T) {
	// The carriage of a screw without backlash does not give under a push;
	// with 2 mm set while running it swings to the edge, half the play
	// from the screw (the definition of backlash: free play b centred on
	// the screw).
	const b = 0.002
	p := newPlant(t, slider(0.5, models.Vec2{X: 1}, models.LeadScrew, 0, 2, 0), nil)
	a := &p.acts[0]
	push := func() float64 {
		if err := p.Shove(Shove{Link: "carriage", Impulse: models.Vec2{X: 0.05}}); err != nil {
			t.Fatal(err)
		}
		if err := p.RunFor(0.3); err != nil {
			t.Fatal(err)
		}
		return a.gap()
	}
	if g := push(); math.Abs(g) > 3e-5 {
		t.Fatalf("no backlash, yet the carriage gave %g m", g)
	}
	if err := p.SetBacklash("screw", b); err != nil {
		t.Fatal(err)
	}
	if g := push(); math.Abs(g-b/2) > 3e-5 {
		t.Errorf("after setting %g m of backlash the carriage rests %g m from the screw, want %g m", b, g, b/2)
	}
	if p.SetBacklash("nothing", b) == nil || p.SetBacklash("screw", -1) == nil || p.SetBacklash("screw", math.NaN()) == nil {
		t.Error("SetBacklash accepted a missing actuator or a bad value")
	}
}

func TestHeldShoveImpulse(t *testing.T) {
	// A push of J spread over a time t as the force J/t changes the
	// momentum by F t = J, as one applied at once does (impulse-momentum
	// theorem, any physics textbook). A free box in the air, so gravity
	// alone acts besides: only x is compared.
	const m, j = 2.0, 0.6
	for _, hold := range []float64{0, 0.05} {
		p, err := New(stone(m, 100), nil, Options{Shoves: []Shove{{At: 0.01, Impulse: models.Vec2{X: j}, Hold: hold}}})
		if err != nil {
			t.Fatal(err)
		}
		b := p.link("bob").body
		if err := p.RunFor(0.01 + hold/2); err != nil {
			t.Fatal(err)
		}
		half := m * b.Velocity().X
		if err := p.RunFor(0.2); err != nil {
			t.Fatal(err)
		}
		if got := m * b.Velocity().X; math.Abs(got-j) > 1e-9 {
			t.Errorf("hold %g s: momentum changed by %.9f N*s, want %g", hold, got, j)
		}
		if hold > 0 && math.Abs(half-j/2) > 1e-9 {
			t.Errorf("hold %g s: halfway the momentum is %.9f N*s, want F t = %g", hold, half, j/2)
		}
		if w := b.AngularVelocity(); w != 0 {
			t.Errorf("hold %g s: a push through the centre of mass turned the box at %g rad/s", hold, w)
		}
	}
}

func TestScheduleReplacesTheShovesToCome(t *testing.T) {
	// A free box in the air: each shove changes its momentum along x by its
	// impulse (impulse-momentum theorem, any physics textbook), so the
	// momentum counts the shoves given.
	const m = 2.0
	p, err := New(stone(m, 100), nil, Options{Shoves: []Shove{{At: 0.1, Impulse: models.Vec2{X: 1}}, {At: 0.5, Impulse: models.Vec2{X: 2}}}})
	if err != nil {
		t.Fatal(err)
	}
	b := p.link("bob").body
	momentum := func() float64 { return m * b.Velocity().X }
	if err := p.RunFor(0.3); err != nil {
		t.Fatal(err)
	}
	// The shove at 0.2 s has passed and is dropped; the one at 0.5 s is
	// replaced by one at 0.4 s.
	if err := p.Schedule([]Shove{{At: 0.4, Impulse: models.Vec2{X: 0.5}}, {At: 0.2, Impulse: models.Vec2{X: 10}}}); err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(0.095); err != nil {
		t.Fatal(err)
	}
	if got := momentum(); math.Abs(got-1) > 1e-9 {
		t.Errorf("before 0.4 s the momentum is %.9f N*s, want the first shove's 1", got)
	}
	if err := p.RunFor(0.6); err != nil {
		t.Fatal(err)
	}
	if got := momentum(); math.Abs(got-1.5) > 1e-9 {
		t.Errorf("at the end the momentum is %.9f N*s, want 1 + 0.5", got)
	}
	if err := p.Schedule([]Shove{{At: 2, Link: "nope"}}); err == nil {
		t.Error("a shove on a link that does not exist was scheduled")
	}
}
