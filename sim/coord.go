package sim

import "github.com/jakecoffman/cp/v2"

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

// at is q with the bodies at pa and pb turned by ta and tb from where
// they are.
func (c *coord) at(pa cp.Vector, ta float64, pb cp.Vector, tb float64) float64 {
	if c.geometry == limitAngle {
		return c.b.Angle() + tb - c.a.Angle() - ta
	}
	ra := turned(c.a.Rotation(), ta)
	d := pb.Add(turned(c.b.Rotation(), tb).Rotate(c.anchorB)).Sub(pa.Add(ra.Rotate(c.anchorA)))
	if c.geometry == limitAxis {
		return d.Dot(ra.Rotate(c.axis))
	}
	return d.Length()
}

// drift is how far the coming position update moves q beyond its rate
// times dt: the second-order part of turning anchors along chords (see
// pivot.go), which a constraint on the rate alone lets accumulate and
// whose removal takes kinetic energy. Call after measure.
func (c *coord) drift(q, dt float64) float64 {
	a, b := c.a, c.b
	next := c.at(a.Position().Add(a.Velocity().Mult(dt)), a.AngularVelocity()*dt,
		b.Position().Add(b.Velocity().Mult(dt)), b.AngularVelocity()*dt)
	return next - q - c.velocity()*dt
}

// turned is the rotation rot turned further by phi, a step's turn.
func turned(rot cp.Vector, phi float64) cp.Vector {
	s, c := sinCos(phi)
	return rot.Rotate(cp.Vector{X: c, Y: s})
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
