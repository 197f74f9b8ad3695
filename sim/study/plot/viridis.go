package plot

import (
	"image/color"
	"math"

	"gonum.org/v1/plot/palette"
)

// viridisStops are every 16th entry (and the last) of the 256-entry viridis
// table of van der Walt and Smith (2015), as published in mpl-colormaps
// (CC0) and shipped as matplotlib's viridis, sRGB in [0, 1]: a sequential
// map whose lightness rises evenly, for a magnitude.
var viridisStops = [...][3]float64{
	{0.267004, 0.004874, 0.329415}, // 0
	{0.282327, 0.094955, 0.417331}, // 16
	{0.278826, 0.175490, 0.483397}, // 32
	{0.258965, 0.251537, 0.524736}, // 48
	{0.229739, 0.322361, 0.545706}, // 64
	{0.199430, 0.387607, 0.554642}, // 80
	{0.172719, 0.448791, 0.557885}, // 96
	{0.149039, 0.508051, 0.557250}, // 112
	{0.127568, 0.566949, 0.550556}, // 128
	{0.120638, 0.625828, 0.533488}, // 144
	{0.157851, 0.683765, 0.501686}, // 160
	{0.246070, 0.738910, 0.452024}, // 176
	{0.369214, 0.788888, 0.382914}, // 192
	{0.515992, 0.831158, 0.294279}, // 208
	{0.678489, 0.863742, 0.189503}, // 224
	{0.845561, 0.887322, 0.099702}, // 240
	{0.993248, 0.906157, 0.143936}, // 255
}

// viridisIndex is the table index of each stop.
func viridisIndex(k int) float64 { return math.Min(float64(16*k), 255) }

// viridis is the colour at f in [0, 1], linear between the stops.
func viridis(f float64) color.Color {
	x := math.Max(0, math.Min(1, f)) * 255
	k := min(int(x/16), len(viridisStops)-2)
	lo, hi := viridisIndex(k), viridisIndex(k+1)
	t := (x - lo) / (hi - lo)
	var c [3]uint8
	for i := range c {
		v := viridisStops[k][i] + t*(viridisStops[k+1][i]-viridisStops[k][i])
		c[i] = uint8(math.Round(255 * v))
	}
	return color.NRGBA{R: c[0], G: c[1], B: c[2], A: 255}
}

// viridisMap is viridis as a gonum colour map over [min, max].
type viridisMap struct{ lo, hi float64 }

func (m *viridisMap) At(v float64) (color.Color, error) {
	if m.hi == m.lo {
		return viridis(0.5), nil
	}
	return viridis((v - m.lo) / (m.hi - m.lo)), nil
}
func (m *viridisMap) SetMax(v float64)                   { m.hi = v }
func (m *viridisMap) SetMin(v float64)                   { m.lo = v }
func (m *viridisMap) Max() float64                       { return m.hi }
func (m *viridisMap) Min() float64                       { return m.lo }
func (m *viridisMap) SetAlpha(float64)                   {}
func (m *viridisMap) Alpha() float64                     { return 1 }
func (m *viridisMap) Palette(colors int) palette.Palette { return viridisPalette(colors) }

// viridisPalette is n colours evenly along viridis.
type viridisPalette int

func (n viridisPalette) Colors() []color.Color {
	out := make([]color.Color, int(n))
	for i := range out {
		out[i] = viridis(float64(i) / math.Max(1, float64(n-1)))
	}
	return out
}
