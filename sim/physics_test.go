package sim

import (
	"math"
	"testing"

	"teeter/models"
)

// pendulum is a link hanging by its frame origin from a base fixed to the
// world at (0, 2), swung out by angle.
func pendulum(shape models.Shape, mass, angle float64) *models.Robot {
	return &models.Robot{Name: "pendulum", Root: "base", NoiseScale: 1,
		Links: []models.Link{
			{Name: "base", Mass: 1, Fixed: true, Shape: models.Shape{Kind: models.Box, Width: 0.05, Height: 0.05}, Position: models.Vec2{Y: 2}},
			{Name: "bob", Mass: mass, Shape: shape}},
		Joints: []models.Joint{{Name: "pivot", Kind: models.Revolute, Parent: "base", Child: "bob", Initial: angle}}}
}

// stone is a free 100 mm box of mass m at height y.
func stone(m, y float64) *models.Robot {
	return &models.Robot{Name: "stone", Root: "bob", NoiseScale: 1,
		Links: []models.Link{{Name: "bob", Mass: m, Shape: models.Shape{Kind: models.Box, Width: 0.1, Height: 0.1}, Position: models.Vec2{Y: y}}}}
}

// period measures the mean time between upward zero crossings of the
// link's angle, interpolating linearly between steps.
func period(t *testing.T, p *Plant, link string, crossings int) float64 {
	t.Helper()
	b := p.link(link).body
	var times []float64
	prev := b.Angle()
	for len(times) < crossings+1 {
		if err := p.Step(); err != nil {
			t.Fatal(err)
		}
		a := b.Angle()
		if prev < 0 && a >= 0 {
			times = append(times, p.Time()-p.dt*a/(a-prev))
		}
		prev = a
		if p.Time() > 100 {
			t.Fatal("no oscillation")
		}
	}
	return (times[len(times)-1] - times[0]) / float64(crossings)
}

// largeAmplitude is the series for a pendulum's period relative to the
// small-angle one: 1 + theta^2/16 + 11 theta^4/3072 + 173 theta^6/737280
// (any mechanics text, e.g. the expansion of the complete elliptic integral).
func largeAmplitude(theta float64) float64 {
	t2 := theta * theta
	return 1 + t2/16 + 11*t2*t2/3072 + 173*t2*t2*t2/737280
}

func TestPendulumPointBob(t *testing.T) {
	const L = 1.0
	for _, theta := range []float64{0.05, 0.5} {
		// A 5 mm disc 1 m below the pivot: its own inertia changes the
		// period by r^2/(4 L^2), about 6e-6.
		r := pendulum(models.Shape{Kind: models.Circle, Radius: 0.005, Center: models.Vec2{Y: -L}}, 1, theta)
		p, err := New(r, nil, Options{})
		if err != nil {
			t.Fatal(err)
		}
		got := period(t, p, "bob", 5)
		// Small-angle period T0 = 2 pi sqrt(L/g) (any physics textbook).
		want := 2 * math.Pi * math.Sqrt(L/Gravity) * largeAmplitude(theta)
		t.Logf("period %.6f want %.6f", got, want)
		if rel := math.Abs(got/want - 1); rel > 1e-3 {
			t.Errorf("amplitude %.2f rad: period %.5f s, want %.5f s (off by %.3f %%)", theta, got, want, rel*100)
		}
	}
}

func TestPendulumRod(t *testing.T) {
	// At the default rate, at the robot file's physics_rate and at the
	// rate the options give over it.
	for _, tc := range []struct{ file, options, want float64 }{{0, 0, 1000}, {500, 0, 500}, {500, 2000, 2000}} {
		const L, m, theta = 1.0, 2.0, 0.3
		r := pendulum(models.Shape{Kind: models.Box, Width: 0.01, Height: L, Center: models.Vec2{Y: -L / 2}}, m, theta)
		r.PhysicsRate = tc.file
		p, err := New(r, nil, Options{PhysicsRate: tc.options})
		if err != nil {
			t.Fatal(err)
		}
		if p.PhysicsRate() != tc.want {
			t.Errorf("physics_rate %g Hz, options %g Hz: steps at %g Hz, want %g Hz", tc.file, tc.options, p.PhysicsRate(), tc.want)
		}
		testRodPeriod(t, p, L, m, theta)
	}
}

func testRodPeriod(t *testing.T, p *Plant, L, m, theta float64) {
	t.Helper()
	got := period(t, p, "bob", 5)
	// Physical pendulum T = 2 pi sqrt(I/(m g d)), rod about its end
	// I = m L^2/3, d = L/2 (any physics textbook); the 10 mm width adds
	// w^2/(4 L^2) = 2.5e-5 to I.
	I := m * L * L / 3
	want := 2 * math.Pi * math.Sqrt(I/(m*Gravity*L/2)) * largeAmplitude(theta)
	if rel := math.Abs(got/want - 1); rel > 1e-3 {
		t.Errorf("period %.5f s, want %.5f s (off by %.3f %%)", got, want, rel*100)
	}
}

func TestFreeFall(t *testing.T) {
	p, err := New(stone(1, 10), nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b := p.link("bob").body
	y0 := b.Position().Y
	if err := p.RunFor(1); err != nil {
		t.Fatal(err)
	}
	// h = g t^2/2 (any physics textbook). The engine's first-order
	// integrator is off by g t dt/2, 0.1 % here.
	fell, want := y0-b.Position().Y, Gravity*1*1/2
	if rel := math.Abs(fell/want - 1); rel > 2e-3 {
		t.Errorf("fell %.5f m in 1 s, want %.5f m", fell, want)
	}
}

func TestInvertedPendulumDivergence(t *testing.T) {
	const L, m = 0.8, 1.5
	// A rod standing on its lower end, pinned there, tilted 1e-4 rad.
	r := pendulum(models.Shape{Kind: models.Box, Width: 0.01, Height: L, Center: models.Vec2{Y: L / 2}}, m, 1e-4)
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b := p.link("bob").body
	// Least-squares slope of ln(theta) against t while theta grows from
	// 2e-3 to 3e-2 rad: late enough that cosh is exp/2 within 0.1 %,
	// small enough that sin(theta) = theta within 0.02 %.
	var n, st, sy, stt, sty float64
	for b.Angle() < 0.03 {
		if err := p.Step(); err != nil {
			t.Fatal(err)
		}
		if a := b.Angle(); a > 2e-3 {
			x, y := p.Time(), math.Log(a)
			n, st, sy, stt, sty = n+1, st+x, sy+y, stt+x*x, sty+x*y
		}
		if p.Time() > 20 {
			t.Fatal("did not diverge")
		}
	}
	slope := (n*sty - st*sy) / (n*stt - st*st)
	// Linearised theta'' = (m g l / I) theta, l = L/2, I = m L^2/3
	// (rod about its end, any physics textbook).
	want := math.Sqrt(m * Gravity * (L / 2) / (m * L * L / 3))
	t.Logf("rate %.5f want %.5f", slope, want)
	if rel := math.Abs(slope/want - 1); rel > 0.01 {
		t.Errorf("divergence rate %.4f 1/s, want %.4f 1/s", slope, want)
	}
}
