package plot

import (
	"fmt"
	"math"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"teeter/sim/study/margin"
)

// Margin draws the recovery margin per direction into file (PNG or SVG):
// each seed's largest survived shove as a dot, the impulse every seed
// survived as a bar, and the smallest shove that felled any seed as a
// cross.
func Margin(res []margin.Result, st Style, file string) error {
	f, err := marginFigure(res, st.filled())
	if err != nil {
		return fmt.Errorf("plot %s: %v", file, err)
	}
	return f.write(file)
}

func marginFigure(res []margin.Result, st Style) (*figure, error) {
	if len(res) == 0 {
		return nil, fmt.Errorf("no direction to plot")
	}
	p := newPlot(st)
	var seeds, trusted, felled plotter.XYs
	names := make([]string, len(res))
	top := 0.0
	for d, r := range res {
		names[d] = r.Dir
		x := float64(d)
		for _, e := range r.Seeds {
			seeds = append(seeds, plotter.XY{X: x, Y: e.Survived})
			top = math.Max(top, e.Survived)
		}
		trusted = append(trusted, plotter.XY{X: x, Y: r.Trusted})
		if !math.IsInf(r.Felled, 0) {
			felled = append(felled, plotter.XY{X: x, Y: r.Felled})
			top = math.Max(top, r.Felled)
		}
	}
	dots, err := plotter.NewScatter(seeds)
	if err != nil {
		return nil, err
	}
	dots.GlyphStyle = draw.GlyphStyle{Shape: draw.CircleGlyph{}, Radius: vg.Points(3), Color: st.Mean}
	bars, err := plotter.NewScatter(trusted)
	if err != nil {
		return nil, err
	}
	bars.GlyphStyle = draw.GlyphStyle{Shape: barGlyph{}, Radius: vg.Points(14), Color: st.Ink}
	p.Add(grid(st), dots, bars)
	p.Legend.Add("a seed's largest survived", dots)
	p.Legend.Add("survived by every seed", bars)
	if len(felled) > 0 {
		crosses, err := plotter.NewScatter(felled)
		if err != nil {
			return nil, err
		}
		crosses.GlyphStyle = draw.GlyphStyle{Shape: draw.CrossGlyph{}, Radius: vg.Points(5), Color: st.Worst}
		p.Add(crosses)
		p.Legend.Add("smallest that felled a seed", crosses)
	}
	p.Legend.Top, p.Legend.Left = false, true
	p.NominalX(names...)
	p.X.Min, p.X.Max = -0.5, float64(len(res))-0.5
	p.Y.Min, p.Y.Max = 0, top*1.15
	p.Y.Label.Text = label("impulse", "N*s")
	p.Title.Text = fmt.Sprintf("Recovery margin over %d seeds", len(res[0].Seeds))
	return &figure{main: p}, nil
}

// barGlyph is a short horizontal bar, thick enough to read over the dots.
type barGlyph struct{}

func (barGlyph) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	c.SetLineStyle(draw.LineStyle{Color: sty.Color, Width: vg.Points(2.5)})
	r := sty.Radius
	var bar vg.Path
	bar.Move(vg.Point{X: pt.X - r, Y: pt.Y})
	bar.Line(vg.Point{X: pt.X + r, Y: pt.Y})
	c.Stroke(bar)
}
