package plot

import (
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"teeter/sim/study/loads"
)

// Loads draws each part's peak load as a share of what it is built for,
// worst first, into file (.png or .svg); parts with nothing to set them
// against are left out.
func Loads(res *loads.Result, file string) error {
	var vals plotter.Values
	var names []string
	for _, p := range res.Parts {
		if p.Share > 0 {
			vals = append(vals, 100*p.Share)
			names = append(names, p.Name)
		}
	}
	pl := newPlot(Plain)
	pl.Title.Text = "peak load over the shoves, worst first"
	pl.Y.Label.Text = label("share of stall or rated load", "%")
	if len(vals) > 0 {
		bars, err := plotter.NewBarChart(vals, vg.Points(18))
		if err != nil {
			return err
		}
		bars.Color = viridis(0.35)
		pl.Add(bars)
		pl.NominalX(names...)
		pl.X.Tick.Label.Rotation = 0.6
		pl.Add(grid(Plain))
		// Where a part is at its limit.
		limit, err := plotter.NewLine(plotter.XYs{{X: -0.5, Y: 100}, {X: float64(len(vals)) - 0.5, Y: 100}})
		if err != nil {
			return err
		}
		limit.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		pl.Add(limit)
	}
	pl.Y.Min = 0
	return (&figure{main: pl}).write(file)
}
