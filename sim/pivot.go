package sim

import "github.com/jakecoffman/cp/v2"

// pivot is a revolute joint: two anchors held together. cp's pivot joint
// took energy out of every swing. cp moves the bodies first, with the
// velocities of the last step, and then solves the joints' velocities at
// the new positions; over a step an anchor at lever r on a body turning by
// phi = w dt travels the chord, not the tangent, and lands
// chord(r, phi) = (1 - cos phi) r + (phi - sin phi) perp(r) short of where
// the anchor's velocity points. The joint drifts apart by the difference of
// the two chords each step, the drift is put back (by cp's bias or by the
// plant's projection), and the next velocity solve removes the radial
// velocity the drift implies: a loss of order (w dt)^2 of the kinetic
// energy each step, which halves with the step (a frictionless pendulum
// lost 31 % of its swing energy in 60 s at 1 kHz).
//
// This pivot aims the anchors' relative velocity so that the coming
// position update lands them together: its velocity target is the
// difference of the chords over dt. It has no position-error feedback: the
// leftover error is moved back by the plant (project.go), which keeps a
// held robot from being pumped.
type pivot struct {
	*cp.Constraint
	a, b             *cp.Body
	anchorA, anchorB cp.Vector // body-local

	r1, r2         cp.Vector
	ma, mb, ia, ib float64 // inverse masses and moments (0: a static body)
	kxx, kxy, kyy  float64 // inverse of the effective mass tensor
	target         cp.Vector
	jAcc           cp.Vector
}

func newPivot(a, b *cp.Body, anchorA, anchorB cp.Vector) *pivot {
	j := &pivot{a: a, b: b, anchorA: anchorA, anchorB: anchorB}
	j.Constraint = cp.NewConstraint(j, a, b)
	return j
}

// chord is how far short of r + phi perp(r) an anchor at lever r lands
// when its body turns by phi.
func chord(r cp.Vector, phi float64) cp.Vector {
	s, c := sinCos(phi)
	return r.Mult(1 - c).Add(r.Perp().Mult(phi - s))
}

// sinCos is sin and cos of a step's turn by their Taylor series to the
// seventh and sixth power: off by under phi^8/40320 (1e-7 at the 0.5 rad a
// body turns in a step at the blow-up limit, 500 rad/s at 1 kHz; 1e-29 at
// a typical 1e-3), for a fraction of math.Sincos's time.
func sinCos(phi float64) (s, c float64) {
	p2 := phi * phi
	s = phi * (1 - p2/6*(1-p2/20*(1-p2/42)))
	c = 1 - p2/2*(1-p2/12*(1-p2/30))
	return s, c
}

func (j *pivot) PreStep(dt float64) {
	a, b := j.a, j.b
	j.r1 = a.Rotation().Rotate(j.anchorA)
	j.r2 = b.Rotation().Rotate(j.anchorB)
	j.ma, j.mb, j.ia, j.ib = invMass(a), invMass(b), invMoment(a), invMoment(b)
	ma, mb, ia, ib := j.ma, j.mb, j.ia, j.ib
	r1, r2 := j.r1, j.r2
	// The 2x2 effective mass of a point-to-point joint (as cp's k_tensor).
	k11 := ma + mb + r1.Y*r1.Y*ia + r2.Y*r2.Y*ib
	k22 := ma + mb + r1.X*r1.X*ia + r2.X*r2.X*ib
	k12 := -r1.X*r1.Y*ia - r2.X*r2.Y*ib
	det := k11*k22 - k12*k12
	j.kxx, j.kxy, j.kyy = k22/det, -k12/det, k11/det
	j.target = chord(r2, b.AngularVelocity()*dt).Sub(chord(r1, a.AngularVelocity()*dt)).Mult(1 / dt)
}

func (j *pivot) impulse(imp cp.Vector) {
	a, b := j.a, j.b
	if j.ma > 0 {
		a.SetVelocityVector(a.Velocity().Sub(imp.Mult(j.ma)))
		a.SetAngularVelocity(a.AngularVelocity() - j.r1.Cross(imp)*j.ia)
	}
	if j.mb > 0 {
		b.SetVelocityVector(b.Velocity().Add(imp.Mult(j.mb)))
		b.SetAngularVelocity(b.AngularVelocity() + j.r2.Cross(imp)*j.ib)
	}
}

func (j *pivot) ApplyCachedImpulse(dtCoef float64) {
	j.jAcc = j.jAcc.Mult(dtCoef)
	j.impulse(j.jAcc)
}

func (j *pivot) ApplyImpulse(dt float64) {
	a, b := j.a, j.b
	va := a.Velocity().Add(j.r1.Perp().Mult(a.AngularVelocity()))
	vb := b.Velocity().Add(j.r2.Perp().Mult(b.AngularVelocity()))
	e := j.target.Sub(vb.Sub(va))
	imp := cp.Vector{X: j.kxx*e.X + j.kxy*e.Y, Y: j.kxy*e.X + j.kyy*e.Y}
	j.jAcc = j.jAcc.Add(imp)
	j.impulse(imp)
}

// GetImpulse is the size of the joint's impulse of the last step.
func (j *pivot) GetImpulse() float64 { return j.jAcc.Length() }
