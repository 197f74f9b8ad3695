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

// padContact holds a pad's bottom centre on the ground, with Coulomb
// friction of the pad's own coefficient, solved by sequential impulses like
// cp's own contacts. A pad is a compliant point: its spring gives it its
// compliance, and its width only shows in drawings and the support region.
// (Two rigid corner contacts on a pad locked to its foot make the loads
// statically indeterminate within the contact slop, so pads settled with
// unequal loads.) The pad cannot turn relative to its foot, so the moment
// of a contact impulse about the pad's centre goes straight to the foot's
// rotation rather than through the pad's tiny inertia and the lock, which
// Gauss-Seidel handles badly.
type padContact struct {
	*cp.Constraint
	body, foot   *cp.Body
	ground       *ground
	halfT        float64
	friction     float64
	mInv, iInv   float64
	active       bool
	r, n         cp.Vector // pad centre to contact point, world; outward ground normal
	nMass, tMass float64
	bias         float64 // target normal velocity
	jn, jt       float64 // accumulated normal and tangent impulses
}

func newPadContact(body, foot, static *cp.Body, g *ground, thickness, friction float64) *padContact {
	c := &padContact{body: body, foot: foot, ground: g, halfT: thickness / 2, friction: friction}
	c.Constraint = cp.NewConstraint(c, body, static)
	return c
}

func (c *padContact) PreStep(dt float64) {
	b := c.body
	c.mInv, c.iInv = 1/b.Mass(), 1/(c.foot.Moment()+b.Moment())
	r := b.Rotation().Rotate(cp.Vector{Y: -c.halfT})
	d, n := c.ground.depth(b.Position().Add(r))
	if d < -contactMargin {
		c.active, c.jn, c.jt = false, 0, 0
		return
	}
	c.active, c.r, c.n = true, r, n
	rn, rt := r.Cross(n), r.Cross(n.Perp())
	c.nMass = 1 / (c.mInv + c.iInv*rn*rn)
	c.tMass = 1 / (c.mInv + c.iInv*rt*rt)
	switch {
	case d > contactSlop:
		c.bias = contactBias * (d - contactSlop) / dt
	case d < 0:
		c.bias = d / dt // may approach by the gap, no faster
	default:
		c.bias = 0
	}
}

func (c *padContact) apply(j cp.Vector) {
	b, f := c.body, c.foot
	b.SetVelocityVector(b.Velocity().Add(j.Mult(c.mInv)))
	f.SetAngularVelocity(f.AngularVelocity() + c.iInv*c.r.Cross(j))
}

func (c *padContact) ApplyCachedImpulse(dtCoef float64) {
	if c.active {
		c.apply(c.n.Rotate(cp.Vector{X: c.jn, Y: c.jt}).Mult(dtCoef))
	}
}

func (c *padContact) ApplyImpulse(dt float64) {
	if !c.active {
		return
	}
	vr := c.body.Velocity().Add(c.r.Perp().Mult(c.foot.AngularVelocity()))
	t := c.n.Perp()
	jnOld := c.jn
	c.jn = math.Max(jnOld+(c.bias-vr.Dot(c.n))*c.nMass, 0)
	jtMax := c.friction * c.jn
	jtOld := c.jt
	c.jt = cp.Clamp(jtOld-vr.Dot(t)*c.tMass, -jtMax, jtMax)
	c.apply(c.n.Rotate(cp.Vector{X: c.jn - jnOld, Y: c.jt - jtOld}))
}

// GetImpulse is the normal impulse of the last step.
func (c *padContact) GetImpulse() float64 { return c.jn }

// point is the contact point, world.
func (c *padContact) point() cp.Vector { return c.body.Position().Add(c.r) }

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

// What a screwLimit measures.
type limitGeometry int

const (
	limitDistance limitGeometry = iota // distance between two anchors
	limitAxis                          // displacement of b's anchor from a's along an axis fixed in a
	limitAngle                         // b's angle minus a's
)

// screwLimit keeps a coordinate q of two bodies within [Min, Max], edges
// that move at Speed: the output of a lead screw with backlash, free inside
// the band and driven rigidly, with unlimited force, at its edges. Unlike
// cp's slide and rotary-limit joints it keeps a signed impulse per edge
// (the load is read from it), warm-starts each edge on its own, and feeds
// the edges' speed forward so a moving screw is followed without lag.
// Each edge is a speculative one-sided constraint: the coordinate may
// approach an edge by the gap in a step, no faster.
type screwLimit struct {
	*cp.Constraint
	geometry         limitGeometry
	anchorA, anchorB cp.Vector // body-local
	axis             cp.Vector // limitAxis: in a's body frame
	Min, Max, Speed  float64
	correction       float64 // fraction of a violation removed per step

	q, mass  float64
	r1, r2   cp.Vector
	n        cp.Vector
	biasLo   float64 // the velocity bounds of the step
	biasHi   float64
	jLo, jHi float64 // accumulated impulses: jLo >= 0 pushes q up, jHi <= 0 down
}

func newScrewLimit(geometry limitGeometry, a, b *cp.Body, anchorA, anchorB, axis cp.Vector, q, correction float64) *screwLimit {
	l := &screwLimit{geometry: geometry, anchorA: anchorA, anchorB: anchorB, axis: axis, Min: q, Max: q, correction: correction}
	l.Constraint = cp.NewConstraint(l, a, b)
	return l
}

// coordinate measures q and, for the linear kinds, the lever arms.
func (l *screwLimit) coordinate() float64 {
	a, b := l.A(), l.B()
	switch l.geometry {
	case limitAngle:
		return b.Angle() - a.Angle()
	case limitAxis:
		pa, pb := a.LocalToWorld(l.anchorA), b.LocalToWorld(l.anchorB)
		l.n = a.Rotation().Rotate(l.axis)
		l.r1, l.r2 = pb.Sub(a.Position()), pb.Sub(b.Position())
		return pb.Sub(pa).Dot(l.n)
	}
	pa, pb := a.LocalToWorld(l.anchorA), b.LocalToWorld(l.anchorB)
	d := pb.Sub(pa)
	dist := d.Length()
	if dist > 0 {
		l.n = d.Mult(1 / dist)
	} else {
		l.n = cp.Vector{X: 1}
	}
	l.r1, l.r2 = pa.Sub(a.Position()), pb.Sub(b.Position())
	return dist
}

// edgeRate is the speed at which q may close a gap to an edge in a step:
// all of it when clear of the edge, a fraction of a violation.
func (l *screwLimit) edgeRate(gap, dt float64) float64 {
	if gap >= 0 {
		return gap / dt
	}
	return l.correction * gap / dt
}

func (l *screwLimit) PreStep(dt float64) {
	a, b := l.A(), l.B()
	l.q = l.coordinate()
	if l.geometry == limitAngle {
		l.mass = 1 / (1/a.Moment() + 1/b.Moment())
	} else {
		r1n, r2n := l.r1.Cross(l.n), l.r2.Cross(l.n)
		l.mass = 1 / (1/a.Mass() + 1/b.Mass() + r1n*r1n/a.Moment() + r2n*r2n/b.Moment())
	}
	// Over the step q' must stay within [biasLo, biasHi].
	l.biasLo = l.Speed - l.edgeRate(l.q-l.Min, dt)
	l.biasHi = l.Speed + l.edgeRate(l.Max-l.q, dt)
}

func (l *screwLimit) velocity() float64 {
	a, b := l.A(), l.B()
	if l.geometry == limitAngle {
		return b.AngularVelocity() - a.AngularVelocity()
	}
	va := a.Velocity().Add(l.r1.Perp().Mult(a.AngularVelocity()))
	vb := b.Velocity().Add(l.r2.Perp().Mult(b.AngularVelocity()))
	return vb.Sub(va).Dot(l.n)
}

func (l *screwLimit) impulse(j float64) {
	a, b := l.A(), l.B()
	if l.geometry == limitAngle {
		a.SetAngularVelocity(a.AngularVelocity() - j/a.Moment())
		b.SetAngularVelocity(b.AngularVelocity() + j/b.Moment())
		return
	}
	jv := l.n.Mult(j)
	a.SetVelocityVector(a.Velocity().Sub(jv.Mult(1 / a.Mass())))
	a.SetAngularVelocity(a.AngularVelocity() - l.r1.Cross(jv)/a.Moment())
	b.SetVelocityVector(b.Velocity().Add(jv.Mult(1 / b.Mass())))
	b.SetAngularVelocity(b.AngularVelocity() + l.r2.Cross(jv)/b.Moment())
}

func (l *screwLimit) ApplyCachedImpulse(dtCoef float64) {
	l.jLo *= dtCoef
	l.jHi *= dtCoef
	l.impulse(l.jLo + l.jHi)
}

func (l *screwLimit) ApplyImpulse(dt float64) {
	v := l.velocity()
	old := l.jLo
	l.jLo = math.Max(old+(l.biasLo-v)*l.mass, 0)
	l.impulse(l.jLo - old)
	v = l.velocity()
	old = l.jHi
	l.jHi = math.Min(old+(l.biasHi-v)*l.mass, 0)
	l.impulse(l.jHi - old)
}

// GetImpulse is the signed impulse of the last step along +q.
func (l *screwLimit) GetImpulse() float64 { return l.jLo + l.jHi }
