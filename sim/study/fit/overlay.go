package fit

import (
	"fmt"
	"image/color"
	"io"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"teeter/models"
)

// Overlay draws each compared signal, logged against simulated before and
// after the fit, one panel per signal, into a PNG file, in the log's units.
func Overlay(res *Result, file string) error {
	if strings.ToLower(filepath.Ext(file)) != ".png" {
		return fmt.Errorf("plot %s: want a .png file", file)
	}
	img := OverlayImage(res, 8*vg.Inch)
	return models.WriteFileAtomic(file, func(w io.Writer) error {
		_, err := vgimg.PngCanvas{Canvas: img}.WriteTo(w)
		return err
	})
}

// OverlayImage is the overlay of Overlay, width wide.
func OverlayImage(res *Result, width vg.Length) *vgimg.Canvas {
	n := len(res.Signals)
	img := vgimg.New(width, vg.Length(n)*1.8*vg.Inch)
	dc := draw.New(img)
	tiles := draw.Tiles{Rows: n, Cols: 1, PadY: vg.Millimeter}
	ps := panels(res)
	canvases := plot.Align(ps, tiles, dc)
	for i, row := range ps {
		row[0].Draw(canvases[i][0])
	}
	return img
}

func panels(res *Result) [][]*plot.Plot {
	var out [][]*plot.Plot
	for k, s := range res.Signals {
		p := plot.New()
		p.Title.Text = s.Name
		p.Y.Label.Text = s.Unit
		p.X.Label.Text = "time [s]"
		scale := 1.0
		if s.Unit != "" {
			scale, _, _ = models.ParseQuantity("1 " + s.Unit)
		}
		for _, tr := range []struct {
			name string
			y    []float64
			c    color.RGBA
		}{{"logged", res.Logged[k], color.RGBA{120, 120, 120, 255}}, {"before", res.Before[k], color.RGBA{220, 140, 40, 255}}, {"fitted", res.After[k], color.RGBA{30, 90, 200, 255}}} {
			xy := make(plotter.XYs, len(res.Time))
			for i := range xy {
				xy[i] = plotter.XY{X: res.Time[i], Y: tr.y[i] / scale}
			}
			l, err := plotter.NewLine(xy)
			if err != nil {
				continue
			}
			l.Color = tr.c
			p.Add(l)
			p.Legend.Add(tr.name, l)
		}
		p.Legend.Top = true
		out = append(out, []*plot.Plot{p})
	}
	return out
}
