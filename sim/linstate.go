package sim

import "github.com/jakecoffman/cp/v2"

// StatefulController is a controller whose state can be read and written as
// numbers (a *control.Graph is one). The plant's state vector includes it,
// so that a study can linearise the whole closed loop.
type StatefulController interface {
	Controller
	StateLen() int
	SaveState(dst []float64)
	LoadState(src []float64)
}

// The state vector is what the plant carries from one step to the next
// that a small change of would change what follows: per body its position,
// angle, velocity and angular velocity; per actuator the screw position,
// its speed and the load read last step; per sensor its latency ring and,
// for an IMU, the velocity and acceleration it differentiates; then the
// controller's state when it exposes one. The solver's warm-start impulses,
// the sampling clocks and the battery's charge are left out: they are
// restored whole by Restore, and a study linearising around a saved state
// restores first and then sets the vector.
const bodyStates = 6

// StateLen is the length of the plant's state vector.
func (p *Plant) StateLen() int {
	n := bodyStates*len(p.bodies) + 3*len(p.acts)
	for i := range p.sensors {
		n += len(p.sensors[i].ring)
		if p.sensors[i].link != nil {
			n += 4
		}
	}
	if c, ok := p.controller.(StatefulController); ok {
		n += c.StateLen()
	}
	return n
}

// State writes the state vector into dst, which holds StateLen values.
func (p *Plant) State(dst []float64) {
	at := 0
	put := func(v ...float64) { at += copy(dst[at:], v) }
	for _, b := range p.bodies {
		pos, v := b.Position(), b.Velocity()
		put(pos.X, pos.Y, b.Angle(), v.X, v.Y, b.AngularVelocity())
	}
	for i := range p.acts {
		a := &p.acts[i]
		put(a.screw, a.speed, a.force)
	}
	for i := range p.sensors {
		s := &p.sensors[i]
		put(s.ring...)
		if s.link != nil {
			put(s.prevV.X, s.prevV.Y, s.accel.X, s.accel.Y)
		}
	}
	if c, ok := p.controller.(StatefulController); ok {
		c.SaveState(dst[at:])
	}
}

// SetState sets the plant's state from src, as State wrote it.
func (p *Plant) SetState(src []float64) {
	at := 0
	take := func(n int) []float64 { at += n; return src[at-n : at] }
	for _, b := range p.bodies {
		x := take(bodyStates)
		b.SetAngle(x[2])
		b.SetPosition(cp.Vector{X: x[0], Y: x[1]})
		b.SetVelocityVector(cp.Vector{X: x[3], Y: x[4]})
		b.SetAngularVelocity(x[5])
	}
	for i := range p.acts {
		a := &p.acts[i]
		x := take(3)
		a.screw, a.speed, a.force = x[0], x[1], x[2]
	}
	for i := range p.sensors {
		s := &p.sensors[i]
		copy(s.ring, take(len(s.ring)))
		if s.link != nil {
			x := take(4)
			s.prevV, s.accel = cp.Vector{X: x[0], Y: x[1]}, cp.Vector{X: x[2], Y: x[3]}
		}
	}
	if c, ok := p.controller.(StatefulController); ok {
		c.LoadState(src[at:])
	}
}

// BodyStates names the bodies of the state vector, in order, each taking
// six entries (x, y, angle, vx, vy, angular velocity) from the start.
func (p *Plant) BodyStates() []string { return append([]string(nil), p.names...) }

// ActuatorStates is where the actuators' entries (screw, speed, load) start
// in the state vector, in ActuatorNames order.
func (p *Plant) ActuatorStates() int { return bodyStates * len(p.bodies) }
