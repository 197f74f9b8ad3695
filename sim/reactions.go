package sim

import (
	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// JointReactions writes into dst, per joint in the robot's order, the force
// the parent put on the child through the joint over the last step, N,
// world frame: a revolute joint's pivot force, a prismatic joint's force
// across its slide (what its bearing carries; the force along it is the
// screw's load). It is for studies of what parts carry, not the hot loop.
func (p *Plant) JointReactions(dst []models.Vec2) {
	clear(dst)
	p.space.EachConstraint(func(c *cp.Constraint) {
		var a, b *cp.Body
		var j cp.Vector
		switch k := c.Class.(type) {
		case *pivot:
			a, b, j = k.a, k.b, k.jAcc
		case *slide:
			a, b, j = k.line.a, k.line.b, k.line.n.Mult(k.jLine)
		default:
			return
		}
		for i := range p.joints {
			if p.joints[i].parent.body == a && p.joints[i].child.body == b {
				dst[i] = models.Vec2{X: j.X / p.dt, Y: j.Y / p.dt}
			}
		}
	})
}

// ActuatorLoads writes into dst each actuator's load over the last step, N
// or N*m, in ActuatorNames order: what its screw (or motor) carried.
func (p *Plant) ActuatorLoads(dst []float64) {
	for i := range p.acts {
		dst[i] = p.acts[i].force
	}
}
