package ui

import (
	"image/color"
	"testing"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/test"
)

func TestStudyMeterAtZeroReadsEmpty(t *testing.T) {
	// A progress bar is filled in proportion to the work done (common
	// practice): at 0 % nothing is filled, at half the left half only.
	test.NewTempApp(t)
	m := newMeter()
	w := test.NewWindow(m)
	defer w.Close()
	w.SetPadded(false)
	w.Resize(fyne.NewSize(200, 30))
	filled := func(x int) bool {
		img := w.Canvas().Capture()
		b := img.Bounds()
		px := b.Min.X + x*b.Dx()/200
		r, g, bl, _ := img.At(px, b.Min.Y+b.Dy()/2).RGBA()
		ar, ag, ab, _ := color.Color(pal.Accent).RGBA()
		return r>>8 == ar>>8 && g>>8 == ag>>8 && bl>>8 == ab>>8
	}
	if filled(10) {
		t.Error("at 0 % the meter is filled at its left end")
	}
	m.SetValue(0.5)
	if !filled(10) || filled(190) {
		t.Errorf("at 50 %%: filled at 5 %% of the width %v, at 95 %% %v", filled(10), filled(190))
	}
}
