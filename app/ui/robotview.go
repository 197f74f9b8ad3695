package ui

import (
	"fmt"
	"image"
	"math"

	"fyne.io/fyne/v2"
	"fyne.io/fyne/v2/canvas"
	"fyne.io/fyne/v2/widget"
	"git.sr.ht/~sbinet/gg"

	"teeter/models"
	"teeter/sim"
)

// shoveScale is the impulse per metre of world distance dragged: a drag of
// 10 cm gives 1 N*s.
const shoveScale = 10.0 // N*s per m

// robotView draws the robot to scale and turns a drag on a link into a
// shove: press on the link, drag, release; an arrow shows the impulse.
// Dragging on empty space pans; the scroll wheel zooms.
type robotView struct {
	rasterView
	dc *gg.Context

	sc    *scene
	fitSc *scene // the scene the view was fitted to: the view stays put as the robot moves
	v     view
	zoom  float64     // times the fitted scale
	pan   models.Vec2 // world offset of the view centre from the fitted one

	// A drag in progress.
	dragging  bool
	dragLink  int
	dragStart models.Vec2 // world
	dragNow   models.Vec2 // world

	onShove func(sim.Shove)
}

func newRobotView(onShove func(sim.Shove)) *robotView {
	rv := &robotView{zoom: 1, onShove: onShove, dragLink: -1}
	rv.init(rv, fyne.NewSize(320, 260), rv.render)
	return rv
}

// rasterView is a widget drawn as one image of the raster's pixel size,
// kept and reused while the size stays the same.
type rasterView struct {
	widget.BaseWidget
	raster  *canvas.Raster
	img     *image.RGBA
	minSize fyne.Size
}

// init makes the raster, drawn by render, of self, the widget embedding it.
func (rw *rasterView) init(self fyne.Widget, minSize fyne.Size, render func(w, h int) image.Image) {
	rw.minSize = minSize
	rw.raster = canvas.NewRaster(render)
	rw.ExtendBaseWidget(self)
}

func (rw *rasterView) CreateRenderer() fyne.WidgetRenderer {
	return widget.NewSimpleRenderer(rw.raster)
}

func (rw *rasterView) MinSize() fyne.Size { return rw.minSize }

// resize makes the image w x h pixels (1 x 1 for an empty raster) and
// reports whether it had to make a new one.
func (rw *rasterView) resize(w, h int) bool {
	if w <= 0 || h <= 0 {
		w, h = 1, 1
	}
	if rw.img != nil && rw.img.Bounds().Dx() == w && rw.img.Bounds().Dy() == h {
		return false
	}
	rw.img = image.NewRGBA(image.Rect(0, 0, w, h))
	return true
}

// setScene replaces what is drawn and redraws.
func (rv *robotView) setScene(sc *scene) {
	rv.sc = sc
	if rv.fitSc == nil {
		rv.fitSc = sc
	}
	rv.raster.Refresh()
}

// currentView is the view for an image of w x h pixels.
func (rv *robotView) currentView(w, h int) view {
	if rv.sc == nil {
		return view{Scale: 100, W: w, H: h}
	}
	v := fitView(rv.fitSc, w, h)
	v.Scale *= rv.zoom
	v.Center.X += rv.pan.X
	v.Center.Y += rv.pan.Y
	return v
}

// render draws the scene into the raster's image.
func (rv *robotView) render(w, h int) image.Image {
	if rv.resize(w, h) {
		rv.dc = gg.NewContextForRGBA(rv.img)
		rv.dc.SetFontFace(newTextFace(14))
	}
	rv.v = rv.currentView(rv.img.Bounds().Dx(), rv.img.Bounds().Dy())
	if rv.sc == nil {
		rv.dc.SetColor(pal.Paper)
		rv.dc.Clear()
		return rv.img
	}
	drawScene(rv.dc, rv.sc, rv.v)
	if rv.dragging && rv.dragLink >= 0 {
		rv.drawShoveArrow()
	}
	return rv.img
}

// pixelScale converts widget coordinates (fyne units) to raster pixels.
func (rv *robotView) pixelScale() float64 {
	size := rv.Size()
	if size.Width <= 0 || rv.v.W == 0 {
		return 1
	}
	return float64(rv.v.W) / float64(size.Width)
}

func (rv *robotView) toWorld(p fyne.Position) models.Vec2 {
	s := rv.pixelScale()
	v := rv.v
	if v.W == 0 {
		size := rv.Size()
		v = rv.currentView(int(size.Width), int(size.Height))
	}
	return v.toWorld(float64(p.X)*s, float64(p.Y)*s)
}

func (rv *robotView) impulse() models.Vec2 {
	return models.Vec2{X: (rv.dragNow.X - rv.dragStart.X) * shoveScale, Y: (rv.dragNow.Y - rv.dragStart.Y) * shoveScale}
}

func (rv *robotView) drawShoveArrow() {
	dc := rv.dc
	ax, ay := rv.v.toPixel(rv.dragStart)
	bx, by := rv.v.toPixel(rv.dragNow)
	dc.SetColor(pal.Shove)
	dc.SetLineWidth(3)
	dc.DrawLine(ax, ay, bx, by)
	dc.Stroke()
	ang := math.Atan2(by-ay, bx-ax)
	const head = 12
	dc.MoveTo(bx, by)
	dc.LineTo(bx-head*math.Cos(ang-0.4), by-head*math.Sin(ang-0.4))
	dc.LineTo(bx-head*math.Cos(ang+0.4), by-head*math.Sin(ang+0.4))
	dc.ClosePath()
	dc.Fill()
	j := rv.impulse()
	label := fmt.Sprintf("%.2f N·s", math.Hypot(j.X, j.Y))
	// Beside the arrow's head, on the side that keeps it in the view.
	lw, lh := dc.MeasureString(label)
	x, ax := bx+8, 0.0
	if x+lw > float64(rv.v.W)-4 {
		x, ax = bx-8, 1
	}
	y := math.Max(by-8, lh+4)
	dc.DrawStringAnchored(label, x, y, ax, 0)
}

// Dragged follows a drag. Each event carries the pointer position and the
// move since the previous event, so the press point is the first event's
// position less its move.
func (rv *robotView) Dragged(e *fyne.DragEvent) {
	now := rv.toWorld(e.Position)
	if !rv.dragging {
		rv.dragging = true
		start := rv.toWorld(fyne.NewPos(e.Position.X-e.Dragged.DX, e.Position.Y-e.Dragged.DY))
		rv.dragStart = start
		rv.dragLink = -1
		if rv.sc != nil {
			rv.dragLink = hitLink(rv.sc, start, 4/math.Max(rv.v.Scale, 1e-9))
		}
	}
	if rv.dragLink < 0 {
		// Pan: move the world with the pointer.
		prev := rv.toWorld(fyne.NewPos(e.Position.X-e.Dragged.DX, e.Position.Y-e.Dragged.DY))
		rv.pan.X -= now.X - prev.X
		rv.pan.Y -= now.Y - prev.Y
	}
	rv.dragNow = now
	rv.raster.Refresh()
}

// DragEnd gives the shove drawn by the drag.
func (rv *robotView) DragEnd() {
	if rv.dragging && rv.dragLink >= 0 && rv.sc != nil && rv.onShove != nil {
		l := rv.sc.Links[rv.dragLink]
		// The point in the link's frame: the plant applies it there.
		s, c := math.Sincos(-l.Pose.Angle)
		dx, dy := rv.dragStart.X-l.Pose.Position.X, rv.dragStart.Y-l.Pose.Position.Y
		local := models.Vec2{X: c*dx - s*dy, Y: s*dx + c*dy}
		j := rv.impulse()
		if math.Hypot(j.X, j.Y) > 1e-6 {
			rv.onShove(sim.Shove{Link: l.Name, Point: &local, Impulse: j})
		}
	}
	rv.dragging = false
	rv.dragLink = -1
	rv.raster.Refresh()
}

// Scrolled zooms about the view centre.
func (rv *robotView) Scrolled(e *fyne.ScrollEvent) {
	f := math.Pow(1.1, float64(e.Scrolled.DY)/10)
	rv.zoomBy(f)
}

func (rv *robotView) zoomBy(f float64) {
	rv.zoom = math.Max(0.2, math.Min(20, rv.zoom*f))
	rv.raster.Refresh()
}

// resetView returns to the fitted view.
func (rv *robotView) resetView() {
	rv.zoom, rv.pan = 1, models.Vec2{}
	rv.fitSc = rv.sc
	rv.raster.Refresh()
}
