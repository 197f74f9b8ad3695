package sim

import (
	"math"
	"testing"

	"teeter/models"
)

// block is a box of mass m standing on two pads 160 mm apart.
func block(m, k, c, travel, friction, tilt float64) *models.Robot {
	pad := func(name string, x float64) models.Pad {
		return models.Pad{Name: name, Position: models.Vec2{X: x, Y: -0.03}, Width: 0.03, Thickness: 0.01,
			Mass: 0.01, Stiffness: k, Damping: c, Travel: travel, Friction: friction}
	}
	return &models.Robot{Name: "block", Root: "block", NoiseScale: 1,
		Links:  []models.Link{{Name: "block", Mass: m, Angle: tilt, Shape: models.Shape{Kind: models.Box, Width: 0.2, Height: 0.05}}},
		Feet:   []models.Foot{{Name: "foot", Link: "block", Pads: []models.Pad{pad("left", -0.08), pad("right", 0.08)}}},
		Ground: models.Ground{Tilt: tilt}}
}

func TestPadStaticDeflection(t *testing.T) {
	const k, travel = 1e5, 0.003
	for _, m := range []float64{10, 100} {
		p, err := New(block(m, k, 200, travel, 0.8, 0), nil, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if err := p.RunFor(2); err != nil {
			t.Fatal(err)
		}
		// Static deflection of n parallel springs: m g / (n k) (Hooke's
		// law). The plant counts the pads' 10 g as part of the foot, on
		// the springs: 0.2 % more here.
		want := math.Min(m*Gravity/(2*k), travel)
		for _, pd := range p.pads {
			if rel := math.Abs(pd.compression/want - 1); rel > 0.02 {
				t.Errorf("m = %g kg: pad %s compressed %.4f mm, want %.4f mm", m, pd.name, pd.compression*1e3, want*1e3)
			}
			// Each pad carries half the weight, pads included.
			if f := m*Gravity/2 + 0.01*Gravity; math.Abs(pd.force/f-1) > 0.01 {
				t.Errorf("m = %g kg: pad %s force %.2f N, want %.2f N", m, pd.name, pd.force, f)
			}
		}
	}
}

func TestPadBounce(t *testing.T) {
	// Dropped onto its pads from just touching: a damped mass-spring.
	const m, k, c = 10.0, 1e4, 40.0
	p, err := New(block(m, k, c, 0.02, 0.8, 0), nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// Successive maxima of compression, refined by a parabola through the
	// three samples around each.
	var peaks, times []float64
	var c0, c1 float64
	for p.Time() < 1.5 {
		if err := p.Step(); err != nil {
			t.Fatal(err)
		}
		c2 := p.pads[0].compression
		if p.step > 2 && c1 > c0 && c1 >= c2 {
			d := c0 - 2*c1 + c2
			off := 0.5 * (c0 - c2) / d
			peaks = append(peaks, c1-0.25*(c0-c2)*off)
			times = append(times, p.Time()-p.dt+off*p.dt)
		}
		c0, c1 = c1, c2
	}
	if len(peaks) < 5 {
		t.Fatalf("only %d peaks", len(peaks))
	}
	static := m * Gravity / (2 * k)
	// Two pads in parallel: stiffness 2k, damping 2c. wn = sqrt(k/m),
	// zeta = c/(2 sqrt(k m)), wd = wn sqrt(1 - zeta^2), and the log
	// decrement delta = ln(x_i/x_i+1) gives zeta = delta/sqrt(4 pi^2 +
	// delta^2) (Ogata, Modern Control Engineering; any vibrations text).
	wn := math.Sqrt(2 * k / m)
	zeta := 2 * c / (2 * math.Sqrt(2*k*m))
	wd := wn * math.Sqrt(1-zeta*zeta)
	n := 4
	gotWd := 2 * math.Pi * float64(n) / (times[n] - times[0])
	delta := math.Log((peaks[0]-static)/(peaks[n]-static)) / float64(n)
	gotZeta := delta / math.Sqrt(4*math.Pi*math.Pi+delta*delta)
	t.Logf("wd %.3f rad/s (want %.3f), zeta %.4f (want %.4f)", gotWd, wd, gotZeta, zeta)
	if math.Abs(gotWd/wd-1) > 0.03 {
		t.Errorf("damped natural frequency %.3f rad/s, want %.3f", gotWd, wd)
	}
	if math.Abs(gotZeta/zeta-1) > 0.03 {
		t.Errorf("damping ratio %.4f, want %.4f", gotZeta, zeta)
	}
}

func TestCoulombFrictionOnSlope(t *testing.T) {
	// Pad friction 0.5 against the ground (the plant uses the pad's own
	// coefficient; the ground adds nothing).
	const mu = 0.5
	critical := math.Atan(mu)
	for _, tc := range []struct {
		tilt   float64
		slides bool
	}{{critical - 0.03, false}, {critical + 0.03, true}} {
		p, err := New(block(5, 1e5, 300, 0.003, mu, tc.tilt), nil, Options{})
		if err != nil {
			t.Fatal(err)
		}
		b := p.link("block").body
		// Let the drop onto the pads settle, then watch 1 s.
		if err := p.RunFor(0.3); err != nil {
			t.Fatal(err)
		}
		down := -math.Cos(tc.tilt) // unit vector down the slope has x = -cos
		x0, v0 := b.Position().X/down, b.Velocity().X/down
		if err := p.RunFor(1); err != nil {
			t.Fatal(err)
		}
		moved := b.Position().X/down - x0
		// Sliding block: a = g (sin - mu cos) (Coulomb friction, any
		// physics textbook); at rest below the angle where tan = mu.
		if !tc.slides {
			if math.Abs(moved) > 1e-4 {
				t.Errorf("tilt %.4f rad below atan(mu) %.4f: slid %.2f mm", tc.tilt, critical, moved*1e3)
			}
			continue
		}
		a := Gravity * (math.Sin(tc.tilt) - mu*math.Cos(tc.tilt))
		want := v0*1 + a/2
		if math.Abs(moved/want-1) > 0.03 {
			t.Errorf("tilt %.4f rad above atan(mu) %.4f: slid %.4f m in 1 s, want %.4f m", tc.tilt, critical, moved, want)
		}
	}
}
