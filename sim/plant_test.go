package sim

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// stick is a pole on a free pin on a foot with two pads: nothing holds it.
func stick(tilt, maxTilt float64) *models.Robot {
	pad := func(name string, x float64) models.Pad {
		return models.Pad{Name: name, Position: models.Vec2{X: x, Y: -0.02}, Width: 0.02, Thickness: 0.01,
			Mass: 0.02, Stiffness: 5e4, Damping: 100, Travel: 0.002, Friction: 0.8}
	}
	return &models.Robot{Name: "stick", Root: "foot", NoiseScale: 1,
		Links: []models.Link{
			{Name: "foot", Mass: 1, Shape: models.Shape{Kind: models.Box, Width: 0.2, Height: 0.03}},
			{Name: "pole", Mass: 1, Shape: models.Shape{Kind: models.Capsule, Length: 0.6, Radius: 0.01, Center: models.Vec2{Y: 0.3}}},
		},
		Joints: []models.Joint{{Name: "ankle", Kind: models.Revolute, Parent: "foot", Child: "pole",
			ParentAnchor: models.Vec2{Y: 0.02}, Initial: tilt}},
		Sensors: []models.Sensor{{Name: "imu", Kind: models.IMU, Link: "pole", Rate: 100}},
		Feet:    []models.Foot{{Name: "foot", Link: "foot", Pads: []models.Pad{pad("heel", -0.08), pad("toe", 0.08)}}},
		Fall:    models.FallLimits{MaxTilt: maxTilt, TorsoLink: "pole"},
	}
}

func TestFallByTilt(t *testing.T) {
	p, err := New(stick(0.05, 0.5), nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	err = p.RunFor(5)
	if !errors.Is(err, ErrFallen) {
		t.Fatalf("an unheld pole did not fall: %v", err)
	}
	f, fell := p.Fall()
	if !fell || f.Link != "pole" || !strings.Contains(f.Reason, "tilted") || f.Time <= 0 {
		t.Errorf("fall = %+v, %v", f, fell)
	}
	// A fallen plant stays where it stopped.
	now := p.Time()
	if err2 := p.Step(); !errors.Is(err2, ErrFallen) || p.Time() != now {
		t.Errorf("stepping after the fall: %v, time %g -> %g", err2, now, p.Time())
	}
}

func TestFallByTouch(t *testing.T) {
	// No tilt limit: the pole must hit the ground.
	p, err := New(stick(0.05, 0), nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(5); !errors.Is(err, ErrFallen) {
		t.Fatalf("got %v, want a fall", err)
	}
	if f, _ := p.Fall(); f.Link != "pole" || !strings.Contains(f.Reason, "touched the ground") {
		t.Errorf("fall = %+v", f)
	}
	// Standing upright it does not fall in the same time: the check is
	// not firing on the pads.
	p, _ = New(stick(0, 0), nil, Options{})
	if err := p.RunFor(0.5); err != nil {
		t.Errorf("upright pole: %v", err)
	}
}

func TestBlowUp(t *testing.T) {
	p, err := New(stick(0, 0.5), nil, Options{Shoves: []Shove{{At: 0.01, Link: "pole", Impulse: models.Vec2{X: 1e6}}}})
	if err != nil {
		t.Fatal(err)
	}
	err = p.RunFor(1)
	if !errors.Is(err, ErrBlowUp) || !strings.Contains(err.Error(), "pole") && !strings.Contains(err.Error(), "foot") {
		t.Fatalf("got %v, want a blow-up naming a body", err)
	}
	var s Snapshot
	p.Snapshot(&s)
	for _, l := range s.Links {
		if !finite(l.Position.X, l.Position.Y, l.Angle) {
			t.Errorf("snapshot after blow-up shows %+v", l)
		}
	}
	for i := 0; i < p.rec.Len(); i++ {
		for c := range p.rec.Columns() {
			if !finite(p.rec.At(i, c)) {
				t.Fatalf("recorded %g in %s", p.rec.At(i, c), p.rec.Columns()[c])
			}
		}
	}
}

// brokenBlock is a controller whose tick panics from at on, with an error
// worded as the control package words a failing block.
type brokenBlock struct{ at float64 }

const brokenBlockText = `control: block "body_loop" (pid): output is not finite`

func (brokenBlock) Reset() {}
func (c brokenBlock) Tick(now float64, readings, commands []float64) {
	if now >= c.at {
		panic(errors.New(brokenBlockText))
	}
}

// failingSolver is a constraint that panics inside the engine step, as cp
// does when one of its assertions fails.
type failingSolver struct{}

func (failingSolver) PreStep(dt float64)                { panic("solver failed") }
func (failingSolver) ApplyCachedImpulse(dtCoef float64) {}
func (failingSolver) ApplyImpulse(dt float64)           {}
func (failingSolver) GetImpulse() float64               { return 0 }

func TestAPanicIsBlamedOnWhereItHappened(t *testing.T) {
	// A panic in the controller's tick is the controller's failure, with
	// the panic's own text kept word for word; one inside the engine step
	// is the physics'.
	p, err := New(stick(0, 0.5), brokenBlock{at: 0.1}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	err = p.RunFor(1)
	if !errors.Is(err, ErrController) || errors.Is(err, ErrBlowUp) || !strings.Contains(err.Error(), brokenBlockText) {
		t.Fatalf("a panicking controller gave %v, want ErrController carrying %q", err, brokenBlockText)
	}
	// The tick at 0.1 s failed, before its physics step.
	if got := p.Time(); math.Abs(got-0.1) > 1e-9 {
		t.Errorf("stopped at %g s, want 0.1 s", got)
	}
	if again := p.Step(); again != err {
		t.Errorf("stepping on after the failure: %v, want the same error", again)
	}

	p, err = New(stick(0, 0.5), NewHoldPose(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	p.space.AddConstraint(cp.NewConstraint(failingSolver{}, p.links[0].body, p.links[1].body))
	err = p.Step()
	if !errors.Is(err, ErrBlowUp) || errors.Is(err, ErrController) || !strings.Contains(err.Error(), "engine failure: solver failed") {
		t.Fatalf("a panic in the engine gave %v, want ErrBlowUp for an engine failure", err)
	}
}

func loadBuiltin(t testing.TB, name string) *models.Robot {
	t.Helper()
	r, err := models.Load("builtin:" + name)
	if err != nil {
		t.Fatal(err)
	}
	return r
}

func TestBuiltinsStand(t *testing.T) {
	for _, name := range models.BuiltinNames() {
		p, err := New(loadBuiltin(t, name), NewHoldPose(), Options{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if err := p.RunFor(20); err != nil {
			t.Errorf("%s with hold pose: %v", name, err)
		}
	}
}

func TestFrontalFallsWhenShoved(t *testing.T) {
	// A hard sideways push at the torso tips the held frontal robot over:
	// 30 N*s on 10-15 kg is 2-3 m/s, far past what its feet can catch.
	r := loadBuiltin(t, "frontal")
	sh, err := ParseShove("at=1s,impulse=30N*s,dir=left")
	if err != nil {
		t.Fatal(err)
	}
	p, err := New(r, NewHoldPose(), Options{Shoves: []Shove{sh}})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(10); !errors.Is(err, ErrFallen) {
		t.Errorf("after a hard shove: %v, want a fall", err)
	}
	if f, _ := p.Fall(); f.Time < 1 {
		t.Errorf("fell at %g s, before the shove", f.Time)
	}
}

func record(t *testing.T, seed uint64) []byte {
	t.Helper()
	r := loadBuiltin(t, "frontal")
	shoves := []Shove{{At: 0.5, Impulse: models.Vec2{X: 1}}, {At: 1, Impulse: models.Vec2{X: -2}, Hold: 0.1}}
	p, err := New(r, NewHoldPose(), Options{Seed: seed, Shoves: shoves})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(2); err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := p.Recorder().WriteCSV(&b); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func TestDeterminism(t *testing.T) {
	if r := loadBuiltin(t, "frontal"); r.NoiseScale == 0 {
		t.Fatal("frontal has no noise; the test would not see the seed")
	}
	a, b, c := record(t, 7), record(t, 7), record(t, 8)
	if !bytes.Equal(a, b) {
		t.Error("same model, scenario and seed gave different recordings")
	}
	if bytes.Equal(a, c) {
		t.Error("a different seed gave the same recording")
	}
}

func TestStepDoesNotAllocate(t *testing.T) {
	r := loadBuiltin(t, "frontal")
	p, err := New(r, NewHoldPose(), Options{RecordCapacity: 1000})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(1); err != nil {
		t.Fatal(err)
	}
	var s Snapshot
	p.Snapshot(&s)
	allocs := testing.AllocsPerRun(2000, func() {
		if err := p.Step(); err != nil {
			t.Fatal(err)
		}
		p.Snapshot(&s)
	})
	if allocs != 0 {
		t.Errorf("Step and Snapshot allocate %g times per step", allocs)
	}
}

func TestRecorder(t *testing.T) {
	r := loadBuiltin(t, "frontal")
	p, err := New(r, NewHoldPose(), Options{RecordCapacity: 50, ControlRate: 100})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(1); err != nil {
		t.Fatal(err)
	}
	rec := p.Recorder()
	// 1 s at 100 Hz is ticks at 0, 0.01, ... 0.99 s: 100 rows, the last 50 kept.
	if rec.Len() != 50 {
		t.Fatalf("%d rows, want 50", rec.Len())
	}
	times := rec.Column("time")
	if math.Abs(times[0]-0.5) > 1e-9 || math.Abs(times[49]-0.99) > 1e-9 {
		t.Errorf("ring holds %g..%g s, want 0.5..0.99 s", times[0], times[49])
	}
	for _, name := range append(models.Channels(r), "hip_left.gap", "left_inner.force", "com.x", "cop.x", "torso_tilt", "battery.voltage") {
		if rec.Index(name) < 0 {
			t.Errorf("no column %q", name)
		}
	}
	var b bytes.Buffer
	if err := rec.WriteCSV(&b); err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	if len(lines) != 51 || !strings.HasPrefix(lines[0], "time [s],") || !strings.Contains(lines[0], "hip_left.gap [m]") {
		t.Errorf("CSV has %d lines, header %q", len(lines), lines[0])
	}
	// Half the weight of a robot standing still rests on each foot.
	g := rec.Column("left_inner.force")[49] + rec.Column("left_outer.force")[49] + rec.Column("right_inner.force")[49] + rec.Column("right_outer.force")[49]
	if w := r.TotalMass() * Gravity; math.Abs(g/w-1) > 0.02 {
		t.Errorf("foot loads add up to %.2f N, the robot weighs %.2f N", g, w)
	}
}

func TestChannels(t *testing.T) {
	r := &models.Robot{Sensors: []models.Sensor{
		{Name: "a", Kind: models.IMU}, {Name: "b", Kind: models.JointPosition}, {Name: "c", Kind: models.FootLoad}}}
	got := strings.Join(models.Channels(r), " ")
	if want := "a.tilt a.rate a.accel_tilt b.position c.force"; got != want {
		t.Errorf("Channels = %q, want %q (the contract in DEVELOPERS.md)", got, want)
	}
}

func TestIMUAtRest(t *testing.T) {
	// A still link tilted by a: gyro 0, the accelerometer sees gravity
	// tilted by a (specific force of a body at rest is -g).
	const a = 0.1
	r := &models.Robot{Name: "post", Root: "post", NoiseScale: 1,
		Links:   []models.Link{{Name: "post", Mass: 1, Fixed: true, Angle: a, Position: models.Vec2{Y: 1}, Shape: models.Shape{Kind: models.Box, Width: 0.02, Height: 0.3}}},
		Sensors: []models.Sensor{{Name: "imu", Kind: models.IMU, Link: "post", Rate: 100}}}
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(0.2); err != nil {
		t.Fatal(err)
	}
	got := p.Readings()
	if math.Abs(got[0]-a) > 1e-4 || math.Abs(got[1]) > 1e-4 || math.Abs(got[2]-a) > 1e-3 {
		t.Errorf("imu reads tilt %g, rate %g, accel_tilt %g; want %g, 0, %g", got[0], got[1], got[2], a, a)
	}
}

func TestParseShove(t *testing.T) {
	s, err := ParseShove("at=2s, impulse=3 N*s, dir=left, link=torso, point=0:10cm, hold=50ms")
	if err != nil {
		t.Fatal(err)
	}
	if s.At != 2 || s.Link != "torso" || s.Point == nil || math.Abs(s.Point.Y-0.1) > 1e-12 || s.Hold != 0.05 ||
		math.Abs(s.Impulse.X+3) > 1e-12 || math.Abs(s.Impulse.Y) > 1e-12 {
		t.Errorf("got %+v", s)
	}
	s, err = ParseShove("impulse=2,dir=90")
	if err != nil || math.Abs(s.Impulse.Y-2) > 1e-12 || math.Abs(s.Impulse.X) > 1e-12 {
		t.Errorf("dir in degrees: %+v, %v", s, err)
	}
	for _, bad := range []string{"", "impulse=3", "dir=left", "impulse=3 N*s,dir=sideways", "impulse=3 m,dir=left",
		"impulse=3,dir=left,at=-1s", "impulse=3,dir=left,colour=red", "impulse=3,dir=left,point=1", "impulse"} {
		if _, err := ParseShove(bad); err == nil {
			t.Errorf("ParseShove(%q) accepted", bad)
		}
	}
}

func TestSnapshotCopy(t *testing.T) {
	r := loadBuiltin(t, "sagittal")
	p, err := New(r, NewHoldPose(), Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(0.5); err != nil {
		t.Fatal(err)
	}
	var a, b Snapshot
	p.Snapshot(&a)
	b.CopyFrom(&a)
	if len(b.Links) != len(r.Links) || len(b.Pads) != 2 || !b.HasBallast || len(b.IMUs) != 1 || b.Time != 0.5 {
		t.Errorf("copy: %d links, %d pads, ballast %v, %d imus, t %g", len(b.Links), len(b.Pads), b.HasBallast, len(b.IMUs), b.Time)
	}
	a.Links[0].Angle = 42
	if b.Links[0].Angle == 42 {
		t.Error("copy shares the source's slices")
	}
	if !b.InContact || b.SupportMin >= b.SupportMax {
		t.Errorf("standing robot: contact %v, support %g..%g", b.InContact, b.SupportMin, b.SupportMax)
	}
}

func TestPotentiometer(t *testing.T) {
	// A screw at 20 mm/s read by a 6-bit pot over [-0.2, 0.2] m at 100 Hz
	// with 3 samples of latency: each reading is the position of 30 ms
	// before, to the nearest of 63 steps of 6.35 mm (an ideal n-bit
	// converter, 2^n - 1 steps over its range).
	r := slider(0.5, models.Vec2{X: 1}, models.LeadScrew, 0, 0, 0)
	r.Sensors = []models.Sensor{{Name: "pot", Kind: models.JointPosition, Joint: "rail", Rate: 100, Latency: 3,
		Bits: 6, Min: -0.2, Max: 0.2}}
	p, err := New(r, constant(1), Options{ControlRate: 100})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(1); err != nil {
		t.Fatal(err)
	}
	rec := p.Recorder()
	pos, got := rec.Column("rail.position"), rec.Column("pot.position")
	q := 0.4 / 63
	for i := 3; i < len(got); i++ {
		want := -0.2 + math.Round((pos[i-3]+0.2)/q)*q
		if math.Abs(got[i]-want) > 1e-12 {
			t.Fatalf("row %d: pot reads %.6f, want %.6f (position 30 ms before %.6f)", i, got[i], want, pos[i-3])
		}
	}
	if steps := (got[len(got)-1] - got[3]) / q; math.Abs(steps-math.Round(steps)) > 1e-9 || got[len(got)-1] <= got[3] {
		t.Errorf("readings not on the converter's steps or not rising: %v", got[len(got)-5:])
	}
}

func TestGroundStep(t *testing.T) {
	g := newGround(0, 0.5, 0.02)
	// Geometry of a 20 mm step up at x = 0.5 m.
	for _, tc := range []struct {
		p     [2]float64
		depth float64
		nx    float64
	}{
		{[2]float64{0, -0.001}, 0.001, 0},     // below the lower floor
		{[2]float64{0.6, 0.015}, 0.005, 0},    // inside the step, nearer its top
		{[2]float64{0.502, 0.005}, 0.002, -1}, // inside the step, nearer its riser
		{[2]float64{0.49, 0.01}, -0.01, 0},    // above the lower floor, beside the riser
		{[2]float64{0.7, 0.03}, -0.01, 0},     // above the step
	} {
		d, n := g.depth(cp.Vector{X: tc.p[0], Y: tc.p[1]})
		if math.Abs(d-tc.depth) > 1e-12 || n.X != tc.nx {
			t.Errorf("depth at %v = %g, normal %v; want %g, normal x %g", tc.p, d, n, tc.depth, tc.nx)
		}
	}
	// A block standing on the step's top rests there, not on the floor.
	r := block(5, 1e5, 200, 0.003, 0.8, 0)
	r.Links[0].Position.X = 0.7
	r.Ground = models.Ground{StepX: 0.5, StepHeight: 0.02}
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(1); err != nil {
		t.Fatal(err)
	}
	// Pad bottoms 35 mm under the block's centre, on the 20 mm step,
	// pressed in by m g / (2 k).
	y, want := p.link("block").world(models.Vec2{}).Y, 0.02+0.035-5*Gravity/2e5
	if math.Abs(y-want) > 1e-4 {
		t.Errorf("block on the step at y = %.5f m, want %.5f m", y, want)
	}
}

func TestRecordRate(t *testing.T) {
	// Rows at the record rate, whatever the controller's (a sampling rate
	// of f Hz is a row every 1/f s, by definition); a rate that is no whole
	// fraction of the physics rate is refused.
	for _, rate := range []float64{1000, 250} {
		p, err := New(stick(0, 0), nil, Options{ControlRate: 100, RecordRate: rate})
		if err != nil {
			t.Fatal(err)
		}
		if err := p.RunFor(0.5); err != nil {
			t.Fatal(err)
		}
		tm := p.Recorder().Column("time")
		if len(tm) != int(0.5*rate) {
			t.Errorf("record rate %g Hz: %d rows in 0.5 s, want %g", rate, len(tm), 0.5*rate)
		}
		for i := 1; i < len(tm); i++ {
			if math.Abs(tm[i]-tm[i-1]-1/rate) > 1e-12 {
				t.Fatalf("record rate %g Hz: rows %d and %d are %g s apart", rate, i-1, i, tm[i]-tm[i-1])
			}
		}
	}
	if _, err := New(stick(0, 0), nil, Options{RecordRate: 300}); err == nil {
		t.Error("a record rate of 300 Hz at 1 kHz physics was taken")
	}
}
