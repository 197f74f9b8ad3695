package sim

import (
	"errors"
	"fmt"
	"math"
	"sync"

	"github.com/jakecoffman/cp/v2"

	"teeter/models"
)

// Options set up a plant. Zero values take the defaults.
type Options struct {
	// PhysicsRate is the fixed physics step rate, Hz (default: the robot
	// file's physics_rate, else 1000).
	PhysicsRate float64
	// ControlRate is the rate the controller is called and, unless
	// RecordRate is set, the recorder writes a row, Hz (default
	// DefaultControlRate). It may not exceed PhysicsRate.
	ControlRate float64
	// RecordRate, when set, is the rate the recorder writes a row, Hz,
	// whatever the controller's: the physics rate or a whole fraction of
	// it.
	RecordRate float64
	// Seed seeds every sensor's noise.
	Seed uint64
	// Shoves is the disturbance scenario.
	Shoves []Shove
	// RecordCapacity bounds the recorder to the last RecordCapacity rows;
	// 0 keeps every row.
	RecordCapacity int
}

// DefaultControlRate is the controller rate, Hz, when Options give none:
// that of HoldPose and of a plant without a controller. A controller graph
// has its own rate, which whoever joins it to the plant passes in Options.
const DefaultControlRate = 200.0

const (
	defaultPhysicsRate = 1000
	// Speeds above these mean the simulation has blown up.
	maxSpeed        = 50  // m/s
	maxAngularSpeed = 500 // rad/s
)

// ErrFallen is wrapped by the error Step returns once the robot has fallen.
var ErrFallen = errors.New("robot fell")

// ErrBlowUp is wrapped by the error Step returns when the simulation became
// numerically unstable or the engine failed.
var ErrBlowUp = errors.New("simulation blew up")

// ErrController is wrapped by the error Step returns when the controller
// panicked; the error carries the panic's value.
var ErrController = errors.New("controller failed")

// FallInfo says when and why the robot fell.
type FallInfo struct {
	Time   float64
	Reason string
	Link   string // the link that tilted too far or touched the ground
}

// Plant is a robot simulated on cp. It is not safe for concurrent use: one
// goroutine owns it and calls Step, Shove, Snapshot and the setters.
type Plant struct {
	robot     *models.Robot
	space     *cp.Space
	ground    ground
	dt        float64
	physRate  float64
	ctrlRate  float64
	recEvery  int64 // physics steps per recorded row; 0: a row per controller tick
	step      int64 // physics steps taken
	ticks     int64 // controller ticks taken
	links     []link
	linkIndex map[string]int
	torso     *link
	joints    []joint
	pads      []pad
	ballast   *ballast
	acts      []actuator
	sensors   []sensor
	battery   batteryState
	corners   [][]models.Vec2 // per link, points covering its shape
	radii     []float64

	controller Controller
	signals    SignalSource
	readings   []float64
	commands   []float64
	sigBuf     []float64
	sigMap     []int // recorder signal column -> index in sigBuf, or -1

	shoves  []Shove // scenario, sorted by At
	nextSh  int
	pending []Shove
	held    []heldShove

	rec *Recorder

	bodies []*cp.Body // every dynamic body, for the blow-up check
	names  []string   // their names
	good   []bodyState

	fallen bool
	fall   FallInfo
	err    error
}

type bodyState struct {
	p, v cp.Vector
	a, w float64
}

// buildMu serialises building plants: cp numbers every body it makes (the
// space's static body too) from a package-level counter, and studies and the
// window build plants on several goroutines.
var buildMu sync.Mutex

// New builds a plant for the robot, driven by c (nil: every command zero).
func New(r *models.Robot, c Controller, opt Options) (p *Plant, err error) {
	defer func() {
		// cp asserts by panicking; a model that slips past our checks must
		// still give an error, not a crash.
		if e := recover(); e != nil {
			p, err = nil, fmt.Errorf("sim: robot %q: building the physics failed: %v", r.Name, e)
		}
	}()
	if r == nil {
		return nil, errors.New("sim: no robot")
	}
	if err := check(r); err != nil {
		return nil, fmt.Errorf("sim: robot %q: %w", r.Name, err)
	}
	p = &Plant{robot: r, physRate: opt.PhysicsRate, ctrlRate: opt.ControlRate}
	if p.physRate == 0 {
		p.physRate = r.PhysicsRate
	}
	if p.physRate == 0 {
		p.physRate = defaultPhysicsRate
	}
	if p.ctrlRate == 0 {
		p.ctrlRate = DefaultControlRate
	}
	if !finite(p.physRate, p.ctrlRate) || p.physRate <= 0 || p.ctrlRate <= 0 {
		return nil, fmt.Errorf("sim: rates must be positive: physics %g Hz, control %g Hz", p.physRate, p.ctrlRate)
	}
	if p.ctrlRate > p.physRate {
		return nil, fmt.Errorf("sim: control rate %g Hz exceeds the physics rate %g Hz", p.ctrlRate, p.physRate)
	}
	if rr := opt.RecordRate; rr != 0 {
		n := math.Round(p.physRate / rr)
		if !(rr > 0) || n < 1 || math.Abs(p.physRate/rr-n) > 1e-9*n {
			return nil, fmt.Errorf("sim: record rate %g Hz must be the physics rate %g Hz or a whole fraction of it", rr, p.physRate)
		}
		p.recEvery = int64(n)
	}
	if opt.RecordCapacity < 0 {
		return nil, fmt.Errorf("sim: record capacity %d is negative", opt.RecordCapacity)
	}
	p.dt = 1 / p.physRate
	if err := p.buildLocked(); err != nil {
		return nil, fmt.Errorf("sim: robot %q: %w", r.Name, err)
	}
	if err := p.Schedule(opt.Shoves); err != nil {
		return nil, err
	}
	p.pending = make([]Shove, 0, 8)
	p.held = make([]heldShove, 0, 8)
	if err := p.buildSensors(opt.Seed); err != nil {
		return nil, fmt.Errorf("sim: robot %q: %w", r.Name, err)
	}
	p.readings = make([]float64, len(models.Channels(r)))
	p.commands = make([]float64, len(p.acts))
	p.good = make([]bodyState, len(p.bodies))
	p.saveGood()
	p.setController(c)
	p.rec = p.newRecorder(opt.RecordCapacity)
	p.remap()
	return p, nil
}

// check rejects what would make cp divide by zero or assert.
func check(r *models.Robot) error {
	for _, l := range r.Links {
		if !(l.Mass > 0) || !finite(l.Mass) {
			return fmt.Errorf("link %q: mass %g kg must be positive", l.Name, l.Mass)
		}
		if i := l.MomentOfInertia(); !(i > 0) || !finite(i) {
			return fmt.Errorf("link %q: moment of inertia %g kg*m^2 must be positive (give an inertia or a shape with area)", l.Name, i)
		}
	}
	for _, l := range r.Links {
		if l.Fixed && l.Name != r.Root {
			return fmt.Errorf("link %q: only the root link can be fixed", l.Name)
		}
	}
	for _, f := range r.Feet {
		if l := r.Link(f.Link); l != nil && l.Fixed {
			return fmt.Errorf("foot %q: link %q is fixed to the world", f.Name, f.Link)
		}
		for _, p := range f.Pads {
			if p.Mass < 0 || !(p.Stiffness > 0) || !(p.Width > 0) || !(p.Thickness > 0) || p.Travel < 0 || p.Damping < 0 || p.Friction < 0 {
				return fmt.Errorf("pad %q: stiffness, width and thickness must be positive, mass, damping, friction and travel not negative", p.Name)
			}
		}
	}
	if b := r.Ballast; b != nil && (!(b.Mass > 0) || !(b.Size > 0)) {
		return fmt.Errorf("ballast %q: mass and size must be positive", b.Name)
	}
	for _, a := range r.Actuators {
		if a.Kind == models.LeadScrew && (!(a.NominalVoltage > 0) || !(a.StallForce > 0)) {
			return fmt.Errorf("actuator %q: nominal voltage and stall force must be positive", a.Name)
		}
		if a.Kind == models.TorqueMotor && !(a.NominalVoltage > 0) {
			return fmt.Errorf("actuator %q: nominal voltage must be positive", a.Name)
		}
		if a.Backlash < 0 || a.MountStiffness < 0 || a.TimeConstant < 0 {
			return fmt.Errorf("actuator %q: backlash, mount stiffness and time constant may not be negative", a.Name)
		}
	}
	return nil
}

// buildLocked builds the bodies and constraints under buildMu, released
// even when cp panics on a model that slipped past our checks.
func (p *Plant) buildLocked() error {
	buildMu.Lock()
	defer buildMu.Unlock()
	return p.build()
}

func (p *Plant) addBody(name string, m, i float64, pos cp.Vector, angle float64) *cp.Body {
	b := p.space.AddBody(cp.NewBody(m, i))
	b.SetPosition(pos)
	b.SetAngle(angle)
	p.bodies = append(p.bodies, b)
	p.names = append(p.names, name)
	return b
}

// addFixed makes a link welded to the world: a static body, which the
// engine never moves, left out of the bodies the plant checks and saves.
func (p *Plant) addFixed(pos cp.Vector, angle float64) *cp.Body {
	b := p.space.AddBody(cp.NewStaticBody())
	b.SetPosition(pos)
	b.SetAngle(angle)
	return b
}

// build creates the space, bodies and constraints.
func (p *Plant) build() error {
	r := p.robot
	p.space = cp.NewSpace()
	p.space.SetGravity(cp.Vector{Y: -Gravity})
	p.space.Iterations = 10
	p.ground = newGround(r.Ground.Tilt, r.Ground.StepX, r.Ground.StepHeight)
	poses, err := initialPoses(r, &p.ground)
	if err != nil {
		return err
	}
	p.links = make([]link, len(r.Links))
	p.linkIndex = make(map[string]int, len(r.Links))
	for i := range r.Links {
		ml := &r.Links[i]
		if _, dup := p.linkIndex[ml.Name]; dup {
			return fmt.Errorf("link %q is defined twice", ml.Name)
		}
		p.linkIndex[ml.Name] = i
		pose := poses[ml.Name]
		mass, inertia, com := linkMass(r, ml)
		w := pose.Apply(com)
		l := &p.links[i]
		*l = link{name: ml.Name, com: com, mass: mass, inertia: inertia, shape: ml.Shape}
		if ml.Fixed {
			l.body = p.addFixed(cp.Vector{X: w.X, Y: w.Y}, pose.Angle)
		} else {
			l.body = p.addBody(ml.Name, mass, inertia, cp.Vector{X: w.X, Y: w.Y}, pose.Angle)
		}
		pts, rad := shapeCorners(ml.Shape)
		p.corners = append(p.corners, pts)
		p.radii = append(p.radii, rad)
	}
	torso := r.Fall.TorsoLink
	if torso == "" {
		torso = r.Root
	}
	if p.torso = p.link(torso); p.torso == nil {
		return fmt.Errorf("fall watch link %q is not a link", torso)
	}
	p.joints = make([]joint, len(r.Joints))
	for i := range r.Joints {
		if err := p.buildJoint(&r.Joints[i], &p.joints[i]); err != nil {
			return fmt.Errorf("joint %q: %w", r.Joints[i].Name, err)
		}
	}
	for _, f := range r.Feet {
		foot := p.link(f.Link)
		if foot == nil {
			return fmt.Errorf("foot %q: link %q is not a link", f.Name, f.Link)
		}
		for k := range f.Pads {
			p.buildPad(foot, &f.Pads[k])
		}
	}
	if r.Ballast != nil {
		if err := p.buildBallast(r.Ballast); err != nil {
			return fmt.Errorf("ballast %q: %w", r.Ballast.Name, err)
		}
	}
	p.acts = make([]actuator, len(r.Actuators))
	for i := range r.Actuators {
		if err := p.buildActuator(&r.Actuators[i], &p.acts[i]); err != nil {
			return fmt.Errorf("actuator %q: %w", r.Actuators[i].Name, err)
		}
	}
	if b := p.ballast; b != nil && b.limit == nil {
		// No actuator drives it: hold it where it was written.
		c := coord{geometry: limitAxis, a: b.link.body, b: b.body, anchorA: b.origin, axis: b.axis}
		b.limit = newScrewLimit(c, r.Ballast.Position)
		p.space.AddConstraint(b.limit.Constraint)
	}
	p.battery = newBattery(r.Battery)
	return nil
}

func (p *Plant) link(name string) *link {
	i, ok := p.linkIndex[name]
	if !ok {
		return nil
	}
	return &p.links[i]
}

func (p *Plant) joint(name string) *joint {
	return find(p.joints, name, func(j *joint) string { return j.name })
}

// find is the element of xs that nameOf names name (names are unique), or
// nil.
func find[T any](xs []T, name string, nameOf func(*T) string) *T {
	for i := range xs {
		if nameOf(&xs[i]) == name {
			return &xs[i]
		}
	}
	return nil
}

func (p *Plant) buildJoint(mj *models.Joint, j *joint) error {
	par, ch := p.link(mj.Parent), p.link(mj.Child)
	if par == nil || ch == nil {
		return fmt.Errorf("parent %q or child %q is not a link", mj.Parent, mj.Child)
	}
	*j = joint{name: mj.Name, kind: mj.Kind, parent: par, child: ch,
		pAnchor: par.local(mj.ParentAnchor), cAnchor: ch.local(mj.ChildAnchor)}
	a, b := par.body, ch.body
	switch mj.Kind {
	case models.Revolute:
		p.space.AddConstraint(newPivot(a, b, j.pAnchor, j.cAnchor).Constraint)
		if mj.HasLimits {
			j.limit = newJointLimit(coord{geometry: limitAngle, a: a, b: b}, mj.Lower, mj.Upper)
			p.space.AddConstraint(j.limit.Constraint)
		}
		if mj.Stiffness > 0 || mj.Damping > 0 {
			c := coord{geometry: limitAngle, a: a, b: b}
			p.space.AddConstraint(newSoftSpring(c, mj.Initial, mj.Stiffness, mj.Damping).Constraint)
		}
		if mj.Friction > 0 {
			// A motor holding zero relative speed with bounded torque is
			// Coulomb friction (as in cp's tank demo).
			m := cp.NewSimpleMotor(a, b, 0)
			m.SetMaxForce(mj.Friction)
			p.space.AddConstraint(m)
		}
	case models.Prismatic:
		n := math.Hypot(mj.Axis.X, mj.Axis.Y)
		if !(n > 0) {
			return errors.New("prismatic joint needs an axis")
		}
		j.axis = cp.Vector{X: mj.Axis.X / n, Y: mj.Axis.Y / n}
		j.lower, j.upper = math.Inf(-1), math.Inf(1)
		p.space.AddConstraint(newSlide(a, b, j.pAnchor, j.cAnchor, j.axis).Constraint)
		if mj.HasLimits {
			j.lower, j.upper = mj.Lower, mj.Upper
			c := coord{geometry: limitAxis, a: a, b: b, anchorA: j.pAnchor, anchorB: j.cAnchor, axis: j.axis}
			j.limit = newJointLimit(c, mj.Lower, mj.Upper)
			p.space.AddConstraint(j.limit.Constraint)
		}
		if mj.Stiffness > 0 || mj.Damping > 0 {
			c := coord{geometry: limitAxis, a: a, b: b, anchorA: j.pAnchor, anchorB: j.cAnchor, axis: j.axis}
			p.space.AddConstraint(newSoftSpring(c, mj.Initial, mj.Stiffness, mj.Damping).Constraint)
		}
		if mj.Friction > 0 {
			p.space.AddConstraint(newSlideFriction(a, b, j.pAnchor, j.cAnchor, j.axis, mj.Friction).Constraint)
		}
	default:
		return fmt.Errorf("unknown kind %q", mj.Kind)
	}
	return nil
}

func (p *Plant) buildPad(foot *link, mp *models.Pad) {
	pd := pad{name: mp.Name, foot: foot, rest: foot.local(mp.Position), width: mp.Width, thickness: mp.Thickness, travel: mp.Travel}
	corner := func(sx float64) cp.Vector {
		return foot.local(models.Vec2{X: mp.Position.X + sx*mp.Width/2, Y: mp.Position.Y - mp.Thickness/2})
	}
	pd.contact = newPadContact(foot.body, p.space.StaticBody, &p.ground, corner(-1), corner(1), mp)
	p.space.AddConstraint(pd.contact.Constraint)
	p.pads = append(p.pads, pd)
}

// linkMass gives a link's mass, inertia about its centre of mass, and that
// centre in the link frame, with the pads of any foot on it added as
// uniform boxes (the pads are part of their foot; parallel-axis theorem).
func linkMass(r *models.Robot, l *models.Link) (mass, inertia float64, com models.Vec2) {
	mass, com = l.Mass, l.CenterOfMass()
	type part struct {
		m, i float64
		at   models.Vec2
	}
	parts := []part{{l.Mass, l.MomentOfInertia(), com}}
	for _, f := range r.Feet {
		if f.Link != l.Name {
			continue
		}
		for _, pd := range f.Pads {
			parts = append(parts, part{pd.Mass, pd.Mass * (pd.Width*pd.Width + pd.Thickness*pd.Thickness) / 12, pd.Position})
		}
	}
	if len(parts) == 1 {
		return mass, parts[0].i, com
	}
	mass, com = 0, models.Vec2{}
	for _, q := range parts {
		mass += q.m
		com.X += q.m * q.at.X
		com.Y += q.m * q.at.Y
	}
	com.X /= mass
	com.Y /= mass
	for _, q := range parts {
		dx, dy := q.at.X-com.X, q.at.Y-com.Y
		inertia += q.i + q.m*(dx*dx+dy*dy)
	}
	return mass, inertia, com
}

func (p *Plant) buildBallast(mb *models.Ballast) error {
	l := p.link(mb.Link)
	if l == nil {
		return fmt.Errorf("link %q is not a link", mb.Link)
	}
	n := math.Hypot(mb.Axis.X, mb.Axis.Y)
	if !(n > 0) {
		return errors.New("slide needs an axis")
	}
	axis := cp.Vector{X: mb.Axis.X / n, Y: mb.Axis.Y / n}
	origin := l.local(mb.Origin)
	pos := l.body.LocalToWorld(origin.Add(axis.Mult(mb.Position)))
	body := p.addBody("ballast "+mb.Name, mb.Mass, mb.Mass*mb.Size*mb.Size/6, pos, l.body.Angle())
	lo, hi := mb.Min, mb.Max
	if !(hi > lo) {
		lo, hi = mb.Position, mb.Position
	}
	p.space.AddConstraint(newSlide(l.body, body, origin, cp.Vector{}, axis).Constraint)
	ends := newJointLimit(coord{geometry: limitAxis, a: l.body, b: body, anchorA: origin, axis: axis}, lo, hi)
	p.space.AddConstraint(ends.Constraint)
	p.ballast = &ballast{name: mb.Name, link: l, body: body, origin: origin, axis: axis, size: mb.Size, lower: lo, upper: hi}
	return nil
}

// Time is the simulated time, s.
func (p *Plant) Time() float64 { return float64(p.step) * p.dt }

// PhysicsRate is the physics step rate, Hz.
func (p *Plant) PhysicsRate() float64 { return p.physRate }

// Robot is the model the plant was built from.
func (p *Plant) Robot() *models.Robot { return p.robot }

// Fall reports whether and how the robot fell.
func (p *Plant) Fall() (FallInfo, bool) { return p.fall, p.fallen }

// Recorder is the plant's recording.
func (p *Plant) Recorder() *Recorder { return p.rec }

// Readings are the sensor values the controller saw last, in Channels order.
// The slice is the plant's own; do not keep it across steps.
func (p *Plant) Readings() []float64 { return p.readings }

// SetController replaces the controller (nil: every command zero). Its
// signals are recorded in the columns the first controller's names made;
// signals with other names are not recorded.
func (p *Plant) SetController(c Controller) {
	p.setController(c)
	p.remap()
}

func (p *Plant) setController(c Controller) {
	p.controller = c
	p.signals, _ = c.(SignalSource)
	if h, ok := c.(*HoldPose); ok {
		h.attach(p)
	}
	if p.signals != nil {
		p.sigBuf = make([]float64, len(p.signals.SignalNames()))
	} else {
		p.sigBuf = nil
	}
}

// SetBacklash changes an actuator's backlash (m or rad) from the next step.
func (p *Plant) SetBacklash(actuator string, b float64) error {
	if !finite(b) || b < 0 {
		return fmt.Errorf("sim: backlash %g must be a finite, non-negative value", b)
	}
	a, err := p.actuatorNamed(actuator)
	if err == nil {
		a.backlash = b
	}
	return err
}

// RunFor advances the plant by d seconds (whole physics steps).
func (p *Plant) RunFor(d float64) error {
	n := int64(math.Round(d * p.physRate))
	for range n {
		if err := p.Step(); err != nil {
			return err
		}
	}
	return nil
}

// Step advances one physics step: sensors sample when due, the controller
// ticks when due (and a recorder row is written), disturbances, actuators
// and the engine step follow, then the fall and blow-up checks. After a
// fall, a blow-up or a controller failure Step does nothing and returns the
// same error, which wraps ErrFallen, ErrBlowUp or ErrController.
func (p *Plant) Step() (err error) {
	if p.err != nil {
		return p.err
	}
	defer func() {
		if e := recover(); e != nil {
			p.restoreGood()
			p.err = fmt.Errorf("%w at %.4f s: engine failure: %v", ErrBlowUp, p.Time(), e)
			err = p.err
		}
	}()
	now := p.Time()
	p.sample()
	if float64(p.step) >= float64(p.ticks)*p.physRate/p.ctrlRate-1e-6 {
		p.ticks++
		if e := p.tick(now); e != nil {
			p.err = e
			return e
		}
		for i := range p.commands {
			c := p.commands[i] + p.acts[i].offset
			if !(c >= -1) {
				c = -1 // also NaN: a broken controller must not reach the physics
			} else if c > 1 {
				c = 1
			}
			p.acts[i].command = c
		}
		if p.recEvery == 0 {
			p.record(now)
		}
	}
	if p.recEvery > 0 && p.step%p.recEvery == 0 {
		p.record(now)
	}
	p.applyShoves(now)
	voltage := p.battery.voltage
	for i := range p.acts {
		p.acts[i].before(p.dt, voltage, p.battery.nominal)
	}
	p.space.Step(p.dt)
	p.project(screwSlop, projectionPasses)
	p.step++
	current := 0.0
	for i := range p.acts {
		p.acts[i].after(p.dt)
		current += p.acts[i].current
	}
	p.battery.update(current, p.dt)
	for i := range p.pads {
		pd := &p.pads[i]
		pd.compression, pd.force, pd.stop = 0, 0, 0
		for k := range pd.contact.edges {
			e := &pd.contact.edges[k]
			pd.compression += math.Max(e.depth, 0) / 2
			pd.force += e.impulse() / p.dt
			pd.stop += e.jh / p.dt
		}
	}
	for i := range p.sensors {
		p.sensors[i].afterStep(p.dt)
	}
	if e := p.checkBlowUp(); e != nil {
		p.restoreGood()
		p.err = e
		return e
	}
	p.saveGood()
	p.checkFall()
	return p.err
}

// tick runs the controller and reads its signals. A panic there is the
// controller's failure, not the physics': it is caught apart from the
// engine's, and the physics is left as it was.
func (p *Plant) tick(now float64) (err error) {
	defer func() {
		if e := recover(); e != nil {
			err = fmt.Errorf("%w at %.4f s: %v", ErrController, now, e)
		}
	}()
	if p.controller != nil {
		p.controller.Tick(now, p.readings, p.commands)
	}
	if p.signals != nil {
		p.signals.Signals(p.sigBuf)
	}
	return nil
}

func (p *Plant) checkBlowUp() error {
	for i, b := range p.bodies {
		pos, v, a, w := b.Position(), b.Velocity(), b.Angle(), b.AngularVelocity()
		if !finite(pos.X, pos.Y, v.X, v.Y, a, w) {
			return fmt.Errorf("%w at %.4f s: %s has a non-finite position or speed", ErrBlowUp, p.Time(), p.names[i])
		}
		if s := v.Length(); s > maxSpeed {
			return fmt.Errorf("%w at %.4f s: %s moves at %.3g m/s (limit %d m/s)", ErrBlowUp, p.Time(), p.names[i], s, maxSpeed)
		}
		if math.Abs(w) > maxAngularSpeed {
			return fmt.Errorf("%w at %.4f s: %s turns at %.3g rad/s (limit %d rad/s)", ErrBlowUp, p.Time(), p.names[i], w, maxAngularSpeed)
		}
	}
	for i := range p.acts {
		a := &p.acts[i]
		if !finite(a.screw, a.force) {
			return fmt.Errorf("%w at %.4f s: actuator %s has a non-finite state", ErrBlowUp, p.Time(), a.name)
		}
	}
	return nil
}

// saveGood keeps the last finite state so that a blow-up never shows as
// numbers in a snapshot.
func (p *Plant) saveGood() {
	for i, b := range p.bodies {
		p.good[i] = bodyState{p: b.Position(), v: b.Velocity(), a: b.Angle(), w: b.AngularVelocity()}
	}
}

func (p *Plant) restoreGood() {
	for i, b := range p.bodies {
		g := p.good[i]
		b.SetAngle(g.a)
		b.SetPosition(g.p)
		b.SetVelocityVector(g.v)
		b.SetAngularVelocity(g.w)
	}
}

// tilt is a link's angle from upright in (-pi, pi].
func tilt(b *cp.Body) float64 { return math.Remainder(b.Angle(), 2*math.Pi) }

func (p *Plant) checkFall() {
	if max := p.robot.Fall.MaxTilt; max > 0 {
		if t := tilt(p.torso.body); math.Abs(t) > max {
			p.setFall(fmt.Sprintf("%s tilted %.1f deg, past the %.1f deg limit", p.torso.name, t*180/math.Pi, max*180/math.Pi), p.torso.name)
			return
		}
	}
	for i := range p.links {
		l := &p.links[i]
		if l.body.GetType() == cp.BODY_STATIC {
			continue // welded to the world, it may stand on the floor
		}
		for _, c := range p.corners[i] {
			if d, _ := p.ground.depth(l.world(c)); d+p.radii[i] > 0 {
				p.setFall(l.name+" touched the ground", l.name)
				return
			}
		}
	}
	if b := p.ballast; b != nil {
		h := b.size / 2
		for _, c := range [4]cp.Vector{{X: -h, Y: -h}, {X: h, Y: -h}, {X: h, Y: h}, {X: -h, Y: h}} {
			if d, _ := p.ground.depth(b.body.LocalToWorld(c)); d > 0 {
				p.setFall("ballast "+b.name+" touched the ground", b.link.name)
				return
			}
		}
	}
}

func (p *Plant) setFall(reason, link string) {
	p.fallen = true
	p.fall = FallInfo{Time: p.Time(), Reason: reason, Link: link}
	p.err = fmt.Errorf("%w at %.3f s: %s", ErrFallen, p.fall.Time, reason)
}

// centreOfMass is the whole robot's centre of mass, world, a fixed link
// included.
func (p *Plant) centreOfMass() cp.Vector {
	var s cp.Vector
	m := 0.0
	for i := range p.links {
		l := &p.links[i]
		s = s.Add(l.body.Position().Mult(l.mass))
		m += l.mass
	}
	if b := p.ballast; b != nil {
		s = s.Add(b.body.Position().Mult(b.body.Mass()))
		m += b.body.Mass()
	}
	return s.Mult(1 / m)
}

// centreOfPressure is the x of the resultant ground force, or ok false
// without contact.
func (p *Plant) centreOfPressure() (float64, bool) {
	x, j := 0.0, 0.0
	for i := range p.pads {
		c := p.pads[i].contact
		for k := range c.edges {
			if jn := c.edges[k].impulse(); jn > 0 {
				x += c.point(&c.edges[k]).X * jn
				j += jn
			}
		}
	}
	if j <= 0 {
		return 0, false
	}
	return x / j, true
}
