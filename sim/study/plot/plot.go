// Package plot draws the studies' results, for the command line and the
// window alike: a sweep as a line over its parameter or a heat map over
// two, with a colour bar and a contour where the metric crosses a
// threshold; the recovery margin per direction over the seeds. Axes read
// in the units a builder uses (mm, deg), text is a plain sans-serif.
package plot

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"teeter/models"
)

// figure is a plot ready to draw and, for a heat map, its colour bar.
type figure struct {
	main *plot.Plot
	bar  *plot.Plot
	// contour is the threshold's contour, in the plot's units.
	contour []segment
}

const (
	width    = 16 * vg.Centimeter
	height   = 12 * vg.Centimeter
	barWidth = 2.6 * vg.Centimeter
)

// write draws the figure into file, PNG or SVG by its extension.
func (f *figure) write(file string) error {
	format := strings.TrimPrefix(strings.ToLower(filepath.Ext(file)), ".")
	if format != "png" && format != "svg" {
		return fmt.Errorf("plot %s: want a .png or .svg file", file)
	}
	c, err := draw.NewFormattedCanvas(width, height, format)
	if err != nil {
		return err
	}
	if err := f.draw(draw.New(c)); err != nil {
		return fmt.Errorf("plot %s: %v", file, err)
	}
	return models.WriteFileAtomic(file, func(w io.Writer) error {
		_, err := c.WriteTo(w)
		return err
	})
}

func (f *figure) draw(dc draw.Canvas) (err error) {
	defer func() {
		if e := recover(); e != nil { // the plot library panics on data it cannot draw
			err = fmt.Errorf("cannot draw: %v", e)
		}
	}()
	if f.bar == nil {
		f.main.Draw(dc)
		return nil
	}
	f.main.Draw(draw.Crop(dc, 0, -barWidth, 0, 0))
	f.bar.Draw(draw.Crop(dc, width-barWidth, 0, 0, 0))
	return nil
}

// Style is the look of a plot. The window passes the colours of its own
// theme, so a plot sits in it like its other panels; the command line uses
// Plain. A zero field takes Plain's.
type Style struct {
	Paper, Ink, Grid color.Color
	// Mean is the colour of a sweep's mean and of the margin's seeds;
	// Worst of a sweep's worst seed and of the shoves that felled one.
	Mean, Worst color.Color
}

// Plain is dark ink on white paper, for files.
var Plain = Style{
	Paper: color.White, Ink: color.Black, Grid: color.Gray{Y: 0xc0},
	Mean:  color.NRGBA{R: 0x31, G: 0x68, B: 0x8e, A: 0xff},
	Worst: color.NRGBA{R: 0xc0, G: 0x20, B: 0x20, A: 0xff},
}

func (s Style) filled() Style {
	for _, f := range []struct {
		dst *color.Color
		def color.Color
	}{
		{&s.Paper, Plain.Paper}, {&s.Ink, Plain.Ink}, {&s.Grid, Plain.Grid}, {&s.Mean, Plain.Mean}, {&s.Worst, Plain.Worst},
	} {
		if *f.dst == nil {
			*f.dst = f.def
		}
	}
	return s
}

// newPlot is an empty plot in the style's colours with every text in
// Liberation Sans.
func newPlot(st Style) *plot.Plot {
	st = st.filled()
	p := plot.New()
	p.BackgroundColor = st.Paper
	ink := func(t *text.Style) { t.Font.Variant, t.Color = "Sans", st.Ink }
	ink(&p.Title.TextStyle)
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		ink(&a.Label.TextStyle)
		ink(&a.Tick.Label)
		a.LineStyle.Color, a.Tick.LineStyle.Color = st.Ink, st.Ink
	}
	ink(&p.Legend.TextStyle)
	return p
}

// grid is a background grid in the style's colour.
func grid(st Style) *plotter.Grid {
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = st.filled().Grid, st.filled().Grid
	return g
}

// builderUnits are the units a builder reads quantities of an SI unit in,
// with the factor from SI. The others show as they are.
var builderUnits = map[string]struct {
	unit  string
	scale float64
}{
	"m":     {"mm", 1000},
	"rad":   {"deg", 180 / math.Pi},
	"m/s":   {"mm/s", 1000},
	"rad/s": {"deg/s", 180 / math.Pi},
}

// display is the unit to show a quantity of SI unit si in and the factor
// to it.
func display(si string) (string, float64) {
	if u, ok := builderUnits[si]; ok {
		return u.unit, u.scale
	}
	return si, 1
}

// label is a name with its unit in brackets, if it has one.
func label(name, unit string) string {
	if unit == "" {
		return name
	}
	return name + " [" + unit + "]"
}

// pad widens an axis by a share of its span on each side, so the points
// at its ends are drawn whole.
func pad(a *plot.Axis, share float64) {
	d := (a.Max - a.Min) * share
	if d == 0 {
		d = math.Max(math.Abs(a.Max)*share, share)
	}
	a.Min, a.Max = a.Min-d, a.Max+d
}
