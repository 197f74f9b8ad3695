package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"
)

// slide is a prismatic joint (or the ballast's slide) without its ends:
// b's anchor stays on the line through a's anchor along axis (a's frame)
// and the two bodies turn together. It replaces cp's groove and gear
// joints for the reason the pivot replaces cp's pivot (pivot.go): when the
// parent turns, cp's position update carries the child's anchor off the
// turning line by a second-order amount each step, and removing that drift
// takes kinetic energy. The velocity target of the line's row is the
// drift the coming position update would make, taken with the sign that
// cancels it; there is no position-error feedback (project.go moves the
// leftover back). The two rows are solved together as one 2x2 block.
type slide struct {
	*cp.Constraint
	line coord // b's anchor across the line (limitAxis along the normal)

	r1n, r2n      float64 // lever arms across the line's normal
	kxx, kxy, kyy float64 // inverse of the block's effective mass
	target        float64 // of the line's row; the angle row aims at 0
	jLine, jAngle float64
}

func newSlide(a, b *cp.Body, anchorA, anchorB, axis cp.Vector) *slide {
	s := &slide{line: coord{geometry: limitAxis, a: a, b: b, anchorA: anchorA, anchorB: anchorB, axis: axis.Perp()}}
	s.Constraint = cp.NewConstraint(s, a, b)
	return s
}

func (s *slide) PreStep(dt float64) {
	c := &s.line
	a, b := c.a, c.b
	q := c.measure()
	ia, ib := invMoment(a), invMoment(b)
	s.r1n, s.r2n = c.r1.Cross(c.n), c.r2.Cross(c.n)
	k11 := c.invMass()
	k22 := ia + ib
	k12 := s.r1n*ia + s.r2n*ib
	det := k11*k22 - k12*k12
	s.kxx, s.kxy, s.kyy = k22/det, -k12/det, k11/det
	s.target = -c.drift(q, dt) / dt
}

// impulse applies jl across the line and ja as a torque between the two.
func (s *slide) impulse(jl, ja float64) {
	c := &s.line
	a, b := c.a, c.b
	jv := c.n.Mult(jl)
	if a.GetType() == cp.BODY_DYNAMIC {
		a.SetVelocityVector(a.Velocity().Sub(jv.Mult(1 / a.Mass())))
		a.SetAngularVelocity(a.AngularVelocity() - (s.r1n*jl+ja)/a.Moment())
	}
	if b.GetType() == cp.BODY_DYNAMIC {
		b.SetVelocityVector(b.Velocity().Add(jv.Mult(1 / b.Mass())))
		b.SetAngularVelocity(b.AngularVelocity() + (s.r2n*jl+ja)/b.Moment())
	}
}

func (s *slide) ApplyCachedImpulse(dtCoef float64) {
	s.jLine *= dtCoef
	s.jAngle *= dtCoef
	s.impulse(s.jLine, s.jAngle)
}

func (s *slide) ApplyImpulse(dt float64) {
	c := &s.line
	el := s.target - c.velocity()
	ea := -(c.b.AngularVelocity() - c.a.AngularVelocity())
	jl, ja := s.kxx*el+s.kxy*ea, s.kxy*el+s.kyy*ea
	s.jLine += jl
	s.jAngle += ja
	s.impulse(jl, ja)
}

// GetImpulse is the size of the impulse across the line of the last step.
func (s *slide) GetImpulse() float64 { return math.Abs(s.jLine) }
