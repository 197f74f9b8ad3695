package sim

import "github.com/jakecoffman/cp/v2"

// softSpring is a joint's spring and damper on a coordinate, pulling q
// towards rest, solved implicitly as a soft constraint (E. Catto, "Soft
// constraints", GDC 2011): stable for any stiffness at any step, where
// cp's damped springs apply the spring force explicitly and blow up once
// sqrt(k/m)*dt passes 2, as a stiff joint on a light link does.
type softSpring struct {
	*cp.Constraint
	coord
	rest, stiffness, damping float64

	mass, bias, gamma, jAcc float64
}

func newSoftSpring(c coord, rest, stiffness, damping float64) *softSpring {
	s := &softSpring{coord: c, rest: rest, stiffness: stiffness, damping: damping}
	s.Constraint = cp.NewConstraint(s, c.a, c.b)
	return s
}

func (s *softSpring) PreStep(dt float64) {
	q := s.measure()
	// Implicit Euler of f = -k (q - rest) - c q'.
	d := s.damping + dt*s.stiffness
	s.gamma = 1 / (dt * d)
	s.bias = (q - s.rest) * s.stiffness / d
	s.mass = 1 / (s.invMass() + s.gamma)
}

func (s *softSpring) ApplyCachedImpulse(dtCoef float64) {
	s.jAcc *= dtCoef
	s.impulse(s.jAcc)
}

func (s *softSpring) ApplyImpulse(dt float64) {
	j := -s.mass * (s.velocity() + s.bias + s.gamma*s.jAcc)
	s.jAcc += j
	s.impulse(j)
}

// GetImpulse is the spring's impulse of the last step along +q.
func (s *softSpring) GetImpulse() float64 { return s.jAcc }
