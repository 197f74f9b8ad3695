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

// padContact is one edge of a pad pressing its foot against the ground.
// A pad is two of them, at the bottom corners of its width, so that it
// rolls onto an edge and its centre of pressure moves across the width up
// to the outer edge before the foot tips. Each edge carries half the pad's
// spring and damper (flat on the ground the pair is the pad: stiffness k,
// damping c, and the tilting stiffness k w^2/4 of a spring spread across
// the width's ends), an end stop of its own once the free travel is used
// up (stopStiffness times its spring, critically damped, solved implicitly:
// stable at any stiffness, and it takes an impact's approach speed), and
// Coulomb friction of the pad's coefficient on its own normal
// force (the pair's friction bound is the coefficient times the pad's
// load). The pad is massless and part of its foot (its mass is added to
// the foot's). The depth is how far the fully extended edge would be
// below the ground.
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
	foot                     *cp.Body
	ground                   *ground
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

// newPadContact is the edge at bottom of pad m, carrying share of its
// spring and damper.
func newPadContact(foot, static *cp.Body, g *ground, bottom cp.Vector, m *models.Pad, share float64) *padContact {
	c := &padContact{foot: foot, ground: g, bottom: bottom, stiffness: share * m.Stiffness, damping: share * m.Damping,
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
		c.stopSoft = gap < 0
		if !c.stopSoft {
			c.stopBias = -gap / dt // may approach the stop by the gap, no faster
		} else {
			// Implicit Euler of f = -ks gap - cs gap' along n (Catto, "Soft
			// constraints", GDC 2011), one-sided.
			ks := stopStiffness * c.stiffness
			d := 2*math.Sqrt(ks*c.nMass) + dt*ks
			c.stopGamma = 1 / (dt * d)
			c.stopBias = gap * ks / d
			c.stopMass = 1 / (kn + c.stopGamma)
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
		if c.stopSoft {
			c.jh = old - c.stopMass*(vn+c.stopBias+c.stopGamma*old)
		} else {
			c.jh = old + (c.stopBias-vn)*c.nMass
		}
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

// stopImpulse is the end stop's share of the normal impulse of the last step.
func (c *padContact) stopImpulse() float64 { return c.jh }
