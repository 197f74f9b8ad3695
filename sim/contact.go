package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
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

// padContact is a pad pressing its foot against the ground. The pad is
// massless and part of its foot (its mass is added to the foot's): a point
// contact at its bottom centre through a spring and damper in parallel,
// then a hard end stop once the free travel is used up, with Coulomb
// friction of the pad's own coefficient. The compression is how far the
// fully extended pad's bottom would be below the ground.
//
// Why not a pad body on a groove: a light pad under a heavy robot is a
// mass ratio of a thousand across the groove, which Gauss-Seidel does not
// converge on in a reasonable number of iterations (the rocking mode grew
// without bound with 10 g pads under 10 kg). The spring is applied
// explicitly, as cp's damped spring does, which is stable here because it
// acts on the foot's mass and free of the numerical damping an implicit
// spring would add; the damper is implicit.
type padContact struct {
	*cp.Constraint
	foot                     *cp.Body
	ground                   *ground
	bottom                   cp.Vector // body-local: the pad's bottom centre fully extended
	stiffness, damping       float64
	travel, friction         float64
	depth                    float64 // of the extended bottom below the ground, last step
	active, touching, atStop bool
	r, n                     cp.Vector
	knn, knt, ktt            float64 // inverse effective mass matrix in (n, t)
	nMass, tMass, dampMass   float64
	dampGamma, stopBias      float64
	js, jd, jh, jt           float64 // spring, damper, stop and friction impulses
}

func newPadContact(foot, static *cp.Body, g *ground, bottom cp.Vector, m *models.Pad) *padContact {
	c := &padContact{foot: foot, ground: g, bottom: bottom, stiffness: m.Stiffness, damping: m.Damping,
		travel: m.Travel, friction: m.Friction}
	c.Constraint = cp.NewConstraint(c, foot, static)
	return c
}

func (c *padContact) PreStep(dt float64) {
	b := c.foot
	p := b.LocalToWorld(c.bottom)
	d, n := c.ground.depth(p)
	c.depth = d
	c.js = 0
	gap := c.travel - d // left before the stop
	c.active = d > -contactMargin
	c.touching = d > 0
	c.atStop = gap < contactMargin
	if !c.active {
		c.jd, c.jh, c.jt = 0, 0, 0
		return
	}
	c.r, c.n = p.Sub(b.Position()), n
	rn, rt := c.r.Cross(n), c.r.Cross(n.Perp())
	mInv, iInv := 1/b.Mass(), 1/b.Moment()
	kn := mInv + rn*rn*iInv
	c.knn, c.knt, c.ktt = kn, rn*rt*iInv, mInv+rt*rt*iInv
	c.nMass = 1 / kn
	c.tMass = 1 / c.ktt
	if c.touching {
		// Spring: explicit, applied now.
		c.js = c.stiffness * d * dt
		c.impulse(c.n.Mult(c.js))
		if c.damping > 0 {
			// Damper: implicit, as a soft constraint without stiffness.
			c.dampGamma = 1 / (dt * c.damping)
			c.dampMass = 1 / (kn + c.dampGamma)
		}
	} else {
		c.jd = 0
	}
	if c.atStop {
		switch {
		case gap >= 0:
			c.stopBias = -gap / dt // may approach the stop by the gap, no faster
		case gap < -contactSlop:
			c.stopBias = -contactBias * (gap + contactSlop) / dt
		default:
			c.stopBias = 0
		}
	} else {
		c.jh = 0
	}
}

func (c *padContact) impulse(j cp.Vector) {
	b := c.foot
	b.SetVelocityVector(b.Velocity().Add(j.Mult(1 / b.Mass())))
	b.SetAngularVelocity(b.AngularVelocity() + c.r.Cross(j)/b.Moment())
}

func (c *padContact) ApplyCachedImpulse(dtCoef float64) {
	if !c.active {
		return
	}
	c.jd *= dtCoef
	c.jh *= dtCoef
	c.jt *= dtCoef
	c.impulse(c.n.Rotate(cp.Vector{X: c.jd + c.jh, Y: c.jt}))
}

// ApplyImpulse solves the damper, the stop and friction in turn, tracking
// the contact point's velocity through the effective-mass matrix and
// applying the sum once: each cp body setter is a call.
func (c *padContact) ApplyImpulse(dt float64) {
	if !c.active {
		return
	}
	b := c.foot
	vr := b.Velocity().Add(c.r.Perp().Mult(b.AngularVelocity()))
	vn, vt := vr.Dot(c.n), vr.Dot(c.n.Perp())
	var dn, dt2 float64 // impulse changes along n and t
	if c.touching && c.damping > 0 {
		old := c.jd
		// The pad cannot pull: spring and damper together push or nothing.
		c.jd = old - c.dampMass*(vn+c.dampGamma*old)
		if c.jd < -c.js {
			c.jd = -c.js
		}
		d := c.jd - old
		dn += d
		vn += c.knn * d
		vt += c.knt * d
	}
	if c.atStop {
		old := c.jh
		c.jh = old + (c.stopBias-vn)*c.nMass
		if c.jh < 0 {
			c.jh = 0
		}
		d := c.jh - old
		dn += d
		vn += c.knn * d
		vt += c.knt * d
	}
	max := c.friction * (c.js + c.jd + c.jh)
	old := c.jt
	c.jt = cp.Clamp(old-vt*c.tMass, -max, max)
	dt2 = c.jt - old
	c.impulse(c.n.Rotate(cp.Vector{X: dn, Y: dt2}))
}

// GetImpulse is the normal impulse of the last step.
func (c *padContact) GetImpulse() float64 { return c.js + c.jd + c.jh }

// point is the contact point, world.
func (c *padContact) point() cp.Vector { return c.foot.LocalToWorld(c.bottom) }

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

// What a coordinate between two bodies measures.
type limitGeometry int

const (
	limitDistance limitGeometry = iota // distance between two anchors
	limitAxis                          // displacement of b's anchor from a's along an axis fixed in a
	limitAngle                         // b's angle minus a's
)

// coord is a scalar coordinate q of two bodies with what a constraint on it
// needs: its rate, its effective mass and how an impulse along it acts.
type coord struct {
	geometry         limitGeometry
	a, b             *cp.Body
	anchorA, anchorB cp.Vector // body-local
	axis             cp.Vector // limitAxis: in a's body frame
	r1, r2, n        cp.Vector // lever arms and direction of the step
}

// measure returns q and sets the lever arms for the step. For limitAxis,
// r1 reaches a's material point under b's anchor, which makes the rate
// exact while the axis turns.
func (c *coord) measure() float64 {
	a, b := c.a, c.b
	switch c.geometry {
	case limitAngle:
		return b.Angle() - a.Angle()
	case limitAxis:
		pa, pb := a.LocalToWorld(c.anchorA), b.LocalToWorld(c.anchorB)
		c.n = a.Rotation().Rotate(c.axis)
		c.r1, c.r2 = pb.Sub(a.Position()), pb.Sub(b.Position())
		return pb.Sub(pa).Dot(c.n)
	}
	pa, pb := a.LocalToWorld(c.anchorA), b.LocalToWorld(c.anchorB)
	d := pb.Sub(pa)
	dist := d.Length()
	if dist > 0 {
		c.n = d.Mult(1 / dist)
	} else {
		c.n = cp.Vector{X: 1}
	}
	c.r1, c.r2 = pa.Sub(a.Position()), pb.Sub(b.Position())
	return dist
}

// invMass is the inverse effective mass along q.
func (c *coord) invMass() float64 {
	a, b := c.a, c.b
	if c.geometry == limitAngle {
		return 1/a.Moment() + 1/b.Moment()
	}
	r1n, r2n := c.r1.Cross(c.n), c.r2.Cross(c.n)
	return 1/a.Mass() + 1/b.Mass() + r1n*r1n/a.Moment() + r2n*r2n/b.Moment()
}

func (c *coord) velocity() float64 {
	a, b := c.a, c.b
	if c.geometry == limitAngle {
		return b.AngularVelocity() - a.AngularVelocity()
	}
	va := a.Velocity().Add(c.r1.Perp().Mult(a.AngularVelocity()))
	vb := b.Velocity().Add(c.r2.Perp().Mult(b.AngularVelocity()))
	return vb.Sub(va).Dot(c.n)
}

// impulse applies j along +q: to b, and its reaction to a.
func (c *coord) impulse(j float64) {
	a, b := c.a, c.b
	if c.geometry == limitAngle {
		a.SetAngularVelocity(a.AngularVelocity() - j/a.Moment())
		b.SetAngularVelocity(b.AngularVelocity() + j/b.Moment())
		return
	}
	jv := c.n.Mult(j)
	a.SetVelocityVector(a.Velocity().Sub(jv.Mult(1 / a.Mass())))
	a.SetAngularVelocity(a.AngularVelocity() - c.r1.Cross(jv)/a.Moment())
	b.SetVelocityVector(b.Velocity().Add(jv.Mult(1 / b.Mass())))
	b.SetAngularVelocity(b.AngularVelocity() + c.r2.Cross(jv)/b.Moment())
}

// screwLimit keeps a coordinate q of two bodies within [Min, Max], edges
// that move at Speed: the output of a lead screw with backlash, free inside
// the band and driven rigidly, with unlimited force, at its edges. Unlike
// cp's slide and rotary-limit joints it keeps a signed impulse per edge
// (the load is read from it; cp's slide joint also flips its direction
// between steps when Min = Max yet warm-starts with the old impulse, which
// left the robots rocking), warm-starts each edge on its own, and feeds the
// edges' speed forward so a moving screw is followed without lag. Each
// edge is a speculative one-sided constraint: the coordinate may approach
// an edge by the gap in a step, no faster.
//
// With a mount stiffness the edges are springs instead: beyond an edge the
// output compresses the mount by k times the overshoot, solved implicitly
// as a one-sided soft constraint, stable for any stiffness.
type screwLimit struct {
	*cp.Constraint
	coord
	Min, Max, Speed float64
	mount           float64 // series stiffness; 0 is rigid
	gamma           float64 // soft edges: the softness of the step
	lo, hi          bool    // soft edges: which is overshot this step

	mass     float64
	biasLo   float64 // the velocity bounds of the step
	biasHi   float64
	jLo, jHi float64 // accumulated impulses: jLo >= 0 pushes q up, jHi <= 0 down
}

func newScrewLimit(c coord, q float64) *screwLimit {
	l := &screwLimit{coord: c, Min: q, Max: q}
	l.Constraint = cp.NewConstraint(l, c.a, c.b)
	return l
}

// edgeRate is the speed at which q may close a gap to an edge in a step:
// all of it when clear of the edge, none when past it.
func (l *screwLimit) edgeRate(gap, dt float64) float64 {
	if gap >= 0 {
		return gap / dt
	}
	return 0 // past the edge: held there; the plant moves it back (project)
}

func (l *screwLimit) PreStep(dt float64) {
	q := l.measure()
	if l.mount > 0 {
		// Soft constraint without damping (Catto, "Soft constraints"):
		// impulse -m (C' + C/dt + gamma j), gamma = 1/(k dt^2).
		l.gamma = 1 / (l.mount * dt * dt)
		l.mass = 1 / (l.invMass() + l.gamma)
		l.lo, l.hi = q < l.Min, q > l.Max
		if !l.lo {
			l.jLo = 0
		}
		if !l.hi {
			l.jHi = 0
		}
		l.biasLo = l.Speed - (q-l.Min)/dt
		l.biasHi = l.Speed - (q-l.Max)/dt
		return
	}
	l.mass = 1 / l.invMass()
	// Over the step q' must stay within [biasLo, biasHi].
	l.biasLo = l.Speed - l.edgeRate(q-l.Min, dt)
	l.biasHi = l.Speed + l.edgeRate(l.Max-q, dt)
}

func (l *screwLimit) ApplyCachedImpulse(dtCoef float64) {
	l.jLo *= dtCoef
	l.jHi *= dtCoef
	l.impulse(l.jLo + l.jHi)
}

func (l *screwLimit) ApplyImpulse(dt float64) {
	if l.mount > 0 {
		l.applySoft()
		return
	}
	v := l.velocity()
	oldLo, oldHi := l.jLo, l.jHi
	l.jLo = oldLo + (l.biasLo-v)*l.mass
	if l.jLo < 0 {
		l.jLo = 0
	}
	v += (l.jLo - oldLo) / l.mass
	l.jHi = oldHi + (l.biasHi-v)*l.mass
	if l.jHi > 0 {
		l.jHi = 0
	}
	l.impulse(l.jLo - oldLo + l.jHi - oldHi)
}

func (l *screwLimit) applySoft() {
	v := l.velocity()
	var d float64
	if l.lo {
		old := l.jLo
		l.jLo = math.Max(old+l.mass*(l.biasLo-v-l.gamma*old), 0)
		d = l.jLo - old
	}
	if l.hi {
		old := l.jHi
		l.jHi = math.Min(old+l.mass*(l.biasHi-v-l.gamma*old), 0)
		d = l.jHi - old
	}
	if d != 0 {
		l.impulse(d)
	}
}

// GetImpulse is the signed impulse of the last step along +q.
func (l *screwLimit) GetImpulse() float64 { return l.jLo + l.jHi }

// softSpring is a spring and damper on a coordinate, pulling q towards
// Rest, solved implicitly as a soft constraint (E. Catto, "Soft
// constraints", GDC 2011): stable for any stiffness at any step, where
// cp's damped springs apply the spring force explicitly and blow up once
// sqrt(k/m)*dt passes 2, as a light pad on a stiff spring does.
type softSpring struct {
	*cp.Constraint
	coord
	rest, stiffness, damping float64

	mass, bias, gamma, jAcc float64
}

func newSoftSpring(c coord, rest, stiffness, damping float64) *softSpring {
	s := &softSpring{coord: c, rest: rest, stiffness: stiffness, damping: damping}
	s.Constraint = cp.NewConstraint(s, c.a, c.b)
	return s
}

func (s *softSpring) PreStep(dt float64) {
	q := s.measure()
	// Implicit Euler of f = -k (q - rest) - c q'.
	d := s.damping + dt*s.stiffness
	s.gamma = 1 / (dt * d)
	s.bias = (q - s.rest) * s.stiffness / d
	s.mass = 1 / (s.invMass() + s.gamma)
}

func (s *softSpring) ApplyCachedImpulse(dtCoef float64) {
	s.jAcc *= dtCoef
	s.impulse(s.jAcc)
}

func (s *softSpring) ApplyImpulse(dt float64) {
	j := -s.mass * (s.velocity() + s.bias + s.gamma*s.jAcc)
	s.jAcc += j
	s.impulse(j)
}

// GetImpulse is the spring's impulse of the last step along +q.
func (s *softSpring) GetImpulse() float64 { return s.jAcc }
