package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"
)

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
