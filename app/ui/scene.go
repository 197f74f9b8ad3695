package ui

import (
	"fmt"
	"image/color"
	"math"

	"git.sr.ht/~sbinet/gg"

	"teeter/models"
)

// scene is one picture of the robot in world coordinates (metres, y up):
// what the robot view draws, filled from the model and the plant's snapshot.
type scene struct {
	Links                         []sceneLink
	Joints                        []models.Vec2
	Actuators                     []sceneActuator
	Pads                          []scenePad
	Ballast                       *sceneBallast
	IMUs                          []sceneIMU
	COM                           models.Vec2
	HasCOM                        bool
	COP                           float64 // x of the centre of pressure on the ground
	HasCOP                        bool
	Support                       [2]float64 // x range of the support region on the ground
	HasSup                        bool
	GroundTilt, StepX, StepHeight float64
	Plane                         models.Plane
}

type sceneLink struct {
	Name  string
	Pose  models.Pose
	Shape models.Shape
	Root  bool
}

type sceneActuator struct {
	From, To models.Vec2 // world points; equal for a rotary actuator drawn at a joint
	Rotary   bool
	// Gap is where the output sits within the free play, -1..1 (the two
	// edges); AtEdge says the output is against one, driving.
	Gap    float64
	AtEdge bool
	HasGap bool
}

type scenePad struct {
	Center      models.Vec2 // world, of the pad at its current compression
	Angle       float64
	Width, High float64
	Compression float64 // fraction of the free travel used, 0..1
}

type sceneBallast struct {
	Center models.Vec2
	Angle  float64
	Size   float64
	// Slide ends in world coordinates, to draw the rail.
	RailA, RailB models.Vec2
}

type sceneIMU struct {
	At    models.Vec2
	Angle float64
}

// view maps world metres to pixels: Scale pixels per metre, Center the
// world point drawn at the middle of the image.
type view struct {
	Scale  float64
	Center models.Vec2
	W, H   int
}

func (v view) toPixel(p models.Vec2) (float64, float64) {
	return float64(v.W)/2 + (p.X-v.Center.X)*v.Scale, float64(v.H)/2 - (p.Y-v.Center.Y)*v.Scale
}

func (v view) toWorld(x, y float64) models.Vec2 {
	return models.Vec2{X: v.Center.X + (x-float64(v.W)/2)/v.Scale, Y: v.Center.Y - (y-float64(v.H)/2)/v.Scale}
}

// drawScene paints the scene with dc, whose image is v.W x v.H pixels.
func drawScene(dc *gg.Context, sc *scene, v view) {
	dc.SetColor(pal.Paper)
	dc.Clear()
	drawGround(dc, sc, v)
	if sc.HasSup {
		x0, y0 := v.toPixel(models.Vec2{X: sc.Support[0], Y: groundY(sc, sc.Support[0])})
		x1, _ := v.toPixel(models.Vec2{X: sc.Support[1], Y: groundY(sc, sc.Support[1])})
		dc.SetColor(pal.Support)
		dc.DrawRectangle(x0, y0-4, math.Max(x1-x0, 1), 8)
		dc.Fill()
	}
	for _, l := range sc.Links {
		if !l.Root {
			drawLink(dc, l, v, pal.Limb)
		}
	}
	for _, l := range sc.Links {
		if l.Root {
			drawLink(dc, l, v, pal.Torso)
		}
	}
	for _, p := range sc.Pads {
		drawPad(dc, p, v)
	}
	if b := sc.Ballast; b != nil {
		ax, ay := v.toPixel(b.RailA)
		bx, by := v.toPixel(b.RailB)
		dc.SetColor(pal.Outline)
		dc.SetLineWidth(2)
		dc.DrawLine(ax, ay, bx, by)
		dc.Stroke()
		drawBox(dc, b.Center, b.Angle, b.Size, b.Size, v, pal.Ballast)
	}
	for _, j := range sc.Joints {
		x, y := v.toPixel(j)
		r := math.Max(2.5, 0.012*v.Scale)
		dc.DrawCircle(x, y, r)
		dc.SetColor(pal.Joint)
		dc.FillPreserve()
		dc.SetColor(pal.Outline)
		dc.SetLineWidth(1.5)
		dc.Stroke()
	}
	// Actuators over the joints, so a slide's sleeve at a joint shows.
	for _, a := range sc.Actuators {
		drawActuator(dc, a, v)
	}
	for _, m := range sc.IMUs {
		x, y := v.toPixel(m.At)
		s := math.Max(3, 0.012*v.Scale)
		dc.Push()
		dc.Translate(x, y)
		dc.Rotate(-m.Angle)
		dc.DrawRectangle(-s, -s, 2*s, 2*s)
		dc.SetColor(pal.IMU)
		dc.Fill()
		dc.SetColor(pal.Joint)
		dc.SetLineWidth(1.2)
		dc.DrawLine(0, s*0.6, 0, -s*0.6) // the sensor's up axis
		dc.Stroke()
		dc.Pop()
	}
	if sc.HasCOM {
		drawCOM(dc, sc, v)
	}
	if sc.HasCOP {
		x, y := v.toPixel(models.Vec2{X: sc.COP, Y: groundY(sc, sc.COP)})
		dc.SetColor(pal.COP)
		dc.MoveTo(x, y-1)
		dc.LineTo(x-6, y+9)
		dc.LineTo(x+6, y+9)
		dc.ClosePath()
		dc.Fill()
	}
	drawKey(dc, sc, v)
}

// scaleBars are the lengths a scale bar may show, in millimetres.
var scaleBars = []float64{5, 10, 20, 50, 100, 200, 500, 1000, 2000}

// drawKey marks the view's scale and which way it looks: a bar of a round
// length at the top left, and at the top right whether the robot is seen
// from behind (frontal: its left on the left) or from the side (sagittal:
// forward to the right; the text font has no arrow glyph).
func drawKey(dc *gg.Context, sc *scene, v view) {
	mm := scaleBars[len(scaleBars)-1]
	for _, l := range scaleBars {
		if l/1000*v.Scale >= 60 {
			mm = l
			break
		}
	}
	px := mm / 1000 * v.Scale
	const x0, y0 = 14.0, 22.0
	dc.SetColor(pal.Ink)
	dc.SetLineWidth(2)
	dc.DrawLine(x0, y0, x0+px, y0)
	dc.DrawLine(x0, y0-5, x0, y0+5)
	dc.DrawLine(x0+px, y0-5, x0+px, y0+5)
	dc.Stroke()
	dc.DrawStringAnchored(fmt.Sprintf("%g mm", mm), x0+px+8, y0, 0, 0.35)
	label := ""
	switch sc.Plane {
	case models.Frontal:
		label = "seen from behind"
	case models.Sagittal:
		label = "forward ->"
	}
	if label != "" {
		dc.DrawStringAnchored(label, float64(v.W)-14, y0, 1, 0.35)
	}
}

func groundY(sc *scene, x float64) float64 {
	y := x * math.Tan(sc.GroundTilt)
	if sc.StepHeight != 0 && x >= sc.StepX {
		y += sc.StepHeight
	}
	return y
}

func drawGround(dc *gg.Context, sc *scene, v view) {
	left := v.toWorld(0, 0).X
	right := v.toWorld(float64(v.W), 0).X
	xs := []float64{left}
	if sc.StepHeight != 0 && sc.StepX > left && sc.StepX < right {
		xs = append(xs, sc.StepX, sc.StepX)
	}
	xs = append(xs, right)
	for i, x := range xs {
		y := groundY(sc, x)
		if i == 1 && len(xs) == 4 {
			y -= sc.StepHeight // foot of the riser
		}
		px, py := v.toPixel(models.Vec2{X: x, Y: y})
		if i == 0 {
			dc.MoveTo(px, py)
		} else {
			dc.LineTo(px, py)
		}
	}
	dc.LineTo(float64(v.W), float64(v.H))
	dc.LineTo(0, float64(v.H))
	dc.ClosePath()
	dc.SetColor(pal.Ground)
	dc.FillPreserve()
	dc.SetColor(pal.GroundLine)
	dc.SetLineWidth(2)
	dc.Stroke()
}

func drawLink(dc *gg.Context, l sceneLink, v view, fill color.Color) {
	s := l.Shape
	switch s.Kind {
	case models.Circle:
		c := l.Pose.Apply(s.Center)
		x, y := v.toPixel(c)
		dc.DrawCircle(x, y, s.Radius*v.Scale)
	case models.Capsule:
		a := l.Pose.Apply(models.Vec2{X: s.Center.X, Y: s.Center.Y - s.Length/2})
		b := l.Pose.Apply(models.Vec2{X: s.Center.X, Y: s.Center.Y + s.Length/2})
		ax, ay := v.toPixel(a)
		bx, by := v.toPixel(b)
		r := s.Radius * v.Scale
		ang := math.Atan2(by-ay, bx-ax)
		dc.NewSubPath()
		dc.DrawArc(bx, by, r, ang-math.Pi/2, ang+math.Pi/2)
		dc.DrawArc(ax, ay, r, ang+math.Pi/2, ang+3*math.Pi/2)
		dc.ClosePath()
	default:
		c := l.Pose.Apply(s.Center)
		dc.Push()
		x, y := v.toPixel(c)
		dc.Translate(x, y)
		dc.Rotate(-l.Pose.Angle)
		w, h := s.Width*v.Scale, s.Height*v.Scale
		dc.DrawRoundedRectangle(-w/2, -h/2, w, h, math.Min(4, math.Min(w, h)/4))
		dc.Pop()
	}
	dc.SetColor(fill)
	dc.FillPreserve()
	dc.SetColor(pal.Outline)
	dc.SetLineWidth(1.5)
	dc.Stroke()
}

func drawBox(dc *gg.Context, c models.Vec2, angle, w, h float64, v view, fill color.Color) {
	x, y := v.toPixel(c)
	dc.Push()
	dc.Translate(x, y)
	dc.Rotate(-angle)
	dc.DrawRectangle(-w*v.Scale/2, -h*v.Scale/2, w*v.Scale, h*v.Scale)
	dc.Pop()
	dc.SetColor(fill)
	dc.FillPreserve()
	dc.SetColor(pal.Outline)
	dc.SetLineWidth(1)
	dc.Stroke()
}

func drawPad(dc *gg.Context, p scenePad, v view) {
	// Green deepens with compression, so a loaded pad stands out.
	f := math.Max(0, math.Min(1, p.Compression))
	fill := mix(pal.Pad, pal.PadLoad, f)
	drawBox(dc, p.Center, p.Angle, p.Width, math.Max(p.High, 2/v.Scale), v, fill)
}

func mix(a, b color.RGBA, f float64) color.RGBA {
	m := func(x, y uint8) uint8 { return uint8(float64(x)*(1-f) + float64(y)*f + 0.5) }
	return color.RGBA{m(a.R, b.R), m(a.G, b.G), m(a.B, b.B), 0xff}
}

// drawActuator draws a linear actuator as a rod between its attachment
// points, with a sleeve at the middle whose marker shows where the output
// sits in the free play; a rotary one as a ring at its joint with the same
// marker on an arc.
func drawActuator(dc *gg.Context, a sceneActuator, v view) {
	ax, ay := v.toPixel(a.From)
	bx, by := v.toPixel(a.To)
	mark := pal.Slack
	if a.AtEdge {
		mark = pal.SlackEdge
	}
	if a.Rotary {
		r := math.Max(6, 0.03*v.Scale)
		dc.SetColor(pal.Actuator)
		dc.SetLineWidth(2)
		dc.DrawCircle(ax, ay, r)
		dc.Stroke()
		if a.HasGap {
			ang := -math.Pi/2 + a.Gap*math.Pi/4
			dc.SetColor(mark)
			dc.SetLineWidth(3)
			dc.DrawArc(ax, ay, r, -math.Pi/2-math.Pi/4, -math.Pi/2+math.Pi/4)
			dc.Stroke()
			dc.DrawCircle(ax+r*math.Cos(ang), ay+r*math.Sin(ang), 3.5)
			dc.Fill()
		}
		return
	}
	dc.SetColor(pal.Actuator)
	dc.SetLineWidth(math.Max(2, 0.008*v.Scale))
	dc.DrawLine(ax, ay, bx, by)
	dc.Stroke()
	if !a.HasGap {
		return
	}
	// The sleeve: a window along the rod, the output's marker inside it.
	mx, my := (ax+bx)/2, (ay+by)/2
	dx, dy := bx-ax, by-ay
	l := math.Hypot(dx, dy)
	if l < 1 {
		return
	}
	ux, uy := dx/l, dy/l
	half := math.Min(l/4, math.Max(7, 0.02*v.Scale))
	dc.SetColor(mark)
	dc.SetLineWidth(5)
	dc.DrawLine(mx-ux*half, my-uy*half, mx+ux*half, my+uy*half)
	dc.Stroke()
	px, py := mx+ux*half*a.Gap, my+uy*half*a.Gap
	dc.SetColor(pal.Outline)
	dc.SetLineWidth(2.5)
	dc.DrawLine(px-uy*5, py+ux*5, px+uy*5, py-ux*5)
	dc.Stroke()
}

func drawCOM(dc *gg.Context, sc *scene, v view) {
	x, y := v.toPixel(sc.COM)
	gy := groundY(sc, sc.COM.X)
	_, py := v.toPixel(models.Vec2{X: sc.COM.X, Y: gy})
	dc.SetColor(pal.COM)
	dc.SetLineWidth(1)
	dc.SetDash(4, 3)
	dc.DrawLine(x, y, x, py)
	dc.Stroke()
	dc.SetDash()
	// The usual quartered disc of a centre of mass (common practice).
	r := 6.0
	dc.SetColor(color.White)
	dc.DrawCircle(x, y, r)
	dc.Fill()
	dc.SetColor(pal.COM)
	dc.MoveTo(x, y)
	dc.DrawArc(x, y, r, 0, math.Pi/2)
	dc.ClosePath()
	dc.Fill()
	dc.MoveTo(x, y)
	dc.DrawArc(x, y, r, math.Pi, 3*math.Pi/2)
	dc.ClosePath()
	dc.Fill()
	dc.DrawCircle(x, y, r)
	dc.SetLineWidth(1.2)
	dc.Stroke()
	// Its projection on the ground.
	dc.DrawLine(x-5, py, x+5, py)
	dc.SetLineWidth(2)
	dc.Stroke()
}

// fitView frames the scene: the ground near the bottom, the robot's height
// filling most of the image.
func fitView(sc *scene, w, h int) view {
	top, lo, hi := 0.5, math.Inf(1), math.Inf(-1)
	for _, l := range sc.Links {
		p := l.Pose.Position
		top = math.Max(top, p.Y+0.2)
		lo, hi = math.Min(lo, p.X), math.Max(hi, p.X)
	}
	if math.IsInf(lo, 0) {
		lo, hi = 0, 0
	}
	height := top * 1.25
	scale := float64(h) / height
	if width := (hi - lo + 1.0); width*scale > float64(w) {
		scale = float64(w) / width
	}
	cx := (lo + hi) / 2
	// Ground at 12% from the bottom.
	cy := float64(h)/scale/2 - 0.12*float64(h)/scale
	return view{Scale: scale, Center: models.Vec2{X: cx, Y: cy}, W: w, H: h}
}

// hitLink returns the index of the link under world point p, or -1.
func hitLink(sc *scene, p models.Vec2, slack float64) int {
	best, bestD := -1, slack
	for i, l := range sc.Links {
		d := distToShape(l, p)
		if d <= bestD {
			best, bestD = i, d
		}
	}
	return best
}

// distToShape is the distance from p to link l's shape, 0 inside.
func distToShape(l sceneLink, p models.Vec2) float64 {
	// Into the link frame.
	s, c := math.Sincos(-l.Pose.Angle)
	dx, dy := p.X-l.Pose.Position.X, p.Y-l.Pose.Position.Y
	q := models.Vec2{X: c*dx - s*dy - l.Shape.Center.X, Y: s*dx + c*dy - l.Shape.Center.Y}
	switch l.Shape.Kind {
	case models.Circle:
		return math.Max(0, math.Hypot(q.X, q.Y)-l.Shape.Radius)
	case models.Capsule:
		y := math.Max(-l.Shape.Length/2, math.Min(l.Shape.Length/2, q.Y))
		return math.Max(0, math.Hypot(q.X, q.Y-y)-l.Shape.Radius)
	default:
		ex := math.Max(0, math.Abs(q.X)-l.Shape.Width/2)
		ey := math.Max(0, math.Abs(q.Y)-l.Shape.Height/2)
		return math.Hypot(ex, ey)
	}
}
