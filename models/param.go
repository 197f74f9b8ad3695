package models

import (
	"fmt"
	"maps"
	"math"
	"strings"
)

// Parameter paths name one number of a model for sweeps, studies and the
// window's sliders. Values are SI. A group path (actuators.backlash,
// feet.pad_stiffness, ...) sets every member and reads the largest.
//
//	actuators.NAME.backlash|no_load_speed|stall_force|deadband|time_constant|mount_stiffness|nominal_voltage
//	actuators.backlash                 every actuator
//	links.NAME.mass
//	joints.NAME.initial
//	ballast.mass, ballast.position
//	feet.pad_stiffness|pad_damping|pad_travel|pad_friction   every pad
//	feet.PAD.stiffness|damping|travel|friction|mass
//	battery.voltage                    full voltage; the empty voltage scales along
//	battery.charge                     initial charge, 0..1
//	sensors.noise                      Robot.NoiseScale, 1 = as written
//	sensors.NAME.latency               whole samples (a whole number)
//	sensors.NAME.bias, sensors.NAME.rate_bias
//	ground.tilt, ground.friction

// param is one settable number with the check a new value must pass.
type param struct {
	ptr   *float64
	whole *int // instead of ptr, for a count such as a latency in samples
	check func(float64) error
	after func() // keeps dependent fields in step
}

func (p param) get() float64 {
	if p.whole != nil {
		return float64(*p.whole)
	}
	return *p.ptr
}

func (p param) set(v float64) {
	if p.whole != nil {
		*p.whole = int(v)
		return
	}
	*p.ptr = v
}

func wholeSamples(v float64) error {
	if v < 0 || v != math.Trunc(v) || v > 1e6 {
		return fmt.Errorf("must be a whole number of samples, zero or more")
	}
	return nil
}

func anyValue(float64) error { return nil }

func atLeast0(v float64) error {
	if v < 0 {
		return fmt.Errorf("must not be negative")
	}
	return nil
}

func above0(v float64) error {
	if v <= 0 {
		return fmt.Errorf("must be greater than zero")
	}
	return nil
}

func within(lo, hi float64) func(float64) error {
	return func(v float64) error {
		if v < lo || v > hi {
			return fmt.Errorf("must be between %g and %g", lo, hi)
		}
		return nil
	}
}

// settable names one number of a list element T and the check a new value
// must pass; one table per element serves params and ParamPaths.
type settable[T any] struct {
	name  string
	ptr   func(*T) *float64
	check func(float64) error
}

var actuatorSettables = []settable[Actuator]{
	{"backlash", func(a *Actuator) *float64 { return &a.Backlash }, atLeast0},
	{"no_load_speed", func(a *Actuator) *float64 { return &a.NoLoadSpeed }, above0},
	{"stall_force", func(a *Actuator) *float64 { return &a.StallForce }, above0},
	{"deadband", func(a *Actuator) *float64 { return &a.Deadband }, fractionBelow1},
	{"time_constant", func(a *Actuator) *float64 { return &a.TimeConstant }, atLeast0},
	{"mount_stiffness", func(a *Actuator) *float64 { return &a.MountStiffness }, atLeast0},
	{"nominal_voltage", func(a *Actuator) *float64 { return &a.NominalVoltage }, above0},
}

var padSettables = []settable[Pad]{
	{"stiffness", func(p *Pad) *float64 { return &p.Stiffness }, above0},
	{"damping", func(p *Pad) *float64 { return &p.Damping }, atLeast0},
	{"travel", func(p *Pad) *float64 { return &p.Travel }, atLeast0},
	{"friction", func(p *Pad) *float64 { return &p.Friction }, within(0, maxFriction)},
	{"mass", func(p *Pad) *float64 { return &p.Mass }, above0},
}

func fractionBelow1(v float64) error {
	if v < 0 || v >= 1 {
		return fmt.Errorf("must be at least 0 and below 1")
	}
	return nil
}

// inPadGroup reports whether feet.pad_FIELD sets FIELD of every pad: the
// mass is set one pad at a time only.
func inPadGroup(field string) bool { return field != "mass" }

// settableParam finds the field called name of x in table.
func settableParam[T any](table []settable[T], x *T, name string) (param, bool) {
	for _, s := range table {
		if s.name == name {
			return param{ptr: s.ptr(x), check: s.check}, true
		}
	}
	return param{}, false
}

// settableNames lists the field names of table, in its order.
func settableNames[T any](table []settable[T]) []string {
	out := make([]string, len(table))
	for i, s := range table {
		out[i] = s.name
	}
	return out
}

// params resolves a path to the numbers it stands for. The readers for each
// section return nil and no error for a path they do not know.
func params(r *Robot, path string) ([]param, error) {
	parts := strings.Split(path, ".")
	var ps []param
	var err error
	switch parts[0] {
	case "actuators":
		ps, err = actuatorParams(r, path, parts[1:])
	case "links", "joints":
		ps, err = linkOrJointParams(r, path, parts)
	case "ballast":
		ps, err = ballastParams(r, path, parts[1:])
	case "feet":
		ps, err = padParams(r, path, parts[1:])
	case "battery":
		ps, err = batteryParams(r, path, parts[1:])
	case "sensors":
		ps, err = sensorParams(r, path, parts[1:])
	default:
		ps = wholeRobotParams(r, path)
	}
	if ps == nil && err == nil {
		err = fmt.Errorf("unknown parameter %q", path)
	}
	return ps, err
}

// actuatorParams resolves actuators.FIELD (every actuator) and
// actuators.NAME.FIELD.
func actuatorParams(r *Robot, path string, rest []string) ([]param, error) {
	switch len(rest) {
	case 1:
		if len(r.Actuators) == 0 {
			return nil, fmt.Errorf("parameter %q: the robot has no actuators", path)
		}
		var ps []param
		for i := range r.Actuators {
			p, ok := settableParam(actuatorSettables, &r.Actuators[i], rest[0])
			if !ok {
				return nil, nil
			}
			ps = append(ps, p)
		}
		return ps, nil
	case 2:
		a := r.Actuator(rest[0])
		if a == nil {
			return nil, fmt.Errorf("parameter %q: no actuator %q", path, rest[0])
		}
		if p, ok := settableParam(actuatorSettables, a, rest[1]); ok {
			return []param{p}, nil
		}
	}
	return nil, nil
}

// linkOrJointParams resolves links.NAME.mass and joints.NAME.initial.
func linkOrJointParams(r *Robot, path string, parts []string) ([]param, error) {
	switch {
	case len(parts) == 3 && parts[0] == "links" && parts[2] == "mass":
		l := r.Link(parts[1])
		if l == nil {
			return nil, fmt.Errorf("parameter %q: no link %q", path, parts[1])
		}
		return []param{{ptr: &l.Mass, check: above0}}, nil
	case len(parts) == 3 && parts[0] == "joints" && parts[2] == "initial":
		j := r.Joint(parts[1])
		if j == nil {
			return nil, fmt.Errorf("parameter %q: no joint %q", path, parts[1])
		}
		return []param{{ptr: &j.Initial, check: func(v float64) error {
			if j.HasLimits && (v < j.Lower || v > j.Upper) {
				return fmt.Errorf("must be within the joint limits %g..%g", j.Lower, j.Upper)
			}
			return nil
		}}}, nil
	}
	return nil, nil
}

// ballastParams resolves ballast.mass and ballast.position.
func ballastParams(r *Robot, path string, rest []string) ([]param, error) {
	if len(rest) != 1 {
		return nil, nil
	}
	b := r.Ballast
	if b == nil {
		return nil, fmt.Errorf("parameter %q: the robot has no ballast", path)
	}
	switch rest[0] {
	case "mass":
		return []param{{ptr: &b.Mass, check: above0}}, nil
	case "position":
		return []param{{ptr: &b.Position, check: within(b.Min, b.Max)}}, nil
	}
	return nil, nil
}

// padParams resolves feet.pad_FIELD (every pad) and feet.PAD.FIELD.
func padParams(r *Robot, path string, rest []string) ([]param, error) {
	switch len(rest) {
	case 1:
		field, ok := strings.CutPrefix(rest[0], "pad_")
		if !ok || !inPadGroup(field) {
			return nil, nil
		}
		var ps []param
		for i := range r.Feet {
			for k := range r.Feet[i].Pads {
				p, ok := settableParam(padSettables, &r.Feet[i].Pads[k], field)
				if !ok {
					return nil, nil
				}
				ps = append(ps, p)
			}
		}
		if len(ps) == 0 {
			return nil, fmt.Errorf("parameter %q: the robot has no pads", path)
		}
		return ps, nil
	case 2:
		_, pad := r.Pad(rest[0])
		if pad == nil {
			return nil, fmt.Errorf("parameter %q: no pad %q", path, rest[0])
		}
		if p, ok := settableParam(padSettables, pad, rest[1]); ok {
			return []param{p}, nil
		}
	}
	return nil, nil
}

// batteryParams resolves battery.voltage (the empty voltage scales along)
// and battery.charge.
func batteryParams(r *Robot, path string, rest []string) ([]param, error) {
	if len(rest) != 1 {
		return nil, nil
	}
	b := r.Battery
	if b == nil {
		return nil, fmt.Errorf("parameter %q: the robot has no battery", path)
	}
	switch rest[0] {
	case "voltage":
		ratio := b.EmptyVoltage / b.FullVoltage
		return []param{{ptr: &b.FullVoltage, check: above0, after: func() { b.EmptyVoltage = b.FullVoltage * ratio }}}, nil
	case "charge":
		return []param{{ptr: &b.InitialCharge, check: within(0, 1)}}, nil
	}
	return nil, nil
}

// sensorParams resolves sensors.NAME.latency|bias|rate_bias; sensors.noise
// is one of wholeRobotParams.
func sensorParams(r *Robot, path string, rest []string) ([]param, error) {
	if len(rest) != 2 {
		return wholeRobotParams(r, path), nil
	}
	var s *Sensor
	for i := range r.Sensors {
		if r.Sensors[i].Name == rest[0] {
			s = &r.Sensors[i]
		}
	}
	if s == nil {
		return nil, fmt.Errorf("parameter %q: no sensor %q", path, rest[0])
	}
	switch {
	case rest[1] == "latency":
		return []param{{whole: &s.Latency, check: wholeSamples}}, nil
	case rest[1] == "bias":
		return []param{{ptr: &s.Bias, check: anyValue}}, nil
	case rest[1] == "rate_bias" && s.Kind == IMU:
		return []param{{ptr: &s.RateBias, check: anyValue}}, nil
	}
	return nil, nil
}

// wholeRobotParams resolves the paths that name one number of the robot.
func wholeRobotParams(r *Robot, path string) []param {
	switch path {
	case "sensors.noise":
		return []param{{ptr: &r.NoiseScale, check: atLeast0}}
	case "ground.tilt":
		return []param{{ptr: &r.Ground.Tilt, check: within(-math.Pi/4, math.Pi/4)}}
	case "ground.friction":
		return []param{{ptr: &r.Ground.Friction, check: within(0, maxFriction)}}
	}
	return nil
}

// GetParam reads the number a parameter path names (SI). A group path reads
// the largest of its members.
func GetParam(r *Robot, path string) (float64, error) {
	ps, err := params(r, path)
	if err != nil {
		return 0, err
	}
	v := math.Inf(-1)
	for _, p := range ps {
		v = math.Max(v, p.get())
	}
	return v, nil
}

// SetParam sets the number a parameter path names (SI), after checking it
// is finite and in range; a group path sets every member. On error the
// robot is unchanged.
func SetParam(r *Robot, path string, v float64) error {
	ps, err := params(r, path)
	if err != nil {
		return err
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("parameter %q: %g is not a finite number", path, v)
	}
	for _, p := range ps {
		if err := p.check(v); err != nil {
			return fmt.Errorf("parameter %q: %g %v", path, v, err)
		}
	}
	for _, p := range ps {
		p.set(v)
		if p.after != nil {
			p.after()
		}
	}
	return nil
}

// WholeParam reports whether a parameter path names a whole number (a
// sensor's latency in samples), which SetParam takes only as one.
func WholeParam(r *Robot, path string) bool {
	ps, err := params(r, path)
	return err == nil && len(ps) > 0 && ps[0].whole != nil
}

// ParamPaths lists the parameter paths that r has, group paths first,
// but not the sensors' latency and biases, which fits set.
func ParamPaths(r *Robot) []string {
	var out []string
	if len(r.Actuators) > 0 {
		out = append(out, "actuators.backlash")
	}
	if len(r.Feet) > 0 {
		for _, f := range settableNames(padSettables) {
			if inPadGroup(f) {
				out = append(out, "feet.pad_"+f)
			}
		}
	}
	out = append(out, "sensors.noise", "ground.tilt", "ground.friction")
	if r.Battery != nil {
		out = append(out, "battery.voltage", "battery.charge")
	}
	if r.Ballast != nil {
		out = append(out, "ballast.mass", "ballast.position")
	}
	for _, a := range r.Actuators {
		for _, f := range settableNames(actuatorSettables) {
			out = append(out, "actuators."+a.Name+"."+f)
		}
	}
	for _, l := range r.Links {
		out = append(out, "links."+l.Name+".mass")
	}
	for _, j := range r.Joints {
		out = append(out, "joints."+j.Name+".initial")
	}
	for _, f := range r.Feet {
		for _, p := range f.Pads {
			for _, f := range settableNames(padSettables) {
				out = append(out, "feet."+p.Name+"."+f)
			}
		}
	}
	return out
}

// Clone returns a deep copy of r that shares nothing with it, so variants
// of one model can run in parallel.
func (r *Robot) Clone() *Robot {
	if r == nil {
		return nil
	}
	c := *r
	c.Links = append([]Link(nil), r.Links...)
	for i := range c.Links {
		if com := c.Links[i].COM; com != nil {
			v := *com
			c.Links[i].COM = &v
		}
	}
	c.Joints = append([]Joint(nil), r.Joints...)
	c.Actuators = append([]Actuator(nil), r.Actuators...)
	for i := range c.Actuators {
		a := &c.Actuators[i]
		if a.From != nil {
			v := *a.From
			a.From = &v
		}
		if a.To != nil {
			v := *a.To
			a.To = &v
		}
	}
	c.Sensors = append([]Sensor(nil), r.Sensors...)
	c.Feet = append([]Foot(nil), r.Feet...)
	for i := range c.Feet {
		c.Feet[i].Pads = append([]Pad(nil), r.Feet[i].Pads...)
	}
	if r.Ballast != nil {
		v := *r.Ballast
		c.Ballast = &v
	}
	if r.Battery != nil {
		v := *r.Battery
		c.Battery = &v
	}
	if r.Controller != nil {
		v := r.Controller.Clone()
		c.Controller = &v
	}
	if r.Pos != nil {
		c.Pos = maps.Clone(r.Pos)
	}
	return &c
}
