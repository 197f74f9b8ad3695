package sim

import (
	"errors"
	"fmt"
	"math"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// What an actuator drives.
type driveKind int

const (
	driveLength  driveKind = iota // distance between two attachment points
	driveRotary                   // a revolute joint's angle
	driveSlide                    // a prismatic joint's displacement
	driveBallast                  // the ballast slide
)

// actuator is a lead screw (or a torque motor for comparison).
//
// A lead screw is not backdrivable: the screw position is a state
// integrated here from the PWM command, and the output is tied to it by a
// limit constraint of unlimited force (screwLimit) whose Min and Max are
// moved every step to screw -/+ backlash/2. Inside that band the output is
// free; at an edge it is driven rigidly. The load is read back from the
// constraint's impulse.
type actuator struct {
	name  string
	m     *models.Actuator
	drive driveKind
	// Bodies and body-local anchors of the two sides.
	a, b             *cp.Body
	anchorA, anchorB cp.Vector
	jnt              *joint
	bal              *ballast
	limit            *screwLimit

	lag      float64 // 1 - exp(-dt/tau): fraction of the speed error closed per step
	backlash float64
	command  float64 // [-1, 1], held between controller ticks
	offset   float64 // added to the controller's command (OffsetCommand)
	screw    float64 // screw position (= output for a torque motor), m or rad
	speed    float64 // screw speed
	force    float64 // force or torque delivered on the output, + along +position
	current  float64 // A
}

func (p *Plant) buildActuator(m *models.Actuator, a *actuator) error {
	*a = actuator{name: m.Name, m: m, backlash: m.Backlash}
	if m.TimeConstant > 0 {
		a.lag = 1 - math.Exp(-p.dt/m.TimeConstant)
	} else {
		a.lag = 1
	}
	switch {
	case m.From != nil && m.To != nil:
		la, lb := p.link(m.From.Link), p.link(m.To.Link)
		if la == nil || lb == nil {
			return fmt.Errorf("attachment link %q or %q is not a link", m.From.Link, m.To.Link)
		}
		a.drive, a.a, a.b = driveLength, la.body, lb.body
		a.anchorA, a.anchorB = la.local(m.From.Point), lb.local(m.To.Point)
	case m.Joint != "":
		a.jnt = p.joint(m.Joint)
		j := a.jnt
		if j == nil {
			return fmt.Errorf("joint %q is not a joint", m.Joint)
		}
		a.a, a.b = j.parent.body, j.child.body
		if j.kind == models.Revolute {
			a.drive = driveRotary
		} else {
			a.drive = driveSlide
			a.anchorA, a.anchorB = j.pAnchor, j.cAnchor
		}
	case m.Ballast:
		b := p.ballast
		if b == nil {
			return errors.New("drives the ballast, but the robot has none")
		}
		if b.limit != nil {
			return errors.New("the ballast is already driven by another actuator")
		}
		a.drive, a.bal = driveBallast, b
		a.a, a.b = b.link.body, b.body
		a.anchorA = b.origin
	default:
		return errors.New("drives nothing: give a joint, the ballast, or from and to")
	}
	a.screw = a.output()
	if m.StrokeMax > m.StrokeMin && (a.screw < m.StrokeMin-1e-9 || a.screw > m.StrokeMax+1e-9) {
		return fmt.Errorf("starts at %g, outside its stroke [%g, %g]", a.screw, m.StrokeMin, m.StrokeMax)
	}
	if m.Kind == models.TorqueMotor {
		return nil
	}
	c := coord{geometry: limitDistance, a: a.a, b: a.b, anchorA: a.anchorA, anchorB: a.anchorB}
	switch a.drive {
	case driveRotary:
		c.geometry = limitAngle
	case driveSlide:
		c.geometry, c.axis = limitAxis, a.jnt.axis
	case driveBallast:
		c.geometry, c.axis = limitAxis, a.bal.axis
	}
	a.limit = newScrewLimit(c, a.screw)
	a.limit.mount = m.MountStiffness
	p.space.AddConstraint(a.limit.Constraint)
	if a.bal != nil {
		a.bal.limit = a.limit
	}
	return nil
}

// output is the driven coordinate: length, joint position or ballast
// position.
func (a *actuator) output() float64 {
	switch a.drive {
	case driveLength:
		return a.b.LocalToWorld(a.anchorB).Sub(a.a.LocalToWorld(a.anchorA)).Length()
	case driveBallast:
		return a.bal.position()
	}
	return a.jnt.position()
}

// direction is the unit vector along which a positive linear output moves
// B relative to A, world.
func (a *actuator) direction() cp.Vector {
	switch a.drive {
	case driveLength:
		return a.b.LocalToWorld(a.anchorB).Sub(a.a.LocalToWorld(a.anchorA)).Normalize()
	case driveBallast:
		return a.a.Rotation().Rotate(a.bal.axis)
	}
	return a.a.Rotation().Rotate(a.jnt.axis)
}

// before moves the screw and the constraint's limits for the coming step,
// or applies a torque motor's force.
func (a *actuator) before(dt, voltage float64, nominal bool) {
	m := a.m
	u := a.command
	if math.Abs(u) < m.Deadband {
		u = 0
	}
	vScale := voltage / m.NominalVoltage
	if nominal {
		vScale = 1
	}
	if m.Kind == models.TorqueMotor {
		a.force = u * m.StallForce * vScale
		a.current = math.Abs(u) * m.StallCurrent
		if a.drive == driveRotary {
			a.b.SetTorque(a.b.Torque() + a.force)
			a.a.SetTorque(a.a.Torque() - a.force)
			return
		}
		f := a.direction().Mult(a.force)
		a.b.ApplyForceAtWorldPoint(f, a.b.LocalToWorld(a.anchorB))
		a.a.ApplyForceAtWorldPoint(f.Neg(), a.a.LocalToWorld(a.anchorA))
		return
	}
	// Lead screw: speed = u * v0 * V/Vnom, falling linearly with a load
	// that opposes the motion to zero at stall.
	target := u * m.NoLoadSpeed * vScale
	loadFrac := math.Min(math.Abs(a.force)/m.StallForce, 1)
	if a.force*u > 0 {
		target *= 1 - loadFrac
	}
	a.speed += (target - a.speed) * a.lag
	// The lag is the motor spinning up; it does not let a screw outrun its
	// torque-speed line against a load, so a screw driven into a locked
	// linkage stops at stall instead of pressing on at its old speed.
	if a.force*a.speed > 0 {
		if most := m.NoLoadSpeed * vScale * (1 - loadFrac); math.Abs(a.speed) > most {
			a.speed = math.Copysign(most, a.speed)
		}
	}
	a.screw += a.speed * dt
	if m.StrokeMax > m.StrokeMin {
		if a.screw > m.StrokeMax {
			a.screw, a.speed = m.StrokeMax, 0
		} else if a.screw < m.StrokeMin {
			a.screw, a.speed = m.StrokeMin, 0
		}
	}
	// Current between no-load and stall by load fraction, times |duty|.
	a.current = math.Abs(u) * (m.NoLoadCurrent + (m.StallCurrent-m.NoLoadCurrent)*loadFrac)
	a.placeLimit()
}

// placeLimit puts the output's band round the screw, moving with it.
func (a *actuator) placeLimit() {
	a.limit.Min, a.limit.Max = a.screw-a.backlash/2, a.screw+a.backlash/2
	a.limit.Speed = a.speed
}

// after reads the load the limit constraint carried in the step just taken.
func (a *actuator) after(dt float64) {
	if a.m.Kind == models.TorqueMotor {
		a.screw = a.output()
		return
	}
	a.force = a.limit.GetImpulse() / dt
}

// gap is output minus screw: within [-b/2, b/2] up to solver error, plus
// the mount's give when it has a stiffness.
func (a *actuator) gap() float64 {
	if a.m.Kind == models.TorqueMotor {
		return 0
	}
	return a.output() - a.screw
}

// batteryState is the pack feeding the actuators.
type batteryState struct {
	m       *models.Battery
	drawn   float64 // charge drawn, C
	voltage float64 // terminal voltage for the next step, V
	nominal bool    // no battery: each actuator sees its nominal voltage
}

func newBattery(m *models.Battery) batteryState {
	if m == nil {
		return batteryState{nominal: true}
	}
	b := batteryState{m: m}
	b.update(0, 0)
	return b
}

// update draws current for dt: open-circuit voltage falls linearly from
// full to empty with the charge drawn; the terminal voltage is that less
// I*R.
func (b *batteryState) update(current, dt float64) {
	if b.nominal {
		return
	}
	m := b.m
	b.drawn += current * dt
	used := 1 - m.InitialCharge
	if m.Capacity > 0 {
		used += b.drawn / m.Capacity
	}
	used = math.Min(math.Max(used, 0), 1)
	voc := m.FullVoltage - (m.FullVoltage-m.EmptyVoltage)*used
	b.voltage = math.Max(voc-current*m.InternalResistance, 0)
}
