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

const (
	// contactMargin is how far above the ground a pad corner is already
	// treated as a (speculative) contact, so a falling pad does not sink in
	// by a whole step's travel.
	contactMargin = 5e-3
	// stopStiffness is the end stop's stiffness over the edge's spring
	// stiffness: stiff enough to be a stop (100 kg on four edges of 5e4
	// N/m pads presses it 50 um), and a stop of finite stiffness shares
	// its load between the edges of a rigid foot by how far each is
	// pressed; a rigid stop under a rigid foot on three or more edges is
	// statically indeterminate, and the solver left identical pads under
	// one block carrying 156, 80 and 156 N.
	stopStiffness = 100
)

// padContact is a pad pressing its foot against the ground at the two
// ends of its width (edges), so that it rolls onto an edge and its centre
// of pressure moves across the width up to the outer edge before the foot
// tips. Each edge carries half the pad's spring and damper (flat on the
// ground the pair is the pad: stiffness k, damping c, and the tilting
// stiffness k w^2/4 of a spring spread across the width's ends), an end
// stop of its own once the free travel is used up (stopStiffness times its
// spring, critically damped, solved implicitly: stable at any stiffness,
// and it takes an impact's approach speed), and Coulomb friction of the
// pad's coefficient on its own normal force (the pair's friction bound is
// the coefficient times the pad's load). The pad is massless and part of
// its foot (its mass is added to the foot's). The two edges are one
// constraint, solved in turn on the foot's velocity held locally and
// applied once: each cp body setter is a call.
//
// Why not a pad body on a groove: a light pad under a heavy robot is a
// mass ratio of a thousand across the groove, which Gauss-Seidel does not
// converge on in a reasonable number of iterations (the rocking mode grew
// without bound with 10 g pads under 10 kg). The spring is applied
// explicitly, as cp's damped spring does, which is stable here because it
// acts on the foot's mass and free of the numerical damping an implicit
// spring would add; the damper is implicit. The end stop is a spring, not
// a position correction: a velocity bias pushing the edge back out of a
// rigid stop added energy at every hard landing.
type padContact struct {
	*cp.Constraint
	foot       *cp.Body
	ground     *ground
	edges      [2]padEdge // the -x and +x ends of the width
	mInv, iInv float64
}

// padEdge is one end of a pad's width.
type padEdge struct {
	bottom                   cp.Vector // body-local: the edge's bottom corner fully extended
	stiffness, damping       float64
	travel, friction         float64
	depth                    float64 // of the extended edge below the ground, last step
	active, touching, atStop bool
	r, n                     cp.Vector
	knn, knt, ktt            float64 // inverse effective mass matrix in (n, t)
	nMass, tMass, dampMass   float64
	dampGamma, stopBias      float64
	stopSoft                 bool // past the stop: a spring, else closing the gap
	stopGamma, stopMass      float64
	js, jd, jh, jt           float64 // spring, damper, stop and friction impulses
}

// newPadContact is pad m, its bottom corners (fully extended) at left and
// right in the foot's body frame, each carrying half its spring and damper.
func newPadContact(foot, static *cp.Body, g *ground, left, right cp.Vector, m *models.Pad) *padContact {
	c := &padContact{foot: foot, ground: g}
	for k, bottom := range [2]cp.Vector{left, right} {
		c.edges[k] = padEdge{bottom: bottom, stiffness: m.Stiffness / 2, damping: m.Damping / 2,
			travel: m.Travel, friction: m.Friction}
	}
	c.Constraint = cp.NewConstraint(c, foot, static)
	return c
}

func (c *padContact) PreStep(dt float64) {
	b := c.foot
	c.mInv, c.iInv = 1/b.Mass(), 1/b.Moment()
	v, w := b.Velocity(), b.AngularVelocity()
	for k := range c.edges {
		c.edges[k].preStep(c, dt, &v, &w)
	}
	b.SetVelocityVector(v)
	b.SetAngularVelocity(w)
}

// preStep measures the edge and applies its spring to the foot's velocity
// (v, w).
func (e *padEdge) preStep(c *padContact, dt float64, v *cp.Vector, w *float64) {
	b := c.foot
	p := b.LocalToWorld(e.bottom)
	d, n := c.ground.depth(p)
	e.depth = d
	e.js = 0
	gap := e.travel - d // left before the stop
	e.active = d > -contactMargin
	e.touching = d > 0
	e.atStop = gap < contactMargin
	if !e.active {
		e.jd, e.jh, e.jt = 0, 0, 0
		return
	}
	e.r, e.n = p.Sub(b.Position()), n
	rn, rt := e.r.Cross(n), e.r.Cross(n.Perp())
	kn := c.mInv + rn*rn*c.iInv
	e.knn, e.knt, e.ktt = kn, rn*rt*c.iInv, c.mInv+rt*rt*c.iInv
	e.nMass = 1 / kn
	e.tMass = 1 / e.ktt
	if e.touching {
		// Spring: explicit, applied now.
		e.js = e.stiffness * d * dt
		c.push(e, e.n.Mult(e.js), v, w)
		if e.damping > 0 {
			// Damper: implicit, as a soft constraint without stiffness.
			e.dampGamma = 1 / (dt * e.damping)
			e.dampMass = 1 / (kn + e.dampGamma)
		}
	} else {
		e.jd = 0
	}
	if e.atStop {
		e.stopSoft = gap < 0
		if !e.stopSoft {
			e.stopBias = -gap / dt // may approach the stop by the gap, no faster
		} else {
			// Implicit Euler of f = -ks gap - cs gap' along n (Catto, "Soft
			// constraints", GDC 2011), one-sided.
			ks := stopStiffness * e.stiffness
			d := 2*math.Sqrt(ks*e.nMass) + dt*ks
			e.stopGamma = 1 / (dt * d)
			e.stopBias = gap * ks / d
			e.stopMass = 1 / (kn + e.stopGamma)
		}
	} else {
		e.jh = 0
	}
}

// push adds the impulse j at edge e to the foot's velocity (v, w).
func (c *padContact) push(e *padEdge, j cp.Vector, v *cp.Vector, w *float64) {
	*v = v.Add(j.Mult(c.mInv))
	*w += e.r.Cross(j) * c.iInv
}

func (c *padContact) ApplyCachedImpulse(dtCoef float64) {
	b := c.foot
	v, w := b.Velocity(), b.AngularVelocity()
	for k := range c.edges {
		e := &c.edges[k]
		if !e.active {
			continue
		}
		e.jd *= dtCoef
		e.jh *= dtCoef
		e.jt *= dtCoef
		c.push(e, e.n.Rotate(cp.Vector{X: e.jd + e.jh, Y: e.jt}), &v, &w)
	}
	b.SetVelocityVector(v)
	b.SetAngularVelocity(w)
}

// ApplyImpulse solves each edge's damper, stop and friction in turn.
func (c *padContact) ApplyImpulse(dt float64) {
	b := c.foot
	v, w := b.Velocity(), b.AngularVelocity()
	for k := range c.edges {
		if e := &c.edges[k]; e.active {
			c.push(e, e.solve(v, w), &v, &w)
		}
	}
	b.SetVelocityVector(v)
	b.SetAngularVelocity(w)
}

// solve returns the edge's impulse change with the foot moving at (v, w),
// tracking the edge's velocity through its effective-mass matrix between
// the damper, the stop and friction.
func (e *padEdge) solve(v cp.Vector, w float64) cp.Vector {
	vr := v.Add(e.r.Perp().Mult(w))
	vn, vt := vr.Dot(e.n), vr.Dot(e.n.Perp())
	var dn float64 // impulse change along n
	if e.touching && e.damping > 0 {
		old := e.jd
		// The pad cannot pull: spring and damper together push or nothing.
		e.jd = old - e.dampMass*(vn+e.dampGamma*old)
		if e.jd < -e.js {
			e.jd = -e.js
		}
		d := e.jd - old
		dn += d
		vn += e.knn * d
		vt += e.knt * d
	}
	if e.atStop {
		old := e.jh
		if e.stopSoft {
			e.jh = old - e.stopMass*(vn+e.stopBias+e.stopGamma*old)
		} else {
			e.jh = old + (e.stopBias-vn)*e.nMass
		}
		if e.jh < 0 {
			e.jh = 0
		}
		d := e.jh - old
		dn += d
		vn += e.knn * d
		vt += e.knt * d
	}
	max := e.friction * (e.js + e.jd + e.jh)
	old := e.jt
	e.jt = cp.Clamp(old-vt*e.tMass, -max, max)
	return e.n.Rotate(cp.Vector{X: dn, Y: e.jt - old})
}

// GetImpulse is the pad's normal impulse of the last step.
func (c *padContact) GetImpulse() float64 { return c.edges[0].impulse() + c.edges[1].impulse() }

// impulse is the edge's normal impulse of the last step.
func (e *padEdge) impulse() float64 { return e.js + e.jd + e.jh }

// point is the edge's contact point, world.
func (c *padContact) point(e *padEdge) cp.Vector { return c.foot.LocalToWorld(e.bottom) }
