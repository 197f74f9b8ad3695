package sim

import (
	"math"
	"testing"

	"teeter/models"
)

// constant commands every actuator with the same duty.
type constant float64

func (constant) Reset() {}
func (c constant) Tick(now float64, readings, commands []float64) {
	for i := range commands {
		commands[i] = float64(c)
	}
}

// slider is a base fixed to the world with a carriage on a
// prismatic joint along axis, driven by a lead screw on the joint.
func slider(carriage float64, axis models.Vec2, kind models.ActuatorKind, backlash, friction, volts float64) *models.Robot {
	r := &models.Robot{Name: "slider", Root: "base", NoiseScale: 1,
		Links: []models.Link{
			{Name: "base", Mass: 5, Fixed: true, Shape: models.Shape{Kind: models.Box, Width: 0.3, Height: 0.05}, Position: models.Vec2{Y: 1}},
			{Name: "carriage", Mass: carriage, Shape: models.Shape{Kind: models.Box, Width: 0.05, Height: 0.05}},
		},
		Joints: []models.Joint{{Name: "rail", Kind: models.Prismatic, Parent: "base", Child: "carriage", Axis: axis,
			HasLimits: true, Lower: -0.2, Upper: 0.2, Friction: friction}},
		Actuators: []models.Actuator{{Name: "screw", Kind: kind, Joint: "rail", Linear: true,
			NominalVoltage: 12, NoLoadSpeed: 0.02, StallForce: 400, TimeConstant: 0.01,
			StrokeMin: -0.15, StrokeMax: 0.15, Backlash: backlash, NoLoadCurrent: 0.3, StallCurrent: 4}},
	}
	if volts > 0 {
		r.Battery = &models.Battery{FullVoltage: volts, EmptyVoltage: volts / 2, Capacity: 1e9, InitialCharge: 1}
	}
	return r
}

func newPlant(t *testing.T, r *models.Robot, c Controller) *Plant {
	t.Helper()
	p, err := New(r, c, Options{})
	if err != nil {
		t.Fatal(err)
	}
	return p
}

// screwSpeed runs for 0.3 s, then measures the screw's and the output's
// mean speed over the next 0.5 s.
func screwSpeed(t *testing.T, p *Plant) (screw, output float64) {
	t.Helper()
	a := &p.acts[0]
	if err := p.RunFor(0.3); err != nil {
		t.Fatal(err)
	}
	s0, o0 := a.screw, a.output()
	if err := p.RunFor(0.5); err != nil {
		t.Fatal(err)
	}
	return (a.screw - s0) / 0.5, (a.output() - o0) / 0.5
}

func TestLeadScrewSpeed(t *testing.T) {
	// A DC motor's speed-torque line (any electric machines text): the
	// no-load speed is proportional to the supply voltage and the speed
	// falls linearly with load to zero at stall.
	horizontal := models.Vec2{X: 1}
	for _, volts := range []float64{12, 6} {
		p := newPlant(t, slider(0.5, horizontal, models.LeadScrew, 0, 0, volts), constant(1))
		screw, output := screwSpeed(t, p)
		want := 0.02 * volts / 12
		if math.Abs(screw/want-1) > 0.01 || math.Abs(output/want-1) > 0.01 {
			t.Errorf("%g V: screw %.5f m/s, output %.5f m/s, want %.5f m/s", volts, screw, output, want)
		}
	}
	// Lifting a weight of half the stall force: half the no-load speed.
	m := 200 / Gravity
	p := newPlant(t, slider(m, models.Vec2{Y: 1}, models.LeadScrew, 0, 0, 0), constant(1))
	screw, _ := screwSpeed(t, p)
	if want := 0.01; math.Abs(screw/want-1) > 0.02 {
		t.Errorf("lifting 200 N: %.5f m/s, want %.5f m/s", screw, want)
	}
	if f := p.acts[0].force; math.Abs(f/200-1) > 0.02 {
		t.Errorf("lifting 200 N: load read as %.2f N", f)
	}
}

func TestLeadScrewHoldsUnpowered(t *testing.T) {
	// 50 kg hanging on a vertical screw, above its 400 N stall force: a
	// lead screw is not backdrivable, so it stays put; a torque motor
	// without power lets it fall (the comparison shows the test can fail).
	for _, kind := range []models.ActuatorKind{models.LeadScrew, models.TorqueMotor} {
		p := newPlant(t, slider(50, models.Vec2{Y: 1}, kind, 0, 0, 0), nil)
		a := &p.acts[0]
		s0, o0 := a.screw, a.output()
		if err := p.RunFor(0.1); err != nil {
			t.Fatal(err)
		}
		moved := math.Abs(a.output() - o0)
		if kind == models.LeadScrew {
			if a.screw != s0 || moved > 1e-5 {
				t.Errorf("lead screw under 490 N, unpowered: screw moved %g m, output %g m", a.screw-s0, moved)
			}
			// Free fall would drop g t^2/2 = 49 mm in 0.1 s.
		} else if moved < 0.04 {
			t.Errorf("unpowered torque motor held 490 N: moved %g m", moved)
		}
	}
}

func TestBacklash(t *testing.T) {
	const b = 0.002
	// Friction on the rail holds the carriage wherever the screw leaves it.
	p := newPlant(t, slider(0.5, models.Vec2{X: 1}, models.LeadScrew, b, 2, 0), nil)
	a := &p.acts[0]
	s0 := a.screw
	// Push the carriage: it swings freely through the play and stops at
	// the edge, half the backlash from the screw (the definition of
	// backlash: free play b, centred on the screw).
	if err := p.Shove(Shove{Link: "carriage", Impulse: models.Vec2{X: 0.05}}); err != nil {
		t.Fatal(err)
	}
	maxGap := 0.0
	for range 300 {
		if err := p.Step(); err != nil {
			t.Fatal(err)
		}
		maxGap = math.Max(maxGap, a.gap())
	}
	if a.screw != s0 {
		t.Fatalf("screw moved %g m under a push", a.screw-s0)
	}
	if math.Abs(maxGap-b/2) > 2e-5 || math.Abs(a.gap()-b/2) > 2e-5 {
		t.Errorf("after a push the gap reached %.6f m and rests at %.6f m, want the edge at %.6f m", maxGap, a.gap(), b/2)
	}
	// Drive the screw towards the carriage: the output stays while the
	// screw crosses the play, then is pushed along on the other edge.
	p.SetController(constant(1))
	out0 := a.output()
	for a.screw < s0+b-1e-4 {
		if err := p.Step(); err != nil {
			t.Fatal(err)
		}
		if moved := math.Abs(a.output() - out0); moved > 1e-5 {
			t.Fatalf("output moved %g m with the screw %g m into the play of %g m", moved, s0-a.screw, b)
		}
	}
	if err := p.RunFor(0.5); err != nil {
		t.Fatal(err)
	}
	if math.Abs(a.gap()+b/2) > 2e-5 {
		t.Errorf("driven across the play, gap %.6f m, want %.6f m", a.gap(), -b/2)
	}
	_, output := screwSpeed(t, p)
	if math.Abs(output/0.02-1) > 0.01 {
		t.Errorf("output follows at %.5f m/s, want 0.02", output)
	}
	// The load on the edge is the rail's friction.
	if math.Abs(a.force/2-1) > 0.05 {
		t.Errorf("load at the edge %.3f N, want the 2 N of friction", a.force)
	}
}

func TestMountStiffness(t *testing.T) {
	// 20 kg hung from a still screw through a mount of 1e5 N/m and
	// released: it swings about the static deflection m g / k with period
	// 2 pi sqrt(m/k) (Hooke's law; undamped mass on a spring, any physics
	// textbook).
	const m, k = 20.0, 1e5
	r := slider(m, models.Vec2{Y: 1}, models.LeadScrew, 0, 0, 0)
	r.Actuators[0].MountStiffness = k
	p := newPlant(t, r, nil)
	a := &p.acts[0]
	var sum float64
	var ups []float64
	static := m * Gravity / k
	prev := 0.0
	for p.Time() < 1 {
		if err := p.Step(); err != nil {
			t.Fatal(err)
		}
		x := -a.gap() - static // deviation from the static deflection
		sum += -a.gap()
		if prev < 0 && x >= 0 {
			ups = append(ups, p.Time()-p.dt*x/(x-prev))
		}
		prev = x
	}
	mean := sum / float64(p.step)
	if math.Abs(mean/static-1) > 0.02 {
		t.Errorf("mean deflection %.5f m, want %.5f m", mean, static)
	}
	n := len(ups) - 1
	got, want := (ups[n]-ups[0])/float64(n), 2*math.Pi*math.Sqrt(m/k)
	if math.Abs(got/want-1) > 0.01 {
		t.Errorf("period %.5f s, want %.5f s", got, want)
	}
}

func TestBattery(t *testing.T) {
	// Lifting 200 N at full duty from a pack with 0.5 ohm inside. A
	// permanent-magnet DC motor's current is linear in its load: its torque
	// over the torque constant, plus the no-load current, reaching the stall
	// current at stall (Hughes, Electric Motors and Drives, ch. 3, from
	// memory): I = I0 + (Istall - I0) F/Fstall = 0.3 + 3.7 * 200/400 A.
	const lift, current = 200.0, 0.3 + (4-0.3)*200/400.0
	r := slider(lift/Gravity, models.Vec2{Y: 1}, models.LeadScrew, 0, 0, 12)
	r.Battery.InternalResistance = 0.5
	r.Battery.Capacity = 2 // C: drained visibly within a second
	p := newPlant(t, r, constant(1))
	if err := p.RunFor(0.5); err != nil {
		t.Fatal(err)
	}
	a := &p.acts[0]
	if math.Abs(a.current/current-1) > 0.02 {
		t.Errorf("current %.4f A lifting %g N, want %.4f A", a.current, lift, current)
	}
	// The pack's open-circuit voltage falls linearly with the charge drawn,
	// I t at that steady current (a linear discharge curve, as modelled),
	// and its terminal voltage is that less I R (Ohm's law).
	charge := current * p.Time()
	if want := 12 - (12-6)*charge/2 - current*0.5; math.Abs(p.battery.voltage/want-1) > 0.01 {
		t.Errorf("terminal voltage %.4f V, want %.4f V", p.battery.voltage, want)
	}
	// The screw slows with the voltage: speed = v0 V/Vnom (1 - F/Fstall).
	if want := 0.02 * p.battery.voltage / 12 * 0.5; math.Abs(a.speed/want-1) > 0.03 {
		t.Errorf("screw speed %.5f m/s at %.2f V, want %.5f", a.speed, p.battery.voltage, want)
	}
}

func TestOffsetCommandAddsToTheController(t *testing.T) {
	// The motor runs on the controller's duty plus the offset: 0.25 + 0.5
	// of a 20 mm/s no-load speed is 15 mm/s (the speed proportional to the
	// duty, TestLeadScrewSpeed), and the recorded command is the sum.
	p := newPlant(t, slider(0.5, models.Vec2{X: 1}, models.LeadScrew, 0, 0, 0), constant(0.25))
	if err := p.OffsetCommand("screw", 0.5); err != nil {
		t.Fatal(err)
	}
	screw, _ := screwSpeed(t, p)
	if want := 0.015; math.Abs(screw/want-1) > 0.01 {
		t.Errorf("duty 0.25 offset by 0.5: %.5f m/s, want %.5f m/s", screw, want)
	}
	rec := p.Recorder()
	if got := rec.At(rec.Len()-1, rec.Index("screw.command")); got != 0.75 {
		t.Errorf("recorded command %g, want 0.75", got)
	}
	if err := p.OffsetCommand("nut", 0.1); err == nil {
		t.Error("an offset for an actuator the robot lacks is taken")
	}
}
