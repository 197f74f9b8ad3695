package ui

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"slices"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/driver/desktop"
	"golang.org/x/image/font"

	"teeter/sim/live"
)

// signalMeanings say what a recorded signal is and its unit, by the end of
// its name, for the help page.
var signalMeanings = []struct{ Suffix, Unit, Meaning string }{
	{".tilt", "rad", "IMU: its link's angle from upright, counter-clockwise positive"},
	{".rate", "rad/s", "IMU gyro: its link's angular rate"},
	{".accel_tilt", "rad", "tilt seen by the IMU's accelerometer, disturbed by linear acceleration"},
	{".position", "rad or m", "a joint's position, or a potentiometer's quantized reading of it"},
	{".screw", "m or rad", "where an actuator's screw (nut) is"},
	{".output", "m or rad", "where the actuator's output is; it may differ from the screw by up to half the backlash"},
	{".gap", "m or rad", "output less screw: where the output sits in the backlash"},
	{".command", "-1..1", "PWM duty the controller sends to an actuator"},
	{".force", "N or N*m", "an actuator's load, or the normal force on a foot pad"},
	{".current", "A", "current drawn by an actuator or from the battery"},
	{".compression", "m", "how far a foot pad is pushed in"},
	{".stop", "N", "the share of a foot pad's normal force its end stop carries, once pushed in past its travel"},
	{"com.x", "m", "centre of mass, horizontal; com.y vertical"},
	{"cop.x", "m", "centre of pressure on the ground"},
	{"torso_tilt", "rad", "true tilt of the watched link, for the fall check"},
	{"battery.voltage", "V", "battery terminal voltage"},
	{".out", "", "output of a controller block (.p, .i, .d: a PID's three terms)"},
}

// unitOf is the recorder's unit of signal i. The names and units are read
// from the runner apart, so across a rebuild they may differ for a frame.
func unitOf(units []string, i int) string {
	if i < len(units) {
		return units[i]
	}
	return ""
}

// tracesView draws stacked plots of chosen signals over a rolling window,
// each autoscaled, with the pinned reference run behind, a legend, and a
// readout of the values under the pointer.
type tracesView struct {
	rasterView
	face font.Face

	names   []string // every recorded signal
	units   []string // their units
	shown   []int    // indices of the signals drawn, one strip each
	window  float64  // s
	now     float64  // the time at the right edge
	data    live.Trace
	ref     live.Trace
	hasRef  bool
	pointer float64 // x of the pointer in pixels, or -1
	cols    []colRange
}

type colRange struct{ lo, hi float64 }

func newTracesView() *tracesView {
	tv := &tracesView{window: 10, pointer: -1}
	tv.init(tv, fyne.NewSize(320, 180), tv.render)
	return tv
}

func (tv *tracesView) MouseIn(e *desktop.MouseEvent) { tv.MouseMoved(e) }
func (tv *tracesView) MouseMoved(e *desktop.MouseEvent) {
	size := tv.Size()
	if size.Width <= 0 || tv.img == nil {
		return
	}
	tv.pointer = float64(e.Position.X) * float64(tv.img.Bounds().Dx()) / float64(size.Width)
	tv.raster.Refresh()
}
func (tv *tracesView) MouseOut() {
	tv.pointer = -1
	tv.raster.Refresh()
}

const plotLeft, plotRight = 8.0, 8.0

func (tv *tracesView) render(w, h int) image.Image {
	tv.resize(w, h)
	tv.draw(tv.img)
	return tv.img
}

// draw paints every strip into img. Lines and text go straight into the
// pixels: a path rasterizer costs too much for a plot redrawn every frame.
func (tv *tracesView) draw(img *image.RGBA) {
	w, h := img.Rect.Dx(), img.Rect.Dy()
	if tv.face == nil {
		tv.face = newTextFace(12)
	}
	fillRect(img, 0, 0, w, h, pal.Paper)
	n := len(tv.shown)
	if n == 0 {
		drawText(img, tv.face, "No signals chosen: use Signals to pick some.", float64(w)/2, float64(h)/2, 0.5, pal.Ink)
		return
	}
	const axis = 18.0
	stripH := (float64(h) - axis) / float64(n)
	t1 := tv.now
	t0 := t1 - tv.window
	x0, x1 := plotLeft, float64(w)-plotRight
	tx := func(t float64) float64 { return x0 + (t-t0)/(t1-t0)*(x1-x0) }
	if cap(tv.cols) < w+1 {
		tv.cols = make([]colRange, w+1)
	}
	for k := range n {
		top := float64(k) * stripH
		bottom := top + stripH - 4
		lo, hi := math.Inf(1), math.Inf(-1)
		scan := func(tr *live.Trace) {
			if k >= len(tr.Values) {
				return
			}
			for i, t := range tr.Time {
				if t < t0 || t > t1 {
					continue
				}
				v := tr.Values[k][i]
				lo, hi = math.Min(lo, v), math.Max(hi, v)
			}
		}
		scan(&tv.data)
		if tv.hasRef {
			scan(&tv.ref)
		}
		unit, f := friendlyUnit(unitOf(tv.units, tv.shown[k]))
		lo, hi = shownRange(lo, hi, f)
		ty := func(v float64) float64 { return bottom - (v-lo)/(hi-lo)*(bottom-top-16) }
		hline(img, int(x0), int(x1), int(bottom+2), pal.Grid, 0)
		if lo < 0 && hi > 0 {
			hline(img, int(x0), int(x1), int(ty(0)), pal.Grid, 3)
		}
		col := pal.Traces[k%len(pal.Traces)]
		if tv.hasRef {
			tv.strokeSeries(img, &tv.ref, k, tx, ty, pal.Reference, w)
		}
		tv.strokeSeries(img, &tv.data, k, tx, ty, col, w)
		// Legend: name, unit, latest value and the range shown, in the
		// window's units (degrees, millimetres); the data stay SI.
		label := tv.names[tv.shown[k]]
		if unit != "" {
			label += " [" + unit + "]"
		}
		if m := len(tv.data.Time); m > 0 && k < len(tv.data.Values) {
			label += fmt.Sprintf("   %.4g", tv.data.Values[k][m-1]*f)
		}
		drawText(img, tv.face, label, x0+2, top+12, 0, col)
		drawText(img, tv.face, fmt.Sprintf("%.3g to %.3g %s", lo*f, hi*f, unit), x1-2, top+12, 1, pal.Ink)
		if tv.pointer >= x0 && tv.pointer <= x1 {
			t := t0 + (tv.pointer-x0)/(x1-x0)*(t1-t0)
			if v, ok := valueAt(&tv.data, k, t); ok {
				// On a backing, and on the pointer's left near the right edge.
				text := fmt.Sprintf("%.4g %s at %.3f s", v*f, unit, t)
				tw := float64(font.MeasureString(tv.face, text)) / 64
				x := tv.pointer + 4
				if x+tw > float64(w)-2 {
					x = tv.pointer - 4 - tw
				}
				fillRect(img, int(x)-3, int(bottom)-16, int(x+tw)+3, int(bottom), pal.Panel)
				drawText(img, tv.face, text, x, bottom-4, 0, pal.Ink)
			}
		}
	}
	// Time axis.
	step := niceStep(tv.window / 6)
	for t := math.Ceil(t0/step) * step; t <= t1; t += step {
		x := tx(t)
		vline(img, int(x), h-int(axis), h-int(axis)+4, pal.Ink, 0)
		drawText(img, tv.face, fmt.Sprintf("%g s", math.Round(t*1000)/1000), math.Min(math.Max(x, 14), float64(w)-18), float64(h)-3, 0.5, pal.Ink)
	}
	if tv.pointer >= x0 && tv.pointer <= x1 {
		vline(img, int(tv.pointer), 0, h-int(axis), pal.Ink, 2)
	}
}

// shownRange is the span a strip shows for data from lo to hi, with a
// margin; f converts SI to the shown unit. A flat signal gets a tenth of
// its value either side, and a signal at exactly zero one shown unit.
func shownRange(lo, hi, f float64) (float64, float64) {
	if math.IsInf(lo, 0) || math.IsNaN(lo) || math.IsNaN(hi) {
		lo, hi = -1/f, 1/f
	}
	if hi-lo < 1e-9 {
		mid := (hi + lo) / 2
		span := math.Abs(mid) * 0.1
		if span == 0 {
			span = 1 / f
		}
		lo, hi = mid-span, mid+span
	}
	pad := (hi - lo) * 0.08
	return lo - pad, hi + pad
}

// strokeSeries draws one series, reduced to the least and greatest value in
// each pixel column and painted straight into the image as vertical spans
// joined column to column: a long window costs what the width costs, and no
// path rasterizer is involved.
func (tv *tracesView) strokeSeries(img *image.RGBA, tr *live.Trace, k int, tx, ty func(float64) float64, col color.RGBA, w int) {
	if k >= len(tr.Values) || len(tr.Time) == 0 {
		return
	}
	vals := tr.Values[k]
	cols := tv.cols[:w]
	for i := range cols {
		cols[i] = colRange{math.Inf(1), math.Inf(-1)}
	}
	first, last := w, -1
	for i, t := range tr.Time {
		x := int(tx(t))
		if x < 0 || x >= w {
			continue
		}
		v := vals[i]
		if math.IsNaN(v) {
			continue
		}
		c := &cols[x]
		c.lo, c.hi = math.Min(c.lo, v), math.Max(c.hi, v)
		first, last = min(first, x), max(last, x)
	}
	prev := math.NaN()
	for x := first; x <= last; x++ {
		c := cols[x]
		if math.IsInf(c.lo, 0) {
			continue
		}
		top, bottom := ty(c.hi), ty(c.lo)
		if !math.IsNaN(prev) {
			// Join to the previous column's last value.
			top, bottom = math.Min(top, prev), math.Max(bottom, prev)
		}
		prev = (ty(c.lo) + ty(c.hi)) / 2
		span(img, x, int(math.Floor(top)), int(math.Ceil(bottom)), col, 255)
		span(img, x+1, int(math.Floor(top)), int(math.Ceil(bottom)), col, 110)
	}
}

// span blends a vertical run of pixels y0..y1 at column x with colour c at
// alpha a.
func span(img *image.RGBA, x, y0, y1 int, c color.RGBA, a uint32) {
	b := img.Bounds()
	if x < b.Min.X || x >= b.Max.X {
		return
	}
	y0, y1 = max(y0, b.Min.Y), min(y1, b.Max.Y-1)
	for y := y0; y <= y1; y++ {
		i := img.PixOffset(x, y)
		p := img.Pix[i : i+4 : i+4]
		p[0] = uint8((uint32(c.R)*a + uint32(p[0])*(255-a)) / 255)
		p[1] = uint8((uint32(c.G)*a + uint32(p[1])*(255-a)) / 255)
		p[2] = uint8((uint32(c.B)*a + uint32(p[2])*(255-a)) / 255)
		p[3] = 255
	}
}

func valueAt(tr *live.Trace, k int, t float64) (float64, bool) {
	if k >= len(tr.Values) || len(tr.Time) == 0 || t < tr.Time[0] || t > tr.Time[len(tr.Time)-1] {
		return 0, false
	}
	i, _ := slices.BinarySearch(tr.Time, t)
	return tr.Values[k][i], true
}

// niceStep rounds a step up to 1, 2 or 5 times a power of ten.
func niceStep(x float64) float64 {
	if x <= 0 {
		return 1
	}
	p := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*p >= x {
			return m * p
		}
	}
	return 10 * p
}
