package ui

import (
	"fmt"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/theme"
	"fyne.io/fyne/v2/widget"
)

// meter shows a study's progress: the share done filled in the accent over
// a plain track, and the percentage. The toolkit's progress bar draws its
// track in a faded accent, which at 0 % reads as a full bar.
type meter struct {
	widget.BaseWidget
	Value float64 // 0 to 1
}

func newMeter() *meter {
	m := &meter{}
	m.ExtendBaseWidget(m)
	return m
}

// SetValue shows share v of the work done.
func (m *meter) SetValue(v float64) {
	m.Value = v
	m.Refresh()
}

func (m *meter) CreateRenderer() fyne.WidgetRenderer {
	r := &meterRenderer{m: m, track: canvas.NewRectangle(pal.Grid), fill: canvas.NewRectangle(pal.Accent), label: canvas.NewText("", pal.Ink)}
	r.label.Alignment = fyne.TextAlignCenter
	r.Refresh()
	return r
}

type meterRenderer struct {
	m           *meter
	track, fill *canvas.Rectangle
	label       *canvas.Text
}

func (r *meterRenderer) Layout(s fyne.Size) {
	r.track.Resize(s)
	r.fill.Resize(fyne.NewSize(s.Width*float32(min(1, max(0, r.m.Value))), s.Height))
	r.label.Resize(s)
}

func (r *meterRenderer) MinSize() fyne.Size {
	t := fyne.MeasureText("100 %", theme.TextSize(), fyne.TextStyle{})
	return fyne.NewSize(t.Width+4*theme.Padding(), t.Height+2*theme.Padding())
}

func (r *meterRenderer) Refresh() {
	r.track.FillColor, r.fill.FillColor, r.label.Color = pal.Grid, pal.Accent, pal.Ink
	r.track.CornerRadius = theme.InputRadiusSize()
	r.fill.CornerRadius = r.track.CornerRadius
	r.label.Text = fmt.Sprintf("%.0f %%", 100*min(1, max(0, r.m.Value)))
	r.Layout(r.m.Size())
	canvas.Refresh(r.m)
}

func (r *meterRenderer) Objects() []fyne.CanvasObject {
	return []fyne.CanvasObject{r.track, r.fill, r.label}
}

func (r *meterRenderer) Destroy() {}
