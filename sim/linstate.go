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
// that a small change of would change what follows:
//   - per body its position, angle, velocity and angular velocity;
//   - per actuator the screw position, its speed and the load read last
//     step;
//   - per sensor its latency ring, oldest sample first, and for an IMU the
//     velocity and acceleration it differentiates;
//   - per pad the normal force of the last step, which a foot-load sensor
//     reads next;
//   - the battery's terminal voltage, which the last step's current set for
//     the next;
//   - the impulses each of our constraints accumulated last step, which the
//     solver starts the next from (ten iterations do not converge, so the
//     step's outcome and the loads read from it depend on them);
//   - the controller's state when it exposes one.
//
// The sampling clocks and the battery's charge are left out: they are
// restored whole by Restore, and a study linearising around a saved state
// restores first and then sets the vector. So is the impulse of cp's motor
// that makes joint friction, which cp keeps to itself: a study linearising
// the loop takes friction out.
const bodyStates = 6

// StateLen is the length of the plant's state vector.
func (p *Plant) StateLen() int {
	n := bodyStates*len(p.bodies) + 3*len(p.acts) + len(p.pads) + 1
	for i := range p.sensors {
		n += len(p.sensors[i].ring)
		if p.sensors[i].link != nil {
			n += 4
		}
	}
	p.space.EachConstraint(func(c *cp.Constraint) { n += len(impulses(c)) })
	if c, ok := p.controller.(StatefulController); ok {
		n += c.StateLen()
	}
	return n
}

// impulses are a constraint's accumulated impulses, which the solver
// warm-starts from; none for cp's own.
func impulses(c *cp.Constraint) []*float64 {
	switch k := c.Class.(type) {
	case *pivot:
		return []*float64{&k.jAcc.X, &k.jAcc.Y}
	case *slide:
		return []*float64{&k.jLine, &k.jAngle}
	case *screwLimit:
		return []*float64{&k.jLo, &k.jHi}
	case *softSpring:
		return []*float64{&k.jAcc}
	case *slideFriction:
		return []*float64{&k.jAcc}
	case *padContact:
		var out []*float64
		for i := range k.edges {
			e := &k.edges[i]
			out = append(out, &e.jd, &e.jh, &e.jt)
		}
		return out
	}
	return nil
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
	for i := range p.pads {
		put(p.pads[i].force)
	}
	put(p.battery.voltage)
	for i := range p.sensors {
		s := &p.sensors[i]
		for _, slot := range s.ages() {
			put(s.ring[slot : slot+s.nch]...)
		}
		if s.link != nil {
			put(s.prevV.X, s.prevV.Y, s.accel.X, s.accel.Y)
		}
	}
	p.space.EachConstraint(func(c *cp.Constraint) {
		for _, j := range impulses(c) {
			put(*j)
		}
	})
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
	for i := range p.pads {
		p.pads[i].force = take(1)[0]
	}
	p.battery.voltage = take(1)[0]
	for i := range p.sensors {
		s := &p.sensors[i]
		for _, slot := range s.ages() {
			copy(s.ring[slot:slot+s.nch], take(s.nch))
		}
		if s.link != nil {
			x := take(4)
			s.prevV, s.accel = cp.Vector{X: x[0], Y: x[1]}, cp.Vector{X: x[2], Y: x[3]}
		}
	}
	p.space.EachConstraint(func(c *cp.Constraint) {
		for _, j := range impulses(c) {
			*j = take(1)[0]
		}
	})
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

// ages are the offsets of a sensor's ring slots, oldest sample first: the
// ring turns with the samples taken, which a state vector must not see.
func (s *sensor) ages() []int {
	n := int64(s.m.Latency) + 1
	out := make([]int, n)
	for i := range out {
		out[i] = int((s.taken+int64(i))%n) * s.nch
	}
	return out
}
