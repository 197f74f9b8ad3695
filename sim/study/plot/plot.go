// Package plot draws the studies' results, for the command line and the
// window alike: a sweep as a line over its parameter or a heat map over
// two, with a colour bar and a contour where the metric crosses a
// threshold; the recovery margin per direction over the seeds. Axes read
// in the units a builder uses (mm, deg), text is a plain sans-serif.
package plot

import (
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
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

// newPlot is an empty plot with every text in Liberation Sans.
func newPlot() *plot.Plot {
	p := plot.New()
	sans := func(f *font.Font) { f.Variant = "Sans" }
	sans(&p.Title.TextStyle.Font)
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		sans(&a.Label.TextStyle.Font)
		sans(&a.Tick.Label.Font)
	}
	sans(&p.Legend.TextStyle.Font)
	return p
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
