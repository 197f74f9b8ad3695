package sim

import (
	"errors"
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

// post is a rigid 5 kg body on one pad of width w at its link origin:
// its centre of mass sits h above the pad's bottom, with a small moment
// of inertia of its own, tilted by tilt.
func post(w, h, inertia, tilt float64) *models.Robot {
	const thickness = 0.01
	com := models.Vec2{Y: h - thickness}
	return &models.Robot{Name: "post", Root: "post", NoiseScale: 1,
		Links: []models.Link{{Name: "post", Mass: 5, Angle: tilt, COM: &com, Inertia: inertia,
			Shape: models.Shape{Kind: models.Box, Width: 0.01, Height: 1.2 * h, Center: models.Vec2{Y: 0.6 * h}}}},
		Feet: []models.Foot{{Name: "foot", Link: "post", Pads: []models.Pad{{Name: "pad", Position: models.Vec2{Y: -thickness / 2},
			Width: w, Thickness: thickness, Mass: 1e-6, Stiffness: 2e6, Damping: 2e3, Travel: 0.002, Friction: 0.9}}}}}
}

func TestBlockTipsPastItsPadsOuterEdge(t *testing.T) {
	// A rigid body on one pad stands while its centre of mass is over the
	// pad and tips once it has passed the outer edge: the static tipping
	// angle atan((w/2)/h) (statics: the ground's reaction cannot leave
	// the support). Half a degree either side of it. Standing, it rocks
	// from edge to edge, losing energy at each landing (a rocking block),
	// so it never leans further than it started.
	const h = 0.2
	for _, w := range []float64{0.02, 0.06} {
		critical := math.Atan(w / 2 / h)
		for _, tc := range []struct {
			tilt  float64
			falls bool
		}{{critical - 0.5*math.Pi/180, false}, {critical + 0.5*math.Pi/180, true}} {
			p, err := New(post(w, h, 1e-4, tc.tilt), nil, Options{})
			if err != nil {
				t.Fatal(err)
			}
			widest := 0.0
			for p.Time() < 4 && err == nil {
				err = p.Step()
				widest = math.Max(widest, math.Abs(tilt(p.link("post").body)))
			}
			fell := errors.Is(err, ErrFallen)
			if err != nil && !fell {
				t.Fatal(err)
			}
			if fell != tc.falls {
				t.Errorf("pad %g mm, tilted %.2f deg (tipping angle %.2f deg): fell %v, want %v (%v)",
					w*1e3, tc.tilt*180/math.Pi, critical*180/math.Pi, fell, tc.falls, err)
			}
			if !fell && widest > tc.tilt+1e-3 {
				t.Errorf("pad %g mm: stood, but leaned to %.3f deg from %.3f deg", w*1e3, widest*180/math.Pi, tc.tilt*180/math.Pi)
			}
		}
	}
}

func TestCapturePointBoundGrowsWithThePadsEdge(t *testing.T) {
	// Capture point of the linear inverted pendulum (Pratt et al., 2006):
	// with the centre of pressure at most at the support's edge x_edge
	// from below the centre of mass, a push J is recoverable only if
	// J / m <= sqrt(g/h) x_edge. A rigid pole with its mass high on one
	// pad, pushed at its centre of mass: the largest push it survives
	// (found to 1 %) must stay under the bound and grow with the pad's
	// half-width in proportion, as the bound does.
	const m, h = 5.0, 0.6
	bound := func(w float64) float64 { return m * math.Sqrt(Gravity/h) * w / 2 }
	survives := func(w, j float64) bool {
		p, err := New(post(w, h, 1e-3, 0), nil, Options{Shoves: []Shove{{At: 0.5, Impulse: models.Vec2{X: j}}}})
		if err != nil {
			t.Fatal(err)
		}
		err = p.RunFor(4)
		if err != nil && !errors.Is(err, ErrFallen) {
			t.Fatal(err)
		}
		return err == nil
	}
	largest := map[float64]float64{}
	for _, w := range []float64{0.02, 0.06} {
		lo, hi := 0.0, 2*bound(w)
		for hi-lo > 0.01*bound(w) {
			if mid := (lo + hi) / 2; survives(w, mid) {
				lo = mid
			} else {
				hi = mid
			}
		}
		largest[w] = lo
		t.Logf("pad %g mm: survives %.4f N*s, capture-point bound %.4f N*s (%.0f %%)", w*1e3, lo, bound(w), 100*lo/bound(w))
		if lo > bound(w)*1.02 {
			t.Errorf("pad %g mm: survives %.4f N*s, beyond the bound %.4f N*s", w*1e3, lo, bound(w))
		}
		if lo < 0.7*bound(w) {
			t.Errorf("pad %g mm: survives only %.4f N*s, under 70 %% of the bound %.4f N*s", w*1e3, lo, bound(w))
		}
	}
	if r := largest[0.06] / largest[0.02]; math.Abs(r/3-1) > 0.1 {
		t.Errorf("a pad three times as wide survives %.2f times the push, want 3 within 10 %%", r)
	}
}

func TestTiltedRobotStartsWithItsPadsOnTheGround(t *testing.T) {
	// The initial placement rests the lowest pad corner on the ground, and
	// a pad touches at its corners: the robot starts touching, neither
	// sunk in nor dropped from above (geometry).
	for _, tilt := range []float64{0, 3 * math.Pi / 180, -0.1} {
		r := loadBuiltin(t, "frontal")
		r.Links[0].Angle = tilt
		p, err := New(r, nil, Options{})
		if err != nil {
			t.Fatal(err)
		}
		deepest := math.Inf(-1)
		for i := range p.pads {
			c := p.pads[i].contact
			for k := range c.edges {
				d, _ := c.ground.depth(c.point(&c.edges[k]))
				deepest = math.Max(deepest, d)
			}
		}
		if math.Abs(deepest) > 1e-12 {
			t.Errorf("tilted %.3f rad: the lowest pad corner starts %.3g m into the ground", tilt, deepest)
		}
	}
}

func TestIdenticalPadsShareTheStopEvenly(t *testing.T) {
	// A rigid block on three identical pads, evenly spaced under its
	// centre of mass and pressed past their travel: flat on the ground,
	// each pad is pressed as far as the others, so identical springs and
	// stops carry the same load (statics of a rigid body on equal
	// parallel springs, any strength of materials text).
	r := block(300, 1e5, 200, 0.003, 0.8, 0)
	f := &r.Feet[0]
	f.Pads = append(f.Pads, f.Pads[0])
	f.Pads[2].Name, f.Pads[2].Position.X = "middle", 0
	p, err := New(r, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if err := p.RunFor(2); err != nil {
		t.Fatal(err)
	}
	total, stops := 0.0, 0.0
	for _, pd := range p.pads {
		total += pd.force
		stops += pd.stop
	}
	if !(stops > 0.5*total) {
		t.Fatalf("the stops carry %.1f N of %.1f N: the test would not see them", stops, total)
	}
	for _, pd := range p.pads {
		if math.Abs(pd.force/(total/3)-1) > 0.01 || math.Abs(pd.stop/(stops/3)-1) > 0.01 {
			t.Errorf("pad %s carries %.1f N (stop %.1f N); a third is %.1f N (stop %.1f N)", pd.name, pd.force, pd.stop, total/3, stops/3)
		}
	}
}
