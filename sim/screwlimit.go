package sim

import (
	"math"

	"github.com/jakecoffman/cp/v2"
)

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
	far             bool    // both edges out of a step's reach: nothing to solve
	tie             bool    // one two-sided edge (Plant.TieScrews)

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

// newJointLimit keeps q within [lo, hi]: a joint's limits, the screw's
// edges standing still.
func newJointLimit(c coord, lo, hi float64) *screwLimit {
	l := newScrewLimit(c, lo)
	l.Max = hi
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
	// A joint's limits are mostly far apart: skip them while neither is
	// within twice the step's travel and farReach (a sudden push may pass
	// one by a step's worth, which the plant moves back; project.go).
	reach := 2*math.Abs(l.velocity())*dt + farReach
	if l.far = q-l.Min > reach && l.Max-q > reach; l.far {
		l.jLo, l.jHi = 0, 0
		return
	}
	l.mass = 1 / l.invMass()
	if l.tie {
		l.biasLo = l.Speed - l.drift(q, dt)/dt
		l.biasHi = l.biasLo
		return
	}
	// Over the step q' must stay within [biasLo, biasHi], less the drift
	// the position update adds (coord.drift).
	drift := l.drift(q, dt) / dt
	l.biasLo = l.Speed - l.edgeRate(q-l.Min, dt) - drift
	l.biasHi = l.Speed + l.edgeRate(l.Max-q, dt) - drift
}

// farReach is how near (m or rad) an edge must be to be solved besides a
// step's travel: 1 mm or 1 mrad.
const farReach = 1e-3

func (l *screwLimit) ApplyCachedImpulse(dtCoef float64) {
	if l.far {
		return
	}
	l.jLo *= dtCoef
	l.jHi *= dtCoef
	l.impulse(l.jLo + l.jHi)
}

func (l *screwLimit) ApplyImpulse(dt float64) {
	if l.far {
		return
	}
	if l.mount > 0 {
		l.applySoft()
		return
	}
	v := l.velocity()
	if l.tie {
		d := (l.biasLo - v) * l.mass
		l.jLo += d
		l.impulse(d)
		return
	}
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
