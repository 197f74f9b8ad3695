package sim

import (
	"testing"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// bareSpace builds the plant's bodies and joints again as cp alone would
// do it: cp joints for the joints, cp slide and rotary-limit joints
// (Min = Max) for the actuators, cp springs and motors for the joints'
// stiffness, damping and friction, and the pads as cp boxes on the feet
// against a cp segment ground. Nothing of ours runs in its step.
func bareSpace(p *Plant) *cp.Space {
	s := cp.NewSpace()
	s.SetGravity(cp.Vector{Y: -Gravity})
	s.Iterations = p.space.Iterations
	s.SetCollisionSlop(1e-4)
	bodies := map[*cp.Body]*cp.Body{}
	for _, b := range p.bodies {
		nb := s.AddBody(cp.NewBody(b.Mass(), b.Moment()))
		nb.SetAngle(b.Angle())
		nb.SetPosition(b.Position())
		bodies[b] = nb
	}
	for i := range p.joints {
		j := &p.joints[i]
		mj := &p.robot.Joints[i]
		a, b := bodies[j.parent.body], bodies[j.child.body]
		if j.kind == models.Revolute {
			s.AddConstraint(cp.NewPivotJoint2(a, b, j.pAnchor, j.cAnchor))
			if mj.HasLimits {
				s.AddConstraint(cp.NewRotaryLimitJoint(a, b, mj.Lower, mj.Upper))
			}
			if mj.Stiffness > 0 || mj.Damping > 0 {
				s.AddConstraint(cp.NewDampedRotarySpring(a, b, -mj.Initial, mj.Stiffness, mj.Damping))
			}
		} else {
			s.AddConstraint(cp.NewGrooveJoint(a, b, j.pAnchor.Add(j.axis.Mult(-0.1)), j.pAnchor.Add(j.axis.Mult(0.1)), j.cAnchor))
			s.AddConstraint(cp.NewGearJoint(a, b, 0, 1))
			if mj.Stiffness > 0 || mj.Damping > 0 {
				s.AddConstraint(cp.NewDampedSpring(a, b, j.pAnchor.Sub(j.axis), j.cAnchor, 1+mj.Initial, mj.Stiffness, mj.Damping))
			}
		}
		if mj.Friction > 0 {
			m := cp.NewSimpleMotor(a, b, 0)
			m.SetMaxForce(mj.Friction)
			s.AddConstraint(m)
		}
	}
	for i := range p.acts {
		ac := &p.acts[i]
		a, b := bodies[ac.a], bodies[ac.b]
		switch ac.drive {
		case driveRotary:
			q := ac.output()
			s.AddConstraint(cp.NewRotaryLimitJoint(a, b, q, q))
		default:
			d := ac.b.LocalToWorld(ac.anchorB).Sub(ac.a.LocalToWorld(ac.anchorA)).Length()
			s.AddConstraint(cp.NewSlideJoint(a, b, ac.anchorA, ac.anchorB, d, d))
		}
	}
	ground := cp.NewSegment(s.StaticBody, cp.Vector{X: -50}, cp.Vector{X: 50}, 0)
	ground.SetFriction(1)
	s.AddShape(ground)
	for i := range p.pads {
		pd := &p.pads[i]
		foot := bodies[pd.foot.body]
		h, w := pd.thickness/2, pd.width/2
		c := pd.rest
		verts := []cp.Vector{{X: c.X - w, Y: c.Y - h}, {X: c.X + w, Y: c.Y - h}, {X: c.X + w, Y: c.Y + h}, {X: c.X - w, Y: c.Y + h}}
		sh := cp.NewPolyShapeRaw(foot, 4, verts, 0)
		sh.SetFriction(pd.contact.edges[0].friction)
		sh.SetFilter(cp.NewShapeFilter(1, cp.ALL_CATEGORIES, cp.ALL_CATEGORIES))
		s.AddShape(sh)
	}
	return s
}

func benchPlant(b *testing.B) *Plant {
	b.Helper()
	r := loadBuiltin(b, "frontal")
	p, err := New(r, NewHoldPose(), Options{RecordCapacity: 10000})
	if err != nil {
		b.Fatal(err)
	}
	if err := p.RunFor(0.5); err != nil {
		b.Fatal(err)
	}
	return p
}

// BenchmarkStep measures one physics step of the frontal robot with
// everything on (sensors, recorder, the hold controller) and, in the same
// run, one step of the bare engine with the same bodies and joints, each in
// its own sub-benchmark so that the bare engine's allocations (one per
// contact) are not charged to the plant. The plant's line reports its
// allocations (none), the ratio of the two and how many times faster than
// real time the plant runs at its physics rate.
func BenchmarkStep(b *testing.B) {
	var bareNs float64
	b.Run("bare", func(b *testing.B) {
		p := benchPlant(b)
		bare := bareSpace(p)
		for range 500 {
			bare.Step(p.dt)
		}
		b.ReportAllocs()
		b.ResetTimer()
		for range b.N {
			bare.Step(p.dt)
		}
		b.StopTimer()
		bareNs = float64(b.Elapsed().Nanoseconds()) / float64(b.N)
	})
	b.Run("plant", func(b *testing.B) {
		p := benchPlant(b)
		b.ReportAllocs()
		b.ResetTimer()
		for range b.N {
			if err := p.Step(); err != nil {
				b.Fatal(err)
			}
		}
		b.StopTimer()
		ns := float64(b.Elapsed().Nanoseconds()) / float64(b.N)
		if bareNs > 0 {
			b.ReportMetric(ns/bareNs, "plant/bare")
		}
		b.ReportMetric(1e9/(ns*p.physRate), "x-realtime")
	})
}
