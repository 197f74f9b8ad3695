package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"
)

// The pads touch the ground through a contact constraint of our own rather
// than through cp's collision pipeline: cp v2.4.0 allocates two or three
// objects per touching shape pair per step (the narrow-phase result and the
// handler lookup key escape), and the hot loop must not allocate. The ground
// is a known surface, so a point-versus-surface contact is simple, and it
// gives the pad's normal force and friction coefficient exactly.

// ground is the floor surface: a plane through the origin tilted by Tilt,
// raised by stepH for x >= stepX.
type ground struct {
	tan, sin, cos float64
	stepX, stepH  float64
}

func newGround(tilt, stepX, stepH float64) ground {
	return ground{tan: math.Tan(tilt), sin: math.Sin(tilt), cos: math.Cos(tilt), stepX: stepX, stepH: stepH}
}

// height is the surface height at x.
func (g *ground) height(x float64) float64 {
	h := x * g.tan
	if g.stepH != 0 && x >= g.stepX {
		h += g.stepH
	}
	return h
}

// depth returns how far p is inside the ground (negative: above it) and the
// outward surface normal at the nearest face. Near a step, a point inside
// the higher block is pushed out through whichever of its top and riser
// faces is nearer.
func (g *ground) depth(p cp.Vector) (float64, cp.Vector) {
	n := cp.Vector{X: -g.sin, Y: g.cos}
	offset := 0.0
	if g.stepH != 0 && p.X >= g.stepX {
		offset = g.stepH
	}
	// Distance below the plane y = x*tan + offset, measured along its normal.
	d := (p.X*g.tan + offset - p.Y) * g.cos
	if g.stepH == 0 || d <= 0 {
		return d, n
	}
	// Inside the higher block: the riser may be nearer.
	if g.stepH > 0 && p.X >= g.stepX {
		if r := p.X - g.stepX; r < d && p.Y < g.stepX*g.tan+g.stepH {
			return r, cp.Vector{X: -1}
		}
	}
	if g.stepH < 0 && p.X < g.stepX {
		if r := g.stepX - p.X; r < d && p.Y < g.stepX*g.tan {
			return r, cp.Vector{X: 1}
		}
	}
	return d, n
}

const (
	// contactMargin is how far above the ground a pad corner is already
	// treated as a (speculative) contact, so a falling pad does not sink in
	// by a whole step's travel.
	contactMargin = 5e-3
	// contactSlop is the penetration left uncorrected, to avoid jitter.
	contactSlop = 1e-4
	// contactBias is the fraction of the penetration beyond the slop
	// removed per step.
	contactBias = 0.2
)

// contactPoint is one bottom corner of a pad.
type contactPoint struct {
	active       bool
	r, n         cp.Vector // from the pad centre to the corner, world; outward ground normal
	nMass, tMass float64
	bias         float64 // target normal velocity
	jn, jt       float64 // accumulated normal and tangent impulses
}

// padContact holds one pad's two bottom corners on the ground, with Coulomb
// friction of the pad's own coefficient, solved by sequential impulses like
// cp's own contacts.
type padContact struct {
	*cp.Constraint
	body         *cp.Body
	ground       *ground
	halfW, halfT float64
	friction     float64
	pts          [2]contactPoint
	mInv, iInv   float64
}

func newPadContact(body, static *cp.Body, g *ground, width, thickness, friction float64) *padContact {
	c := &padContact{body: body, ground: g, halfW: width / 2, halfT: thickness / 2, friction: friction}
	c.Constraint = cp.NewConstraint(c, body, static)
	return c
}

func (c *padContact) PreStep(dt float64) {
	b := c.body
	c.mInv, c.iInv = 1/b.Mass(), 1/b.Moment()
	rot := b.Rotation()
	centre := b.Position()
	for i := range c.pts {
		pt := &c.pts[i]
		x := c.halfW
		if i == 0 {
			x = -x
		}
		r := rot.Rotate(cp.Vector{X: x, Y: -c.halfT})
		d, n := c.ground.depth(centre.Add(r))
		if d < -contactMargin {
			pt.active, pt.jn, pt.jt = false, 0, 0
			continue
		}
		pt.active, pt.r, pt.n = true, r, n
		rn, rt := r.Cross(n), r.Cross(n.Perp())
		pt.nMass = 1 / (c.mInv + c.iInv*rn*rn)
		pt.tMass = 1 / (c.mInv + c.iInv*rt*rt)
		switch {
		case d > contactSlop:
			pt.bias = contactBias * (d - contactSlop) / dt
		case d < 0:
			pt.bias = d / dt // may approach by the gap, no faster
		default:
			pt.bias = 0
		}
	}
}

func (c *padContact) apply(pt *contactPoint, j cp.Vector) {
	b := c.body
	b.SetVelocityVector(b.Velocity().Add(j.Mult(c.mInv)))
	b.SetAngularVelocity(b.AngularVelocity() + c.iInv*pt.r.Cross(j))
}

func (c *padContact) ApplyCachedImpulse(dtCoef float64) {
	for i := range c.pts {
		pt := &c.pts[i]
		if pt.active {
			c.apply(pt, pt.n.Rotate(cp.Vector{X: pt.jn, Y: pt.jt}).Mult(dtCoef))
		}
	}
}

func (c *padContact) ApplyImpulse(dt float64) {
	b := c.body
	for i := range c.pts {
		pt := &c.pts[i]
		if !pt.active {
			continue
		}
		vr := b.Velocity().Add(pt.r.Perp().Mult(b.AngularVelocity()))
		t := pt.n.Perp()
		jnOld := pt.jn
		pt.jn = math.Max(jnOld+(pt.bias-vr.Dot(pt.n))*pt.nMass, 0)
		jtMax := c.friction * pt.jn
		jtOld := pt.jt
		pt.jt = cp.Clamp(jtOld-vr.Dot(t)*pt.tMass, -jtMax, jtMax)
		c.apply(pt, pt.n.Rotate(cp.Vector{X: pt.jn - jnOld, Y: pt.jt - jtOld}))
	}
}

// GetImpulse is the total normal impulse of the last step.
func (c *padContact) GetImpulse() float64 {
	return c.pts[0].jn + c.pts[1].jn
}

// centreX is the impulse-weighted x of the contact points, for the centre
// of pressure; ok is false without contact.
func (c *padContact) centreX() (x, jn float64) {
	p := c.body.Position()
	for i := range c.pts {
		pt := &c.pts[i]
		if pt.active && pt.jn > 0 {
			x += (p.X + pt.r.X) * pt.jn
			jn += pt.jn
		}
	}
	return x, jn
}

// slideFriction is Coulomb friction along a prismatic joint: the relative
// velocity of the two anchors along the axis is driven to zero with an
// impulse bounded by the friction force, as cp's simple motor does for a
// rotation (cp has no linear counterpart).
type slideFriction struct {
	*cp.Constraint
	anchorA, anchorB cp.Vector // body-local
	axis             cp.Vector // in a's body frame
	force            float64
	r1, r2, n        cp.Vector
	mass, jAcc       float64
}

func newSlideFriction(a, b *cp.Body, anchorA, anchorB, axis cp.Vector, force float64) *slideFriction {
	f := &slideFriction{anchorA: anchorA, anchorB: anchorB, axis: axis, force: force}
	f.Constraint = cp.NewConstraint(f, a, b)
	return f
}

func (f *slideFriction) PreStep(dt float64) {
	a, b := f.A(), f.B()
	f.r1 = a.Rotation().Rotate(f.anchorA)
	f.r2 = b.Rotation().Rotate(f.anchorB)
	f.n = a.Rotation().Rotate(f.axis)
	r1n, r2n := f.r1.Cross(f.n), f.r2.Cross(f.n)
	k := 1/a.Mass() + 1/b.Mass() + r1n*r1n/a.Moment() + r2n*r2n/b.Moment()
	f.mass = 1 / k
}

func (f *slideFriction) impulse(j float64) {
	a, b := f.A(), f.B()
	jv := f.n.Mult(j)
	a.SetVelocityVector(a.Velocity().Sub(jv.Mult(1 / a.Mass())))
	a.SetAngularVelocity(a.AngularVelocity() - f.r1.Cross(jv)/a.Moment())
	b.SetVelocityVector(b.Velocity().Add(jv.Mult(1 / b.Mass())))
	b.SetAngularVelocity(b.AngularVelocity() + f.r2.Cross(jv)/b.Moment())
}

func (f *slideFriction) ApplyCachedImpulse(dtCoef float64) { f.impulse(f.jAcc * dtCoef) }

func (f *slideFriction) ApplyImpulse(dt float64) {
	a, b := f.A(), f.B()
	va := a.Velocity().Add(f.r1.Perp().Mult(a.AngularVelocity()))
	vb := b.Velocity().Add(f.r2.Perp().Mult(b.AngularVelocity()))
	vr := vb.Sub(va).Dot(f.n)
	jMax := f.force * dt
	old := f.jAcc
	f.jAcc = cp.Clamp(old-vr*f.mass, -jMax, jMax)
	f.impulse(f.jAcc - old)
}

func (f *slideFriction) GetImpulse() float64 { return math.Abs(f.jAcc) }
