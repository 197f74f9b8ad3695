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
//	ground.tilt, ground.friction

// param is one settable number with the check a new value must pass.
type param struct {
	ptr   *float64
	check func(float64) error
	after func() // keeps dependent fields in step
}

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

func actuatorParam(a *Actuator, field string) (param, bool) {
	switch field {
	case "backlash":
		return param{ptr: &a.Backlash, check: atLeast0}, true
	case "no_load_speed":
		return param{ptr: &a.NoLoadSpeed, check: above0}, true
	case "stall_force":
		return param{ptr: &a.StallForce, check: above0}, true
	case "deadband":
		return param{ptr: &a.Deadband, check: func(v float64) error {
			if v < 0 || v >= 1 {
				return fmt.Errorf("must be at least 0 and below 1")
			}
			return nil
		}}, true
	case "time_constant":
		return param{ptr: &a.TimeConstant, check: atLeast0}, true
	case "mount_stiffness":
		return param{ptr: &a.MountStiffness, check: atLeast0}, true
	case "nominal_voltage":
		return param{ptr: &a.NominalVoltage, check: above0}, true
	}
	return param{}, false
}

func padParam(p *Pad, field string) (param, bool) {
	switch field {
	case "stiffness":
		return param{ptr: &p.Stiffness, check: above0}, true
	case "damping":
		return param{ptr: &p.Damping, check: atLeast0}, true
	case "travel":
		return param{ptr: &p.Travel, check: atLeast0}, true
	case "friction":
		return param{ptr: &p.Friction, check: within(0, maxFriction)}, true
	case "mass":
		return param{ptr: &p.Mass, check: above0}, true
	}
	return param{}, false
}

// params resolves a path to the numbers it stands for.
func params(r *Robot, path string) ([]param, error) {
	parts := strings.Split(path, ".")
	bad := fmt.Errorf("unknown parameter %q", path)
	switch {
	case len(parts) == 2 && parts[0] == "actuators":
		if len(r.Actuators) == 0 {
			return nil, fmt.Errorf("parameter %q: the robot has no actuators", path)
		}
		var ps []param
		for i := range r.Actuators {
			p, ok := actuatorParam(&r.Actuators[i], parts[1])
			if !ok {
				return nil, bad
			}
			ps = append(ps, p)
		}
		return ps, nil
	case len(parts) == 3 && parts[0] == "actuators":
		a := r.Actuator(parts[1])
		if a == nil {
			return nil, fmt.Errorf("parameter %q: no actuator %q", path, parts[1])
		}
		if p, ok := actuatorParam(a, parts[2]); ok {
			return []param{p}, nil
		}
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
	case len(parts) == 2 && parts[0] == "ballast":
		b := r.Ballast
		if b == nil {
			return nil, fmt.Errorf("parameter %q: the robot has no ballast", path)
		}
		switch parts[1] {
		case "mass":
			return []param{{ptr: &b.Mass, check: above0}}, nil
		case "position":
			return []param{{ptr: &b.Position, check: within(b.Min, b.Max)}}, nil
		}
	case len(parts) == 2 && parts[0] == "feet":
		field, ok := strings.CutPrefix(parts[1], "pad_")
		if !ok || field == "mass" {
			return nil, bad
		}
		var ps []param
		for i := range r.Feet {
			for k := range r.Feet[i].Pads {
				p, ok := padParam(&r.Feet[i].Pads[k], field)
				if !ok {
					return nil, bad
				}
				ps = append(ps, p)
			}
		}
		if len(ps) == 0 {
			return nil, fmt.Errorf("parameter %q: the robot has no pads", path)
		}
		return ps, nil
	case len(parts) == 3 && parts[0] == "feet":
		_, pad := r.Pad(parts[1])
		if pad == nil {
			return nil, fmt.Errorf("parameter %q: no pad %q", path, parts[1])
		}
		if p, ok := padParam(pad, parts[2]); ok {
			return []param{p}, nil
		}
	case len(parts) == 2 && parts[0] == "battery":
		b := r.Battery
		if b == nil {
			return nil, fmt.Errorf("parameter %q: the robot has no battery", path)
		}
		switch parts[1] {
		case "voltage":
			ratio := b.EmptyVoltage / b.FullVoltage
			return []param{{ptr: &b.FullVoltage, check: above0, after: func() { b.EmptyVoltage = b.FullVoltage * ratio }}}, nil
		case "charge":
			return []param{{ptr: &b.InitialCharge, check: within(0, 1)}}, nil
		}
	case path == "sensors.noise":
		return []param{{ptr: &r.NoiseScale, check: atLeast0}}, nil
	case path == "ground.tilt":
		return []param{{ptr: &r.Ground.Tilt, check: within(-math.Pi/4, math.Pi/4)}}, nil
	case path == "ground.friction":
		return []param{{ptr: &r.Ground.Friction, check: within(0, maxFriction)}}, nil
	}
	return nil, bad
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
		v = math.Max(v, *p.ptr)
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
		*p.ptr = v
		if p.after != nil {
			p.after()
		}
	}
	return nil
}

// ParamPaths lists the parameter paths that r has, group paths first.
func ParamPaths(r *Robot) []string {
	var out []string
	if len(r.Actuators) > 0 {
		out = append(out, "actuators.backlash")
	}
	if len(r.Feet) > 0 {
		out = append(out, "feet.pad_stiffness", "feet.pad_damping", "feet.pad_travel", "feet.pad_friction")
	}
	out = append(out, "sensors.noise", "ground.tilt", "ground.friction")
	if r.Battery != nil {
		out = append(out, "battery.voltage", "battery.charge")
	}
	if r.Ballast != nil {
		out = append(out, "ballast.mass", "ballast.position")
	}
	for _, a := range r.Actuators {
		for _, f := range []string{"backlash", "no_load_speed", "stall_force", "deadband", "time_constant", "mount_stiffness", "nominal_voltage"} {
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
			for _, k := range []string{"stiffness", "damping", "travel", "friction", "mass"} {
				out = append(out, "feet."+p.Name+"."+k)
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
