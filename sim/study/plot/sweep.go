package plot

import (
	"fmt"
	"image/color"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"teeter/models"
	"teeter/sim/study/sweep"
)

// Options choose what a sweep plot shows.
type Options struct {
	Metric string // "" is the first
	// Threshold, when HasThreshold, is a level of the metric in its own
	// unit (0.5 for "where it starts to wobble", 0.5 deg): a contour
	// where the worst over the seeds crosses it on a heat map, a line
	// across a 1-D plot.
	Threshold    float64
	HasThreshold bool
	// Style is the plot's look (zero: Plain).
	Style Style
}

// OptionsFor are the options for plotting a metric of res ("" the
// first), with a threshold ("" none) read in the metric's unit: "0.5deg"
// is converted to it, a bare number is taken as in it.
func OptionsFor(res *sweep.Result, metric, threshold string) (Options, error) {
	opt := Options{Metric: metric}
	if strings.TrimSpace(threshold) == "" {
		return opt, nil
	}
	unit := ""
	for i, m := range res.Metrics {
		if m == metric || metric == "" && i == 0 {
			unit = res.Units[i]
		}
	}
	v, kind, err := models.ParseQuantity(threshold)
	if err != nil {
		return opt, fmt.Errorf("threshold %q: %v", threshold, err)
	}
	if kind != models.Dimensionless {
		_, want, err := models.ParseQuantity("1 " + unit)
		if err != nil || want != kind {
			return opt, fmt.Errorf("threshold %q: the metric is in %q; give a bare number or a quantity of its kind", threshold, unit)
		}
		if v, err = models.ToUnit(v, unit); err != nil {
			return opt, err
		}
	}
	opt.Threshold, opt.HasThreshold = v, true
	return opt, nil
}

// Sweep draws one metric of a sweep into file, PNG or SVG by its
// extension: over the parameter of a 1-D sweep its mean and its worst over
// the seeds; over the two of a 2-D sweep the worst as a heat map with a
// colour bar. Failed points are left out (a gap in the line, a grey cell).
func Sweep(s *sweep.Result, opt Options, file string) error {
	f, err := sweepFigure(s, opt)
	if err != nil {
		return fmt.Errorf("plot %s: %v", file, err)
	}
	return f.write(file)
}

// axisOf is a sweep axis in the builder's unit: its label and the factor
// from the SI values.
func axisOf(s *sweep.Result, k int) (string, float64) {
	unit, scale := display(s.AxisUnits[k])
	return label(s.Axes[k], unit), scale
}

func sweepFigure(s *sweep.Result, opt Options) (*figure, error) {
	mi := -1
	for i, m := range s.Metrics {
		if m == opt.Metric || opt.Metric == "" && i == 0 {
			mi = i
		}
	}
	if mi < 0 {
		return nil, fmt.Errorf("the sweep has no metric %q (it has %s)", opt.Metric, strings.Join(s.Metrics, ", "))
	}
	switch len(s.Axes) {
	case 1:
		return lineFigure(s, opt, mi)
	case 2:
		return heatFigure(s, opt, mi)
	default:
		return nil, fmt.Errorf("can plot 1 or 2 parameters, not %d", len(s.Axes))
	}
}

// lineFigure draws metric mi of a 1-D sweep: its mean and its worst seed
// over the parameter.
func lineFigure(s *sweep.Result, opt Options, mi int) (*figure, error) {
	unit, scale := display(s.Units[mi])
	name := label(s.Metrics[mi], unit)
	st := opt.Style.filled()
	p := newPlot(st)
	xLabel, xScale := axisOf(s, 0)
	var mean, worst plotter.XYs
	for _, pt := range s.Points {
		x := pt.Values[0] * xScale
		if v := pt.Metrics[mi]; finite(v) {
			mean = append(mean, plotter.XY{X: x, Y: v * scale})
		}
		if v := pt.Worst[mi]; finite(v) {
			worst = append(worst, plotter.XY{X: x, Y: v * scale})
		}
	}
	if len(mean) == 0 {
		return nil, fmt.Errorf("no point has a finite %s", s.Metrics[mi])
	}
	p.Add(grid(st))
	if err := addLine(p, mean, fmt.Sprintf("mean of %d seeds", s.Seeds), st.Mean); err != nil {
		return nil, err
	}
	if s.Seeds > 1 {
		if err := addLine(p, worst, "worst seed", st.Worst); err != nil {
			return nil, err
		}
	}
	p.Legend.Top = true
	p.X.Label.Text, p.Y.Label.Text = xLabel, name
	p.Title.Text = s.Metrics[mi] + " against " + s.Axes[0]
	if opt.HasThreshold {
		at := plotter.NewFunction(func(float64) float64 { return opt.Threshold * scale })
		at.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		at.Color = st.Ink
		p.Add(at)
		p.Legend.Add(fmt.Sprintf("threshold %.4g", opt.Threshold*scale), at)
	}
	// Room round the ends, so the first and last points are whole.
	p.X.Min, p.X.Max = mean[0].X, mean[len(mean)-1].X
	pad(&p.X, 0.04)
	return &figure{main: p}, nil
}

// heatFigure draws the worst seed's metric mi of a 2-D sweep as a heat map
// with a colour bar.
func heatFigure(s *sweep.Result, opt Options, mi int) (*figure, error) {
	unit, scale := display(s.Units[mi])
	name := label(s.Metrics[mi], unit)
	p := newPlot(opt.Style)
	g, err := newSweepGrid(s, mi, scale)
	if err != nil {
		return nil, err
	}
	hm := plotter.NewHeatMap(g, viridisPalette(256))
	if hm.Min > hm.Max {
		return nil, fmt.Errorf("no point has a finite %s", s.Metrics[mi])
	}
	if hm.Min == hm.Max {
		hm.Max = hm.Min + 1
	}
	hm.NaN = color.Gray{Y: 0xbb}
	p.Add(hm)
	f := &figure{main: p}
	p.X.Label.Text, _ = axisOf(s, 1)
	p.Y.Label.Text, _ = axisOf(s, 0)
	p.Title.Text = fmt.Sprintf("%s, worst of %d seeds", s.Metrics[mi], s.Seeds)
	if opt.HasThreshold {
		f.contour = contour(g.xs, g.ys, g.z, opt.Threshold*scale)
		p.Add(contourLines(f.contour))
		p.Title.Text += fmt.Sprintf("; white: %.4g", opt.Threshold*scale)
		if unit != "" {
			p.Title.Text += " " + unit
		}
	}
	f.bar = colourBar(hm.Min, hm.Max, name, opt.Style)
	return f, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func addLine(p *plot.Plot, xy plotter.XYs, name string, c color.Color) error {
	line, points, err := plotter.NewLinePoints(xy)
	if err != nil {
		return err
	}
	line.Color, points.Color = c, c
	p.Add(line, points)
	p.Legend.Add(name, line, points)
	return nil
}

// colourBar is a vertical bar of the viridis map from lo to hi, labelled
// with what it measures.
func colourBar(lo, hi float64, name string, st Style) *plot.Plot {
	p := newPlot(st)
	p.Add(&plotter.ColorBar{ColorMap: &viridisMap{lo: lo, hi: hi}, Vertical: true})
	p.HideX()
	p.Y.Padding = 0
	p.Y.Label.Text = name
	return p
}

// contourLines draws contour segments as white lines over a heat map.
type contourLines []segment

func (cl contourLines) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	c.SetLineStyle(draw.LineStyle{Color: color.White, Width: vg.Points(2)})
	for _, s := range cl {
		var path vg.Path
		path.Move(vg.Point{X: tx(s.x0), Y: ty(s.y0)})
		path.Line(vg.Point{X: tx(s.x1), Y: ty(s.y1)})
		c.Stroke(path)
	}
}

// sweepGrid lays a 2-D sweep's worst values out for a heat map, in the
// builder's units: columns along the second axis, rows along the first.
type sweepGrid struct {
	xs, ys []float64
	z      [][]float64 // [row][col]
}

func newSweepGrid(s *sweep.Result, mi int, scale float64) (*sweepGrid, error) {
	_, yScale := axisOf(s, 0)
	_, xScale := axisOf(s, 1)
	xIndex, yIndex := map[float64]int{}, map[float64]int{}
	g := &sweepGrid{}
	for _, pt := range s.Points {
		if _, ok := yIndex[pt.Values[0]]; !ok {
			yIndex[pt.Values[0]] = len(g.ys)
			g.ys = append(g.ys, pt.Values[0]*yScale)
		}
		if _, ok := xIndex[pt.Values[1]]; !ok {
			xIndex[pt.Values[1]] = len(g.xs)
			g.xs = append(g.xs, pt.Values[1]*xScale)
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
		g.z[yIndex[pt.Values[0]]][xIndex[pt.Values[1]]] = pt.Worst[mi] * scale
	}
	return g, nil
}

func (g *sweepGrid) Dims() (c, r int)   { return len(g.xs), len(g.ys) }
func (g *sweepGrid) Z(c, r int) float64 { return g.z[r][c] }
func (g *sweepGrid) X(c int) float64    { return g.xs[c] }
func (g *sweepGrid) Y(r int) float64    { return g.ys[r] }
