package plot

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"teeter/models"
	"teeter/sim/study/sweep"
)

// Sweep draws one metric of a sweep into file, PNG or SVG by its
// extension: a line over the parameter for a 1-D sweep, a heat map over
// the two parameters for a 2-D one. Failed points are left out (a gap in
// the line, a grey cell in the map).
func Sweep(s *sweep.Result, metric, file string) error {
	format := strings.TrimPrefix(strings.ToLower(filepath.Ext(file)), ".")
	if format != "png" && format != "svg" {
		return fmt.Errorf("plot %s: want a .png or .svg file", file)
	}
	wt, err := sweepPlot(s, metric, format)
	if err != nil {
		return fmt.Errorf("plot %s: %v", file, err)
	}
	return models.WriteFileAtomic(file, func(w io.Writer) error {
		_, err := wt.WriteTo(w)
		return err
	})
}

func sweepPlot(s *sweep.Result, metric, format string) (wt io.WriterTo, err error) {
	defer func() {
		if e := recover(); e != nil { // the plot library panics on data it cannot draw
			wt, err = nil, fmt.Errorf("cannot draw: %v", e)
		}
	}()
	mi := -1
	for i, m := range s.Metrics {
		if m == metric || metric == "" && i == 0 {
			mi = i
		}
	}
	if mi < 0 {
		return nil, fmt.Errorf("the sweep has no metric %q (it has %s)", metric, strings.Join(s.Metrics, ", "))
	}
	label := s.Metrics[mi]
	if s.Units[mi] != "" {
		label += " [" + s.Units[mi] + "]"
	}
	p := plot.New()
	switch len(s.Axes) {
	case 1:
		var xy plotter.XYs
		for _, pt := range s.Points {
			if v := pt.Metrics[mi]; !math.IsNaN(v) && !math.IsInf(v, 0) {
				xy = append(xy, plotter.XY{X: pt.Values[0], Y: v})
			}
		}
		if len(xy) == 0 {
			return nil, fmt.Errorf("no point has a finite %s", metric)
		}
		line, points, err := plotter.NewLinePoints(xy)
		if err != nil {
			return nil, err
		}
		p.Add(line, points, plotter.NewGrid())
		p.X.Label.Text = s.Axes[0]
		p.Y.Label.Text = label
		p.Title.Text = label + " against " + s.Axes[0]
	case 2:
		g, err := newSweepGrid(s, mi)
		if err != nil {
			return nil, err
		}
		hm := plotter.NewHeatMap(g, moreland.SmoothBlueRed().Palette(64))
		if hm.Min > hm.Max {
			return nil, fmt.Errorf("no point has a finite %s", metric)
		}
		if hm.Min == hm.Max {
			hm.Max = hm.Min + 1
		}
		hm.NaN = plotColourGrey
		p.Add(hm)
		p.X.Label.Text = s.Axes[1]
		p.Y.Label.Text = s.Axes[0]
		p.Title.Text = fmt.Sprintf("%s: blue %.4g to red %.4g", label, hm.Min, hm.Max)
	default:
		return nil, fmt.Errorf("can plot 1 or 2 parameters, not %d", len(s.Axes))
	}
	return p.WriterTo(16*vg.Centimeter, 12*vg.Centimeter, format)
}

// plotColourGrey marks the cells of failed points.
var plotColourGrey = color.Gray{Y: 0xbb}

// sweepGrid lays a 2-D sweep out for a heat map: columns along the second
// axis, rows along the first.
type sweepGrid struct {
	xs, ys []float64
	z      [][]float64 // [row][col]
}

func newSweepGrid(s *sweep.Result, mi int) (*sweepGrid, error) {
	xIndex, yIndex := map[float64]int{}, map[float64]int{}
	g := &sweepGrid{}
	for _, pt := range s.Points {
		if _, ok := yIndex[pt.Values[0]]; !ok {
			yIndex[pt.Values[0]] = len(g.ys)
			g.ys = append(g.ys, pt.Values[0])
		}
		if _, ok := xIndex[pt.Values[1]]; !ok {
			xIndex[pt.Values[1]] = len(g.xs)
			g.xs = append(g.xs, pt.Values[1])
		}
	}
	if len(g.xs) < 2 || len(g.ys) < 2 {
		return nil, fmt.Errorf("a heat map needs at least two values of each parameter")
	}
	g.z = make([][]float64, len(g.ys))
	for r := range g.z {
		g.z[r] = make([]float64, len(g.xs))
		for c := range g.z[r] {
			g.z[r][c] = math.NaN()
		}
	}
	for _, pt := range s.Points {
		g.z[yIndex[pt.Values[0]]][xIndex[pt.Values[1]]] = pt.Metrics[mi]
	}
	return g, nil
}

func (g *sweepGrid) Dims() (c, r int)   { return len(g.xs), len(g.ys) }
func (g *sweepGrid) Z(c, r int) float64 { return g.z[r][c] }
func (g *sweepGrid) X(c int) float64    { return g.xs[c] }
func (g *sweepGrid) Y(r int) float64    { return g.ys[r] }
