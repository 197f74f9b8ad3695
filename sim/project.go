package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// The rigid joints' position error is removed by moving the bodies after
// the engine's step, not by cp's error bias. A bias turns the error into a
// velocity the solver keeps, and that velocity does work against the
// joint's load: the unconverged error of a loaded joint (a few um under
// hundreds of newtons through a screw's lever) varies with the rocking,
// and its correction pumped a held sagittal robot into a growing 3 Hz
// rock. Moving positions leaves the velocities, and so the kinetic
// energy, as the solver made them (post-stabilisation: M. B. Cline and
// D. K. Pai, "Post-stabilization for rigid body simulation with contact
// and constraints", ICRA 2003), visiting the joints in turn as Gauss-Seidel
// does.

// projectionPasses is how many times the joints are visited in turn: the
// joints and screws of a leg form loops, which one pass leaves a little
// off.
const projectionPasses = 2

// shift moves the bodies as an impulse j along +q moves their velocities
// over one second: positions and angles, not velocities.
func (c *coord) shift(j float64) {
	a, b := c.a, c.b
	if c.geometry == limitAngle {
		turn(a, -j/a.Moment())
		turn(b, j/b.Moment())
		return
	}
	jv := c.n.Mult(j)
	move(a, jv.Neg(), c.r1)
	move(b, jv, c.r2)
}

// projectionSlop is the error (m or rad) left where it is: a thousandth of
// a micrometre, far below anything a robot shows, and most of the plant's
// joints at rest stay within it, which spares moving every body (two
// sines and cosines each) every step.
const projectionSlop = 1e-10

// correct moves q by dq, the bodies sharing it by their inverse masses;
// nothing moves when neither can (both fixed, or both held by the ground).
func (c *coord) correct(dq float64) {
	if math.Abs(dq) < projectionSlop {
		return
	}
	if im := c.invMass(); im > 0 {
		c.shift(dq / im)
	}
}

// move shifts a dynamic body by a positional impulse j at lever arm r.
func move(b *cp.Body, j, r cp.Vector) {
	if b.GetType() != cp.BODY_DYNAMIC {
		return
	}
	b.SetAngle(b.Angle() + r.Cross(j)/b.Moment())
	b.SetPosition(b.Position().Add(j.Mult(1 / b.Mass())))
}

func turn(b *cp.Body, da float64) {
	if b.GetType() == cp.BODY_DYNAMIC {
		b.SetAngle(b.Angle() + da)
	}
}

// projectPivot brings a revolute joint's two anchors together.
func projectPivot(a, b *cp.Body, anchorA, anchorB cp.Vector) {
	pa, pb := a.LocalToWorld(anchorA), b.LocalToWorld(anchorB)
	r1, r2 := pa.Sub(a.Position()), pb.Sub(b.Position())
	e := pb.Sub(pa)
	if math.Abs(e.X) < projectionSlop && math.Abs(e.Y) < projectionSlop {
		return
	}
	ma, mb, ia, ib := invMass(a), invMass(b), invMoment(a), invMoment(b)
	// The 2x2 effective mass of a point-to-point joint (as cp's k_tensor).
	kxx := ma + mb + r1.Y*r1.Y*ia + r2.Y*r2.Y*ib
	kyy := ma + mb + r1.X*r1.X*ia + r2.X*r2.X*ib
	kxy := -r1.X*r1.Y*ia - r2.X*r2.Y*ib
	det := kxx*kyy - kxy*kxy
	if !(det > 0) {
		return
	}
	j := cp.Vector{X: -(kyy*e.X - kxy*e.Y) / det, Y: -(kxx*e.Y - kxy*e.X) / det}
	move(a, j.Neg(), r1)
	move(b, j, r2)
}

func invMass(b *cp.Body) float64 {
	if b.GetType() != cp.BODY_DYNAMIC {
		return 0
	}
	return 1 / b.Mass()
}

func invMoment(b *cp.Body) float64 {
	if b.GetType() != cp.BODY_DYNAMIC {
		return 0
	}
	return 1 / b.Moment()
}

// projectLine keeps b's anchor on a line through a's anchor along axis
// (a's frame), the two bodies' angles equal, and the anchor within
// [lo, hi] along the axis: a prismatic joint or the ballast slide.
func projectLine(a, b *cp.Body, anchorA, anchorB, axis cp.Vector, lo, hi float64) {
	c := coord{geometry: limitAxis, a: a, b: b, anchorA: anchorA, anchorB: anchorB, axis: axis.Perp()}
	c.correct(-c.measure())
	c.geometry = limitAngle
	c.correct(-c.measure())
	c.geometry, c.axis = limitAxis, axis
	switch q := c.measure(); {
	case q < lo:
		c.correct(lo - q)
	case q > hi:
		c.correct(hi - q)
	}
}

// screwSlop is how far (m or rad) a rigid screw's output may pass an edge
// before it is moved back. A screw carries the robot's weight through a
// short lever, so each correction does work against hundreds of newtons:
// even moved back by positions, 10 % a step of a micrometre's solver error
// took most of the pads' damping from the sagittal robot's
// rocking. Left alone, the error stays within a few micrometres (the
// solver warm-starts on the load), so only a drift beyond that is taken
// back.
const screwSlop = 2e-5

// project brings a rigid screw's output back to within slop of its edges.
func (l *screwLimit) project(slop float64) {
	if l.mount > 0 {
		return // a spring, not an error
	}
	switch q := l.measure(); {
	case q < l.Min-slop:
		l.correct(l.Min - slop - q)
	case q > l.Max+slop:
		l.correct(l.Max + slop - q)
	}
}

// project removes the position error of the rigid joints and screws, a
// screw's beyond slop.
func (p *Plant) project(slop float64, passes int) {
	p.holdFeet(math.Inf(1))
	for range passes {
		for i := range p.joints {
			j := &p.joints[i]
			a, b := j.parent.body, j.child.body
			if j.kind == models.Revolute {
				projectPivot(a, b, j.pAnchor, j.cAnchor)
				if j.limit != nil {
					j.limit.project(slop)
				}
			} else {
				projectLine(a, b, j.pAnchor, j.cAnchor, j.axis, j.lower, j.upper)
			}
		}
		if bl := p.ballast; bl != nil {
			projectLine(bl.link.body, bl.body, bl.origin, cp.Vector{}, bl.axis, bl.lower, bl.upper)
			bl.limit.project(slop)
		}
		for i := range p.acts {
			if l := p.acts[i].limit; l != nil && p.acts[i].bal == nil {
				l.project(slop)
			}
		}
	}
	p.holdFeet(1)
}

// holdFeet scales the mass and moment of inertia of every foot whose pad
// presses its end stop by scale (infinite: the ground holds it; 1: as
// built). A joint's error is then moved out of the bodies above such a
// foot: moving the foot itself would press it deeper into a stop a
// hundred times stiffer than its pad and store energy there that no force
// put in (a held biped dropped 3 deg onto its pads gained 70 % of the
// energy the drop released, and fell).
func (p *Plant) holdFeet(scale float64) {
	for i := range p.pads {
		pd := &p.pads[i]
		if e := &pd.contact.edges; e[0].jh > 0 || e[1].jh > 0 {
			b := pd.foot.body
			b.SetMass(scale * pd.foot.mass)
			b.SetMoment(scale * pd.foot.inertia)
		}
	}
}

// TieScrews makes each rigid screw without play one two-sided tie, for a
// study that linearises the loop. A step solves such a screw as two
// one-sided edges at one place, the same tie while the solver converges,
// but which edge holds, and by how much the output may lag past it, turns
// over with the load: not smooth about a stance where a screw carries
// almost nothing. The tie's rate is that of the screw, without position
// feedback, so a small move off the screw stays as it is, which keeps a
// tick's outcome linear in it. Not for long runs: the drift the
// projection then takes back does work against the load.
func (p *Plant) TieScrews() {
	for i := range p.acts {
		if l := p.acts[i].limit; l != nil && l.mount == 0 && p.acts[i].backlash == 0 {
			l.tie = true
			l.jLo, l.jHi = l.jLo+l.jHi, 0
		}
	}
}
