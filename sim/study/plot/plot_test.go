package plot

import (
	"context"
	"image/color"
	"math"
	"strings"
	"testing"

	"teeter/sim/rig"
	"teeter/sim/study/sweep"
)

func TestBacklashAxisReadsInMillimetres(t *testing.T) {
	// A backlash swept over 0 to 1 mm is stored in metres (SI inside) and
	// read in millimetres on the plot: 1 m = 1000 mm (the SI brochure).
	r, err := rig.Load("builtin:pendulum", "", "")
	if err != nil {
		t.Fatal(err)
	}
	backlash, err := sweep.ParseAxis("actuators.backlash=0:1mm:3")
	if err != nil {
		t.Fatal(err)
	}
	kp, err := sweep.ParseAxis("ankle_loop.kp=2:6:2")
	if err != nil {
		t.Fatal(err)
	}
	for _, axes := range [][]sweep.Axis{{backlash}, {backlash, kp}} {
		res, err := sweep.Run(context.Background(), r, sweep.Spec{Axes: axes, Metrics: []string{"peak_tilt"}, Duration: 0.2, Seeds: 1})
		if err != nil {
			t.Fatal(err)
		}
		f, err := sweepFigure(res, Options{})
		if err != nil {
			t.Fatal(err)
		}
		a := f.main.X
		if len(axes) == 2 {
			a = f.main.Y // the first parameter runs up the heat map
		}
		if a.Label.Text != "actuators.backlash [mm]" {
			t.Errorf("%d-D: axis label %q, want actuators.backlash [mm]", len(axes), a.Label.Text)
		}
		// The last point, 1 mm, lies inside the axis, not on its edge.
		if len(axes) == 1 && !(a.Min < 0 && a.Max > 1 && a.Max < 1.2) {
			t.Errorf("1-D: axis from %g to %g, want a little round 0 to 1 mm", a.Min, a.Max)
		}
		if len(axes) == 2 && (f.bar == nil || f.bar.Y.Label.Text != "peak_tilt [deg]") {
			t.Errorf("2-D: the colour bar is missing or says %v", f.bar)
		}
	}
}

func TestContourLiesWhereTheFieldCrossesTheThreshold(t *testing.T) {
	// On z = y + 2x (y the first parameter, up the map; x the second,
	// across) linear interpolation along the cell edges is exact, so every
	// contour point at level 1.3 has y + 2x = 1.3, and the pieces together
	// are the straight line from (0.15, 1) to (0.65, 0) inside the unit
	// square, of length sqrt(0.5^2 + 1^2) (marching squares, Lorensen and
	// Cline 1987).
	const level = 1.3
	res := &sweep.Result{Axes: []string{"y", "x"}, AxisUnits: []string{"", ""}, Metrics: []string{"peak_tilt"}, Units: []string{"deg"}, Seeds: 1}
	for i := range 5 {
		for j := range 7 {
			y, x := float64(i)/4, float64(j)/6
			z := y + 2*x
			res.Points = append(res.Points, sweep.Point{Index: len(res.Points), Values: []float64{y, x}, Metrics: []float64{z}, Worst: []float64{z}})
		}
	}
	res.Total = len(res.Points)
	f, err := sweepFigure(res, Options{Threshold: level, HasThreshold: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(f.contour) == 0 {
		t.Fatal("no contour drawn")
	}
	length := 0.0
	for _, s := range f.contour {
		for _, p := range [][2]float64{{s.x0, s.y0}, {s.x1, s.y1}} {
			if d := p[1] + 2*p[0] - level; math.Abs(d) > 1e-12 {
				t.Errorf("contour point (%g, %g) is %g off the level", p[0], p[1], d)
			}
		}
		length += math.Hypot(s.x1-s.x0, s.y1-s.y0)
	}
	if want := math.Hypot(0.5, 1); math.Abs(length-want) > 1e-9 {
		t.Errorf("contour length %g, want %g", length, want)
	}
	if !strings.Contains(f.main.Title.Text, "1.3") {
		t.Errorf("the title does not give the threshold: %q", f.main.Title.Text)
	}
}

func TestViridisLightnessRises(t *testing.T) {
	// viridis was designed so that its lightness rises steadily from dark
	// violet to light yellow (van der Walt and Smith, 2015): CIE L* of the
	// colours, from sRGB (IEC 61966-2-1) through CIE Y (CIE 1976 L*),
	// increases along the map.
	lightness := func(f float64) float64 {
		r, g, b, _ := viridis(f).RGBA()
		lin := func(c uint32) float64 {
			v := float64(c) / 0xffff
			if v <= 0.04045 {
				return v / 12.92
			}
			return math.Pow((v+0.055)/1.055, 2.4)
		}
		y := 0.2126*lin(r) + 0.7152*lin(g) + 0.0722*lin(b)
		if y > 216.0/24389 {
			return 116*math.Cbrt(y) - 16
		}
		return 24389.0 / 27 * y
	}
	last := -1.0
	for i := range 65 {
		l := lightness(float64(i) / 64)
		if l <= last {
			t.Errorf("L* %.2f at %d/64 does not rise from %.2f", l, i, last)
		}
		last = l
	}
	// The ends, from the published table: L* about 16 and 92 (from memory).
	if l0, l1 := lightness(0), lightness(1); math.Abs(l0-16) > 3 || math.Abs(l1-92) > 3 {
		t.Errorf("L* from %.1f to %.1f, want about 16 to 92", l0, l1)
	}
}

func TestAStyleColoursThePaperAndTheInk(t *testing.T) {
	// The window passes its own palette: the plot's paper and every text
	// and axis take it, and a style left zero is the plain look of files.
	res := &sweep.Result{Axes: []string{"x"}, AxisUnits: []string{""}, Metrics: []string{"peak_tilt"}, Units: []string{"deg"}, Seeds: 2}
	for i := range 3 {
		v := float64(i)
		res.Points = append(res.Points, sweep.Point{Index: i, Values: []float64{v}, Metrics: []float64{v}, Worst: []float64{v + 1}})
	}
	res.Total = len(res.Points)
	dark := Style{Paper: color.RGBA{0x20, 0x22, 0x24, 0xff}, Ink: color.RGBA{0xe0, 0xe0, 0xe0, 0xff}}
	f, err := sweepFigure(res, Options{Style: dark})
	if err != nil {
		t.Fatal(err)
	}
	p := f.main
	if p.BackgroundColor != dark.Paper || p.X.Label.TextStyle.Color != dark.Ink || p.Y.Tick.Label.Color != dark.Ink || p.X.LineStyle.Color != dark.Ink {
		t.Errorf("the style is not applied: paper %v, label %v, ticks %v, axis %v", p.BackgroundColor, p.X.Label.TextStyle.Color, p.Y.Tick.Label.Color, p.X.LineStyle.Color)
	}
	plain, err := sweepFigure(res, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if plain.main.BackgroundColor != Plain.Paper || plain.main.Title.TextStyle.Color != Plain.Ink {
		t.Errorf("a zero style is not the plain look: paper %v, ink %v", plain.main.BackgroundColor, plain.main.Title.TextStyle.Color)
	}
}
