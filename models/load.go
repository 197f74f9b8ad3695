package models

import (
	"embed"
	"fmt"
	"io/fs"
	"math"
	"os"
	"sort"
	"strings"
)

//go:embed builtin/*.yaml
var builtinFS embed.FS

const builtinPrefix = "builtin:"

// BuiltinNames lists the robots embedded in the program, sorted.
func BuiltinNames() []string { return EmbeddedNames(builtinFS, "builtin") }

// EmbeddedNames lists, sorted, the NAME of each dir/NAME.yaml in fsys: the
// built-in robots here and the built-in controllers of package control.
func EmbeddedNames(fsys fs.FS, dir string) []string {
	entries, err := fs.ReadDir(fsys, dir)
	if err != nil {
		return nil
	}
	var names []string
	for _, e := range entries {
		if n, ok := strings.CutSuffix(e.Name(), ".yaml"); ok {
			names = append(names, n)
		}
	}
	sort.Strings(names)
	return names
}

// BuiltinSource returns the file text of a built-in robot.
func BuiltinSource(name string) ([]byte, error) {
	data, err := builtinFS.ReadFile("builtin/" + name + ".yaml")
	if err != nil {
		return nil, fmt.Errorf("no built-in robot %q (there are %s)", name, strings.Join(BuiltinNames(), ", "))
	}
	return data, nil
}

// Load reads a robot from a file path or, for "builtin:NAME", from the
// robots embedded in the program.
func Load(source string) (*Robot, error) {
	var data []byte
	var err error
	if name, ok := strings.CutPrefix(source, builtinPrefix); ok {
		data, err = BuiltinSource(name)
	} else {
		data, err = os.ReadFile(source)
	}
	if err != nil {
		return nil, err
	}
	return Parse(source, data)
}

// Parse reads a robot file. file names the source in problems and becomes
// Robot.Source. On error it returns Problems holding everything wrong.
func Parse(file string, data []byte) (*Robot, error) {
	root, err := ParseValue(file, data)
	if err != nil {
		return nil, err
	}
	return FromValue(file, &root)
}

// FromValue reads a robot from a parsed file.
func FromValue(file string, root *Value) (r *Robot, err error) {
	w := &walker{pos: map[string]Pos{}}
	r = &Robot{Source: file, NoiseScale: 1, Pos: w.pos}
	if root.Kind == Null {
		w.add(root.Pos, "", "the file is empty; a robot needs at least name, plane, root, links and feet")
		return nil, w.ps.Err()
	}
	top := w.object(root, "")
	readRobot(w, top, r)
	top.done()
	if err := w.ps.Err(); err != nil {
		return nil, err
	}
	checkGeometry(w, r)
	if err := w.ps.Err(); err != nil {
		return nil, err
	}
	return r, nil
}

// Physical ranges beyond which a value is surely a typo.
const (
	maxFriction = 10
	maxRate     = 100e3 // Hz
	maxBits     = 24
)

type section struct {
	links, joints, actuators, sensors, pads, feet *nameRef
	// brokenJoints is set when a joint names a link that does not exist,
	// so that the tree check does not pile on with links it then misses.
	brokenJoints bool
}

func readRobot(w *walker, top *object, r *Robot) {
	r.Name, _ = top.text("name", true)
	r.Plane = Plane(top.choice("plane", true, "", string(Frontal), string(Sagittal)))
	r.Description, _ = top.text("description", false)
	q := top.num("noise_scale", false, &r.NoiseScale, Dimensionless)
	w.nonNegative(q)
	rq := top.num("physics_rate", false, &r.PhysicsRate, Frequency)
	w.check(rq, r.PhysicsRate > 0 && r.PhysicsRate <= maxRate, "must be above 0 Hz and at most %g kHz", maxRate/1000)

	s := section{
		links: newNames("link"), joints: newNames("joint"), actuators: newNames("actuator"),
		sensors: newNames("sensor"), pads: newNames("pad"), feet: newNames("foot"),
	}
	for i, v := range top.list("links", true) {
		r.Links = append(r.Links, readLink(w, i, &v, s.links))
	}
	rootName, rootIdx := top.ref("root", true, s.links)
	r.Root = rootName
	for i, v := range top.list("joints", false) {
		r.Joints = append(r.Joints, readJoint(w, i, &v, &s))
	}
	if !s.brokenJoints {
		checkTree(w, r, rootIdx)
	}
	for i := range r.Links {
		l := &r.Links[i]
		p := "links." + l.Name
		if l.Name != r.Root && l.Name != "" {
			if _, ok := w.pos[p+".position"]; ok {
				w.add(w.pos[p+".position"], p+".position", "only the root link takes a position; the others follow from the joints")
			}
			if _, ok := w.pos[p+".angle"]; ok {
				w.add(w.pos[p+".angle"], p+".angle", "only the root link takes an angle; the others follow from the joints")
			}
			if l.Fixed {
				w.add(w.pos[p+".fixed"], p+".fixed", "only the root link can be fixed; the others follow from the joints")
			}
		}
	}
	if v := top.get("ballast"); v != nil {
		r.Ballast = readBallast(w, v, &s)
	}
	footLinks := map[string]string{}
	rootFixed := r.Link(r.Root) != nil && r.Link(r.Root).Fixed
	for i, v := range top.list("feet", !rootFixed) {
		f := readFoot(w, i, &v, &s, footLinks)
		if rootFixed && f.Link == r.Root {
			p := join("feet."+f.Name, "link")
			w.add(w.pos[p], p, "link %q is fixed to the world; its pads would press on nothing", f.Link)
		}
		r.Feet = append(r.Feet, f)
	}
	for i, v := range top.list("actuators", false) {
		r.Actuators = append(r.Actuators, readActuator(w, i, &v, &s, r))
	}
	for i, v := range top.list("sensors", false) {
		r.Sensors = append(r.Sensors, readSensor(w, i, &v, &s, r))
	}
	if v := top.get("battery"); v != nil {
		r.Battery = readBattery(w, v)
	}
	r.Ground = Ground{Friction: 0.8}
	if v := top.get("ground"); v != nil {
		readGround(w, v, &r.Ground)
	}
	r.Fall = FallLimits{MaxTilt: 30 * math.Pi / 180, TorsoLink: r.Root}
	if v := top.get("fall"); v != nil {
		readFall(w, v, &r.Fall, s.links)
	}
	if v := top.get("controller"); v != nil {
		c := v.Clone()
		r.Controller = &c
	}
}

func readLink(w *walker, i int, v *Value, names *nameRef) Link {
	o, name := w.element("links", i, v, names)
	l := Link{Name: name}
	if sv := o.need("shape"); sv != nil {
		l.Shape = readShape(w, sv, join(o.path, "shape"))
	}
	w.positive(o.num("mass", true, &l.Mass, Mass))
	w.nonNegative(o.num("inertia", false, &l.Inertia, Inertia))
	var com Vec2
	if _, ok := o.vec("com", false, &com); ok {
		l.COM = &com
	}
	o.vec("position", false, &l.Position)
	o.num("angle", false, &l.Angle, Angle)
	l.Fixed, _ = o.boolean("fixed")
	o.done()
	return l
}

func readShape(w *walker, v *Value, path string) Shape {
	o := w.object(v, path)
	var sh Shape
	kinds := []ShapeKind{Box, Capsule, Circle}
	var given []string
	for _, k := range kinds {
		if o.has(string(k)) {
			given = append(given, string(k))
		}
	}
	if o.v != nil && len(given) != 1 {
		if len(given) == 0 {
			w.add(o.pos, path, "needs one of box, capsule or circle")
		} else {
			w.add(o.pos, path, "has %s; give only one shape", strings.Join(given, " and "))
		}
	}
	for _, k := range kinds {
		sv := o.get(string(k))
		if sv == nil || len(given) != 1 {
			continue
		}
		sh.Kind = k
		so := w.object(sv, join(path, string(k)))
		switch k {
		case Box:
			w.check(so.num("width", true, &sh.Width, Length), sh.Width > 0, "a box needs a width greater than zero")
			w.check(so.num("height", true, &sh.Height, Length), sh.Height > 0, "a box needs a height greater than zero")
		case Capsule:
			w.check(so.num("length", true, &sh.Length, Length), sh.Length >= 0, "a capsule's length must not be negative")
			w.check(so.num("radius", true, &sh.Radius, Length), sh.Radius > 0, "a capsule needs a radius greater than zero")
		case Circle:
			w.check(so.num("radius", true, &sh.Radius, Length), sh.Radius > 0, "a circle needs a radius greater than zero")
		}
		so.done()
	}
	o.vec("center", false, &sh.Center)
	o.done()
	return sh
}

// jointUnits gives the kinds of a joint's position, stiffness, damping and
// friction: angles and torques for a revolute joint, lengths and forces for
// a prismatic one.
func jointUnits(k JointKind) (pos, stiff, damp, fric Kind) {
	if k == Prismatic {
		return Length, LinearStiffness, LinearDamping, Force
	}
	return Angle, AngularStiffness, AngularDamping, Torque
}

func readJoint(w *walker, i int, v *Value, s *section) Joint {
	o, name := w.element("joints", i, v, s.joints)
	j := Joint{Name: name}
	j.Kind = JointKind(o.choice("kind", true, "", string(Revolute), string(Prismatic)))
	var pi, ci int
	j.Parent, pi = o.ref("parent", true, s.links)
	j.Child, ci = o.ref("child", true, s.links)
	if pi < 0 || ci < 0 {
		s.brokenJoints = true
	}
	if j.Parent != "" && j.Parent == j.Child {
		w.add(w.pos[join(o.path, "child")], join(o.path, "child"), "a joint cannot join link %q to itself", j.Child)
	}
	o.vec("parent_anchor", true, &j.ParentAnchor)
	o.vec("child_anchor", true, &j.ChildAnchor)
	if j.Kind == Prismatic {
		if pos, ok := o.vec("axis", true, &j.Axis); ok {
			if n, ok := unit(j.Axis); ok {
				j.Axis = n
			} else {
				w.add(pos, join(o.path, "axis"), "the slide axis must not be zero")
			}
		}
	} else {
		o.forbid("axis", "axis is only for prismatic joints")
	}
	posKind, stiffKind, dampKind, fricKind := jointUnits(j.Kind)
	initial := o.num("initial", false, &j.Initial, posKind)
	lo, hi, _ := o.pair("limits", false, posKind)
	if lo.ok && hi.ok {
		j.Lower, j.Upper, j.HasLimits = lo.v, hi.v, true
		if w.check(lo, lo.v < hi.v, "the lower limit must be below the upper one") {
			w.check(initial, j.Initial >= j.Lower && j.Initial <= j.Upper, "the initial position is outside the limits")
		}
	}
	w.nonNegative(o.num("stiffness", false, &j.Stiffness, stiffKind))
	w.nonNegative(o.num("damping", false, &j.Damping, dampKind))
	w.nonNegative(o.num("friction", false, &j.Friction, fricKind))
	w.nonNegative(o.num("rated_load", false, &j.RatedLoad, Force))
	o.done()
	return j
}

// unit returns v scaled to unit length. A vector already of unit length
// within rounding is kept as it is, so a saved model reads back bit for bit.
func unit(v Vec2) (Vec2, bool) {
	n := math.Hypot(v.X, v.Y)
	if n == 0 || math.IsInf(n, 0) || math.IsNaN(n) {
		return v, false
	}
	if math.Abs(n-1) < 1e-12 {
		return v, true
	}
	return Vec2{v.X / n, v.Y / n}, true
}

// checkTree reports joints that give a link two parents, links not joined
// to the root, and loops.
func checkTree(w *walker, r *Robot, rootIdx int) {
	if rootIdx < 0 {
		return
	}
	parentOf := map[string]string{}
	for _, j := range r.Joints {
		if j.Child == "" || j.Parent == "" || j.Child == j.Parent {
			continue
		}
		path := "joints." + j.Name
		if j.Name == "" {
			path = "joints"
		}
		if j.Child == r.Root {
			w.add(w.pos[join(path, "child")], join(path, "child"), "the root link %q cannot be a joint's child", j.Child)
			continue
		}
		if p, dup := parentOf[j.Child]; dup {
			w.add(w.pos[join(path, "child")], join(path, "child"), "link %q already hangs from %q; a link has one parent joint", j.Child, p)
			continue
		}
		parentOf[j.Child] = j.Parent
	}
	for _, l := range r.Links {
		if l.Name == "" || l.Name == r.Root {
			continue
		}
		// Walk up the parents: reaching the root is good; running out of
		// parents means the link is loose; coming back means a loop.
		seen := map[string]bool{l.Name: true}
		at, loop := l.Name, false
		for {
			p, ok := parentOf[at]
			if !ok || p == r.Root {
				break
			}
			if seen[p] {
				loop = true
				break
			}
			seen[p] = true
			at = p
		}
		path := "links." + l.Name
		switch {
		case loop:
			w.add(w.pos[path], path, "link %q is in a loop of joints that never reaches the root %q", l.Name, r.Root)
		case parentOf[at] != r.Root:
			w.add(w.pos[path], path, "link %q is not joined to the root %q by any chain of joints", l.Name, r.Root)
		}
	}
}

func readBallast(w *walker, v *Value, s *section) *Ballast {
	o := w.object(v, "ballast")
	b := &Ballast{Name: "ballast", Axis: Vec2{1, 0}, Size: 0.05}
	if name, nv := o.text("name", false); nv != nil && checkName(w, name, nv.Pos, "ballast.name") {
		b.Name = name
	}
	b.Link, _ = o.ref("link", true, s.links)
	w.positive(o.num("mass", true, &b.Mass, Mass))
	o.vec("origin", false, &b.Origin)
	if pos, ok := o.vec("axis", false, &b.Axis); ok {
		if n, ok := unit(b.Axis); ok {
			b.Axis = n
		} else {
			w.add(pos, "ballast.axis", "the slide axis must not be zero")
		}
	}
	p := o.num("position", false, &b.Position, Length)
	b.Min, b.Max = b.Position, b.Position
	lo, hi, _ := o.pair("travel", false, Length)
	if lo.ok && hi.ok {
		b.Min, b.Max = lo.v, hi.v
		if w.check(lo, lo.v < hi.v, "the travel's start must be below its end") {
			w.check(p, b.Position >= b.Min && b.Position <= b.Max, "the position is outside the travel")
		}
	}
	w.positive(o.num("size", false, &b.Size, Length))
	o.done()
	return b
}

func readFoot(w *walker, i int, v *Value, s *section, footLinks map[string]string) Foot {
	o, name := w.element("feet", i, v, s.feet)
	f := Foot{Name: name}
	f.Link, _ = o.ref("link", true, s.links)
	if other, dup := footLinks[f.Link]; dup && f.Link != "" {
		w.add(w.pos[join(o.path, "link")], join(o.path, "link"), "link %q is already the link of foot %q", f.Link, other)
	} else if f.Link != "" {
		footLinks[f.Link] = name
	}
	for k, pv := range o.list("pads", true) {
		f.Pads = append(f.Pads, readPad(w, k, &pv, join(o.path, "pads"), s.pads))
	}
	o.done()
	return f
}

func readPad(w *walker, i int, v *Value, section string, names *nameRef) Pad {
	o, name := w.element(section, i, v, names)
	p := Pad{Name: name, Mass: 0.01, Friction: 0.8}
	o.vec("position", true, &p.Position)
	w.positive(o.num("width", true, &p.Width, Length))
	w.positive(o.num("thickness", true, &p.Thickness, Length))
	w.positive(o.num("mass", false, &p.Mass, Mass))
	w.positive(o.num("stiffness", true, &p.Stiffness, LinearStiffness))
	w.nonNegative(o.num("damping", false, &p.Damping, LinearDamping))
	w.nonNegative(o.num("travel", true, &p.Travel, Length))
	w.between(o.num("friction", false, &p.Friction, Dimensionless), 0, maxFriction, "")
	o.done()
	return p
}

// actuatorUnits gives the kinds of a linear or rotary actuator's position,
// speed, force and mount stiffness.
func actuatorUnits(linear bool) (pos, speed, force, stiff []Kind) {
	if linear {
		return anyOf(Length), anyOf(Speed), anyOf(Force), anyOf(LinearStiffness)
	}
	return anyOf(Angle), anyOf(AngularSpeed), anyOf(Torque), anyOf(AngularStiffness)
}

func anyOf(k ...Kind) []Kind { return k }

func readActuator(w *walker, i int, v *Value, s *section, r *Robot) Actuator {
	o, name := w.element("actuators", i, v, s.actuators)
	a := Actuator{Name: name, NominalVoltage: 12}
	a.Kind = ActuatorKind(o.choice("kind", false, string(LeadScrew), string(LeadScrew), string(TorqueMotor)))
	joint, targets := readActuatorTarget(w, o, &a, s, r)
	checkDrivenOnce(w, o, &a, joint, r)
	// Without a clear target either unit kind may be meant; accept both
	// rather than add doubtful problems to the real one.
	unitsKnown := targets == 1 && (a.Joint == "" || joint != nil)
	posKind := readMotor(w, o, &a, unitsKnown)
	readStroke(w, o, &a, joint, r, posKind)
	o.done()
	return a
}

// readActuatorTarget reads what a drives: exactly one of a joint, the
// ballast, or a from-to pair; it sets a.Linear from it. It returns the
// driven joint when it is a known one, and how many targets were given.
func readActuatorTarget(w *walker, o *object, a *Actuator, s *section, r *Robot) (*Joint, int) {
	var targets []string
	jointIdx := -1
	if o.has("joint") {
		targets = append(targets, "joint")
		_, jointIdx = o.ref("joint", false, s.joints)
		a.Joint, _ = o.text("joint", false)
	} else {
		o.get("joint")
	}
	if b, bv := o.boolean("ballast"); bv != nil && b {
		targets = append(targets, "ballast")
		a.Ballast = true
		if r.Ballast == nil {
			w.add(bv.Pos, join(o.path, "ballast"), "the robot has no ballast section to drive")
		}
	}
	if o.has("from") || o.has("to") {
		targets = append(targets, "from/to")
		a.From = readAttachment(w, o, "from", s.links)
		a.To = readAttachment(w, o, "to", s.links)
		if a.From != nil && a.To != nil && a.From.Link != "" && a.From.Link == a.To.Link {
			w.add(w.pos[join(o.path, "to")], join(o.path, "to"), "from and to are on the same link %q, so the actuator would move nothing", a.To.Link)
		}
	} else {
		o.get("from")
		o.get("to")
	}
	switch len(targets) {
	case 0:
		w.add(o.pos, o.path, "drives nothing: give one of joint, ballast: true, or from and to")
	case 1:
	default:
		w.add(o.pos, o.path, "gives %s; an actuator drives exactly one of them", strings.Join(targets, " and "))
	}

	var joint *Joint
	if jointIdx >= 0 && jointIdx < len(r.Joints) {
		joint = &r.Joints[jointIdx]
	}
	switch {
	case a.From != nil || a.Ballast:
		a.Linear = true
	case joint != nil:
		a.Linear = joint.Kind == Prismatic
	}
	return joint, len(targets)
}

// checkDrivenOnce reports a joint or the ballast that an actuator read
// before a already drives.
func checkDrivenOnce(w *walker, o *object, a *Actuator, joint *Joint, r *Robot) {
	if joint != nil && a.Name != "" {
		for _, other := range r.Actuators {
			if other.Joint == a.Joint && other.Name != "" {
				w.add(w.pos[join(o.path, "joint")], join(o.path, "joint"), "joint %q is already driven by actuator %q", a.Joint, other.Name)
			}
		}
	}
	if a.Ballast {
		for _, other := range r.Actuators {
			if other.Ballast && other.Name != "" {
				w.add(w.pos[join(o.path, "ballast")], join(o.path, "ballast"), "the ballast is already driven by actuator %q", other.Name)
			}
		}
	}
}

// readMotor reads the motor's numbers, in the units of a linear or rotary
// actuator when unitsKnown and in either otherwise. It returns the kinds
// its position takes.
func readMotor(w *walker, o *object, a *Actuator, unitsKnown bool) []Kind {
	posKind, speedKind, forceKind, stiffKind := actuatorUnits(a.Linear)
	if !unitsKnown {
		posKind, speedKind, forceKind, stiffKind = anyOf(Length, Angle), anyOf(Speed, AngularSpeed),
			anyOf(Force, Torque), anyOf(LinearStiffness, AngularStiffness)
	}
	w.check(o.num("nominal_voltage", false, &a.NominalVoltage, Voltage), a.NominalVoltage > 0, "must be greater than zero")
	w.positive(o.num("no_load_speed", true, &a.NoLoadSpeed, speedKind...))
	w.positive(o.num("stall_force", true, &a.StallForce, forceKind...))
	w.nonNegative(o.num("rated_load", false, &a.RatedLoad, forceKind...))
	dq := o.num("deadband", false, &a.Deadband, Dimensionless)
	w.check(dq, a.Deadband >= 0 && a.Deadband < 1, "must be at least 0 and below 1 (a fraction of full PWM)")
	w.nonNegative(o.num("time_constant", false, &a.TimeConstant, Duration))
	w.nonNegative(o.num("backlash", false, &a.Backlash, posKind...))
	w.nonNegative(o.num("mount_stiffness", false, &a.MountStiffness, stiffKind...))
	w.nonNegative(o.num("no_load_current", false, &a.NoLoadCurrent, Current))
	sc := o.num("stall_current", false, &a.StallCurrent, Current)
	if w.nonNegative(sc) {
		w.check(sc, a.StallCurrent == 0 || a.StallCurrent >= a.NoLoadCurrent, "the stall current must not be below the no-load current")
	}
	return posKind
}

// readStroke reads the screw travel, or takes it from the driven joint's
// limits or the ballast's travel when it is not given.
func readStroke(w *walker, o *object, a *Actuator, joint *Joint, r *Robot, posKind []Kind) {
	lo, hi, present := o.pair("stroke", false, posKind...)
	switch {
	case lo.ok && hi.ok:
		a.StrokeMin, a.StrokeMax = lo.v, hi.v
		w.check(lo, lo.v < hi.v, "the stroke's minimum must be below its maximum")
	case present:
	case a.From != nil:
		w.add(o.pos, join(o.path, "stroke"), "missing required field stroke (the actuator's shortest and longest length)")
	case joint != nil && joint.HasLimits:
		a.StrokeMin, a.StrokeMax = joint.Lower, joint.Upper
	case joint != nil:
		w.add(o.pos, join(o.path, "stroke"), "missing required field stroke (joint %q has no limits to take it from)", joint.Name)
	case a.Ballast && r.Ballast != nil:
		a.StrokeMin, a.StrokeMax = r.Ballast.Min, r.Ballast.Max
		if a.StrokeMin >= a.StrokeMax {
			w.add(o.pos, join(o.path, "stroke"), "missing required field stroke (the ballast has no travel to take it from)")
		}
	}
}

func readAttachment(w *walker, o *object, key string, links *nameRef) *Attachment {
	v := o.need(key)
	if v == nil {
		return nil
	}
	ao := w.object(v, join(o.path, key))
	at := &Attachment{}
	at.Link, _ = ao.ref("link", true, links)
	ao.vec("point", true, &at.Point)
	ao.done()
	return at
}

func readSensor(w *walker, i int, v *Value, s *section, r *Robot) Sensor {
	o, name := w.element("sensors", i, v, s.sensors)
	sn := Sensor{Name: name}
	sn.Kind = SensorKind(o.choice("kind", true, "", string(IMU), string(JointPosition), string(FootLoad)))
	noiseKind := Angle
	switch sn.Kind {
	case IMU:
		sn.Link, _ = o.ref("link", true, s.links)
		o.forbid("joint", "joint is only for joint_position sensors")
		o.forbid("actuator", "actuator is only for joint_position sensors")
		o.forbid("pad", "pad is only for foot_load sensors")
	case JointPosition:
		noiseKind = readJointPositionSource(w, o, &sn, s, r)
	case FootLoad:
		noiseKind = Force
		sn.Pad, _ = o.ref("pad", true, s.pads)
		o.forbid("link", "link is only for imu sensors")
		o.forbid("joint", "joint is only for joint_position sensors")
		o.forbid("actuator", "actuator is only for joint_position sensors")
	default:
		for _, k := range []string{"link", "joint", "actuator", "pad"} {
			o.get(k)
		}
	}
	if sn.Kind != JointPosition {
		o.forbid("bits", "bits is only for joint_position sensors")
		o.forbid("range", "range is only for joint_position sensors")
	}
	if sn.Kind != IMU {
		o.forbid("rate_noise", "rate_noise is only for imu sensors")
		o.forbid("rate_bias", "rate_bias is only for imu sensors")
	}
	rq := o.num("rate", true, &sn.Rate, Frequency)
	w.check(rq, sn.Rate > 0 && sn.Rate <= maxRate, "must be above 0 Hz and at most %g kHz", maxRate/1000)
	if lv := o.get("latency"); lv != nil {
		readLatency(w, lv, join(o.path, "latency"), &sn, rq.ok)
	}
	w.nonNegative(o.num("noise", false, &sn.Noise, noiseKind))
	o.num("bias", false, &sn.Bias, noiseKind)
	if sn.Kind == IMU {
		w.nonNegative(o.num("rate_noise", false, &sn.RateNoise, AngularSpeed))
		o.num("rate_bias", false, &sn.RateBias, AngularSpeed)
	}
	o.done()
	return sn
}

// readJointPositionSource reads what a joint_position sensor reads (a joint
// or an actuator's output), its ADC bits and its range, taken from the
// joint's limits or the actuator's stroke when not given. It returns the
// kind its readings have.
func readJointPositionSource(w *walker, o *object, sn *Sensor, s *section, r *Robot) Kind {
	noiseKind := Angle
	o.forbid("link", "link is only for imu sensors")
	o.forbid("pad", "pad is only for foot_load sensors")
	hasJ, hasA := o.has("joint"), o.has("actuator")
	if hasJ == hasA {
		w.add(o.pos, o.path, "a joint_position sensor reads exactly one of joint or actuator")
	}
	var lo, hi float64
	var haveRange, resolved bool
	if _, ji := o.ref("joint", false, s.joints); ji >= 0 && ji < len(r.Joints) {
		j := r.Joints[ji]
		sn.Joint = j.Name
		if j.Kind == Prismatic {
			noiseKind = Length
		}
		lo, hi, haveRange, resolved = j.Lower, j.Upper, j.HasLimits, true
	}
	if _, ai := o.ref("actuator", false, s.actuators); ai >= 0 && ai < len(r.Actuators) {
		a := r.Actuators[ai]
		sn.Actuator = a.Name
		if a.Linear {
			noiseKind = Length
		} else {
			noiseKind = Angle
		}
		lo, hi, haveRange, resolved = a.StrokeMin, a.StrokeMax, a.StrokeMin < a.StrokeMax, true
	}
	if bv := o.get("bits"); bv != nil {
		bq := w.quantityOf(bv, join(o.path, "bits"), Dimensionless)
		if w.check(bq, bq.v >= 1 && bq.v <= maxBits && bq.v == math.Trunc(bq.v), "ADC bits must be a whole number from 1 to %d", maxBits) {
			sn.Bits = int(bq.v)
		}
	}
	rlo, rhi, present := o.pair("range", false, noiseKind)
	switch {
	case rlo.ok && rhi.ok:
		sn.Min, sn.Max = rlo.v, rhi.v
		w.check(rlo, rlo.v < rhi.v, "the range's low end must be below its high end")
	case present:
	case haveRange:
		sn.Min, sn.Max = lo, hi
	case sn.Bits > 0 && resolved:
		w.add(o.pos, join(o.path, "range"), "missing required field range (the readings are quantized over it)")
	}
	return noiseKind
}

// readLatency takes whole samples (a bare count) or a duration that must be
// a whole number of samples at the sensor's rate.
func readLatency(w *walker, v *Value, path string, sn *Sensor, rateOK bool) {
	q := w.quantityOf(v, path, Dimensionless, Duration)
	if !q.ok {
		return
	}
	text := strings.TrimSpace(v.Text)
	_, kind, _ := ParseQuantity(text)
	samples := q.v
	if kind.Dim == Duration.Dim && numberPrefix(text) != len(text) {
		if !rateOK || sn.Rate <= 0 {
			return
		}
		samples = q.v * sn.Rate
		r := math.Round(samples)
		if math.Abs(samples-r) > 0.01 || r < 0 {
			w.add(q.pos, path, "%s is not a whole number of samples at %g Hz", text, sn.Rate)
			return
		}
		samples = r
	}
	if samples < 0 || samples != math.Trunc(samples) || samples > 1e6 {
		w.add(q.pos, path, "must be a whole number of samples, zero or more")
		return
	}
	sn.Latency = int(samples)
}

func readBattery(w *walker, v *Value) *Battery {
	o := w.object(v, "battery")
	b := &Battery{InitialCharge: 1}
	w.positive(o.num("full_voltage", true, &b.FullVoltage, Voltage))
	e := o.num("empty_voltage", true, &b.EmptyVoltage, Voltage)
	if w.positive(e) {
		w.check(e, b.EmptyVoltage < b.FullVoltage, "the empty voltage must be below the full voltage")
	}
	w.positive(o.num("capacity", true, &b.Capacity, Charge))
	w.between(o.num("initial_charge", false, &b.InitialCharge, Dimensionless), 0, 1, "")
	w.nonNegative(o.num("internal_resistance", false, &b.InternalResistance, Resistance))
	o.done()
	return b
}

func readGround(w *walker, v *Value, g *Ground) {
	o := w.object(v, "ground")
	w.between(o.num("friction", false, &g.Friction, Dimensionless), 0, maxFriction, "")
	tq := o.num("tilt", false, &g.Tilt, Angle)
	w.check(tq, math.Abs(g.Tilt) <= math.Pi/4, "must be within 45 deg either way")
	o.num("step_x", false, &g.StepX, Length)
	w.between(o.num("step_height", false, &g.StepHeight, Length), -1, 1, "m")
	o.done()
}

func readFall(w *walker, v *Value, f *FallLimits, links *nameRef) {
	o := w.object(v, "fall")
	w.check(o.num("max_tilt", false, &f.MaxTilt, Angle), f.MaxTilt > 0 && f.MaxTilt <= math.Pi/2, "must be above 0 and at most 90 deg")
	if name, i := o.ref("torso_link", false, links); i >= 0 {
		f.TorsoLink = name
	}
	o.done()
}

// checkGeometry runs the checks that need a whole, well-formed model: the
// initial pose and the actuator lengths in it.
func checkGeometry(w *walker, r *Robot) {
	poses, err := r.InitialPoses()
	if err != nil {
		w.add(w.pos["root"], "root", "%s", err.Error())
		return
	}
	for _, a := range r.Actuators {
		if a.From == nil || a.To == nil {
			continue
		}
		l := attachmentDistance(poses, a.From, a.To)
		path := "actuators." + a.Name
		if l < a.StrokeMin || l > a.StrokeMax {
			w.add(w.pos[path+".stroke"], path+".stroke", "the actuator is %.1f mm long in the initial pose, outside its stroke %.1f..%.1f mm",
				l*1000, a.StrokeMin*1000, a.StrokeMax*1000)
		}
	}
}

func attachmentDistance(poses map[string]Pose, from, to *Attachment) float64 {
	p, q := poses[from.Link].Apply(from.Point), poses[to.Link].Apply(to.Point)
	return math.Hypot(q.X-p.X, q.Y-p.Y)
}
