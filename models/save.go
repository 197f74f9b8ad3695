package models

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// Save writes r as a robot file that Parse reads back to the same model.
// Numbers are bare SI values written with the fewest digits that read back
// exactly, so nothing is lost to unit conversion. It writes the YAML by
// hand rather than through a YAML encoder so that the bytes depend only on
// the robot (field order, quoting and number format fixed here, not by an
// encoder's version), which the "same inputs, same bytes" promise needs.
func Save(w io.Writer, r *Robot) error {
	e := &emitter{w: bufio.NewWriter(w)}
	e.line(0, "# Written by teeter. Bare numbers are SI: m, kg, s, rad, N, V, A, C, ohm.")
	e.str(0, "name", r.Name)
	e.str(0, "plane", string(r.Plane))
	if r.Description != "" {
		e.str(0, "description", r.Description)
	}
	e.str(0, "root", r.Root)
	if r.NoiseScale != 1 {
		e.num(0, "noise_scale", r.NoiseScale)
	}
	if r.PhysicsRate != 0 {
		e.num(0, "physics_rate", r.PhysicsRate)
	}
	writeList(e, "links", r.Links, func(l *Link) { e.link(l, l.Name == r.Root) })
	writeList(e, "joints", r.Joints, e.joint)
	writeList(e, "actuators", r.Actuators, e.actuator)
	if r.Ballast != nil {
		e.ballast(r.Ballast)
	}
	writeList(e, "sensors", r.Sensors, e.sensor)
	writeList(e, "feet", r.Feet, e.foot)
	if r.Battery != nil {
		e.battery(r.Battery)
	}
	e.ground(&r.Ground)
	e.fall(&r.Fall)
	if r.Controller != nil {
		e.raw("controller:")
		writeBlock(e, r.Controller, 2)
	}
	if e.err != nil {
		return e.err
	}
	return e.w.Flush()
}

// writeList writes a top-level list section with write for each item; an
// empty list is left out, as Parse reads a missing list and an empty one
// alike.
func writeList[T any](e *emitter, key string, items []T, write func(*T)) {
	if len(items) == 0 {
		return
	}
	e.line(0, key+":")
	for i := range items {
		write(&items[i])
	}
}

func (e *emitter) link(l *Link, root bool) {
	e.item(2, "name", l.Name)
	e.line(4, "shape:")
	s := l.Shape
	e.line(6, string(s.Kind)+":")
	switch s.Kind {
	case Box:
		e.num(8, "width", s.Width)
		e.num(8, "height", s.Height)
	case Capsule:
		e.num(8, "length", s.Length)
		e.num(8, "radius", s.Radius)
	case Circle:
		e.num(8, "radius", s.Radius)
	}
	if s.Center != (Vec2{}) {
		e.vec(6, "center", s.Center)
	}
	e.num(4, "mass", l.Mass)
	if l.Inertia != 0 {
		e.num(4, "inertia", l.Inertia)
	}
	if l.COM != nil {
		e.vec(4, "com", *l.COM)
	}
	// Only the root's pose is written; the others follow from the joints.
	if root {
		e.vec(4, "position", l.Position)
		e.num(4, "angle", l.Angle)
		if l.Fixed {
			e.line(4, "fixed: true")
		}
	}
}

func (e *emitter) joint(j *Joint) {
	e.item(2, "name", j.Name)
	e.str(4, "kind", string(j.Kind))
	e.str(4, "parent", j.Parent)
	e.str(4, "child", j.Child)
	e.vec(4, "parent_anchor", j.ParentAnchor)
	e.vec(4, "child_anchor", j.ChildAnchor)
	if j.Kind == Prismatic {
		e.vec(4, "axis", j.Axis)
	}
	e.num(4, "initial", j.Initial)
	if j.HasLimits {
		e.vec(4, "limits", Vec2{j.Lower, j.Upper})
	}
	e.num(4, "stiffness", j.Stiffness)
	e.num(4, "damping", j.Damping)
	e.num(4, "friction", j.Friction)
	if j.RatedLoad > 0 {
		e.num(4, "rated_load", j.RatedLoad)
	}
}

func (e *emitter) actuator(a *Actuator) {
	e.item(2, "name", a.Name)
	e.str(4, "kind", string(a.Kind))
	switch {
	case a.Joint != "":
		e.str(4, "joint", a.Joint)
	case a.Ballast:
		e.line(4, "ballast: true")
	}
	e.attachment("from", a.From)
	e.attachment("to", a.To)
	e.vec(4, "stroke", Vec2{a.StrokeMin, a.StrokeMax})
	e.num(4, "nominal_voltage", a.NominalVoltage)
	e.num(4, "no_load_speed", a.NoLoadSpeed)
	e.num(4, "stall_force", a.StallForce)
	if a.RatedLoad > 0 {
		e.num(4, "rated_load", a.RatedLoad)
	}
	e.num(4, "deadband", a.Deadband)
	e.num(4, "time_constant", a.TimeConstant)
	e.num(4, "backlash", a.Backlash)
	e.num(4, "mount_stiffness", a.MountStiffness)
	e.num(4, "no_load_current", a.NoLoadCurrent)
	e.num(4, "stall_current", a.StallCurrent)
}

func (e *emitter) attachment(key string, at *Attachment) {
	if at == nil {
		return
	}
	e.line(4, key+":")
	e.str(6, "link", at.Link)
	e.vec(6, "point", at.Point)
}

func (e *emitter) ballast(b *Ballast) {
	e.line(0, "ballast:")
	e.str(2, "name", b.Name)
	e.str(2, "link", b.Link)
	e.num(2, "mass", b.Mass)
	e.vec(2, "origin", b.Origin)
	e.vec(2, "axis", b.Axis)
	e.num(2, "position", b.Position)
	// Parse takes a missing travel as none: the ballast stays at position.
	if b.Min != b.Max || b.Min != b.Position {
		e.vec(2, "travel", Vec2{b.Min, b.Max})
	}
	e.num(2, "size", b.Size)
}

func (e *emitter) sensor(s *Sensor) {
	e.item(2, "name", s.Name)
	e.str(4, "kind", string(s.Kind))
	switch s.Kind {
	case IMU:
		e.str(4, "link", s.Link)
	case JointPosition:
		if s.Joint != "" {
			e.str(4, "joint", s.Joint)
		} else {
			e.str(4, "actuator", s.Actuator)
		}
		if s.Bits > 0 {
			e.num(4, "bits", float64(s.Bits))
		}
		if s.Min != 0 || s.Max != 0 {
			e.vec(4, "range", Vec2{s.Min, s.Max})
		}
	case FootLoad:
		e.str(4, "pad", s.Pad)
	}
	e.num(4, "rate", s.Rate)
	e.num(4, "latency", float64(s.Latency))
	e.num(4, "noise", s.Noise)
	e.num(4, "bias", s.Bias)
	if s.Kind == IMU {
		e.num(4, "rate_noise", s.RateNoise)
		e.num(4, "rate_bias", s.RateBias)
	}
}

func (e *emitter) foot(f *Foot) {
	e.item(2, "name", f.Name)
	e.str(4, "link", f.Link)
	e.line(4, "pads:")
	for _, p := range f.Pads {
		e.item(6, "name", p.Name)
		e.vec(8, "position", p.Position)
		e.num(8, "width", p.Width)
		e.num(8, "thickness", p.Thickness)
		e.num(8, "mass", p.Mass)
		e.num(8, "stiffness", p.Stiffness)
		e.num(8, "damping", p.Damping)
		e.num(8, "travel", p.Travel)
		e.num(8, "friction", p.Friction)
	}
}

func (e *emitter) battery(b *Battery) {
	e.line(0, "battery:")
	e.num(2, "full_voltage", b.FullVoltage)
	e.num(2, "empty_voltage", b.EmptyVoltage)
	e.num(2, "capacity", b.Capacity)
	e.num(2, "initial_charge", b.InitialCharge)
	e.num(2, "internal_resistance", b.InternalResistance)
}

func (e *emitter) ground(g *Ground) {
	e.line(0, "ground:")
	e.num(2, "friction", g.Friction)
	e.num(2, "tilt", g.Tilt)
	e.num(2, "step_x", g.StepX)
	e.num(2, "step_height", g.StepHeight)
}

func (e *emitter) fall(f *FallLimits) {
	e.line(0, "fall:")
	e.num(2, "max_tilt", f.MaxTilt)
	e.str(2, "torso_link", f.TorsoLink)
}

// SaveFile writes r to path through a temporary file in the same folder,
// renamed over the target only once complete, so a crash never leaves a
// half-written robot.
func SaveFile(path string, r *Robot) error {
	return WriteFileAtomic(path, func(w io.Writer) error { return Save(w, r) })
}

type emitter struct {
	w   *bufio.Writer
	err error
}

func (e *emitter) raw(s string) {
	if e.err == nil {
		_, e.err = e.w.WriteString(s)
	}
}

func (e *emitter) line(indent int, s string) {
	e.raw(strings.Repeat(" ", indent) + s + "\n")
}

func (e *emitter) str(indent int, key, s string) {
	e.line(indent, key+": "+yamlString(s))
}

// item starts a list element with its first field.
func (e *emitter) item(indent int, key, s string) {
	e.line(indent, "- "+key+": "+yamlString(s))
}

func (e *emitter) num(indent int, key string, v float64) {
	e.line(indent, key+": "+formatNumber(v))
}

func (e *emitter) vec(indent int, key string, v Vec2) {
	e.line(indent, fmt.Sprintf("%s: [%s, %s]", key, formatNumber(v.X), formatNumber(v.Y)))
}

func formatNumber(v float64) string {
	return strconv.FormatFloat(v, 'g', -1, 64)
}

// writeBlock writes v as the value of a key or list item whose line has
// been started; nested lines are indented by indent.
func writeBlock(e *emitter, v *Value, indent int) {
	switch {
	case v.Kind == Map && len(v.Fields) > 0:
		e.raw("\n")
		for i := range v.Fields {
			f := &v.Fields[i]
			e.raw(strings.Repeat(" ", indent) + yamlString(f.Key) + ":")
			writeBlock(e, &f.Value, indent+2)
		}
	case v.Kind == List && len(v.Items) > 0:
		e.raw("\n")
		for i := range v.Items {
			e.raw(strings.Repeat(" ", indent) + "-")
			writeBlock(e, &v.Items[i], indent+2)
		}
	case v.Kind == Map:
		e.raw(" {}\n")
	case v.Kind == List:
		e.raw(" []\n")
	case v.Kind == Scalar && v.Quoted:
		e.raw(" " + strconv.Quote(v.Text) + "\n")
	case v.Kind == Scalar && plainScalarOK(v.Text):
		e.raw(" " + v.Text + "\n")
	case v.Kind == Scalar:
		e.raw(" " + strconv.Quote(v.Text) + "\n")
	default:
		e.raw(" null\n")
	}
}

// yamlString writes s plain when YAML reads it back as the same text, and
// double-quoted otherwise.
func yamlString(s string) string {
	if plainSafe(s) {
		return s
	}
	return strconv.Quote(s)
}

func plainSafe(s string) bool {
	if s == "" || s != strings.TrimSpace(s) || len(s) > 200 {
		return false
	}
	switch strings.ToLower(s) {
	case "null", "~", "true", "false", "yes", "no", "on", "off", ".inf", "-.inf", ".nan":
		return false
	}
	if strings.ContainsAny(s[:1], "-?:,[]{}#&*!|>'\"%@`0123456789.+") {
		// A leading digit is fine for YAML but a name like 1e3 would come
		// back as a number's text; quoting keeps intent plain.
		return false
	}
	for _, r := range s {
		if !(r == '_' || r == '-' || r == ' ' || r == '.' || r == '/' || r == '(' || r == ')' ||
			r >= '0' && r <= '9' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z') {
			return false
		}
	}
	return true
}

// plainScalarOK reports whether text written unquoted reads back as the
// same unquoted scalar, as the text of any plain scalar that was parsed does.
func plainScalarOK(s string) bool {
	if s == "" || s != strings.TrimSpace(s) || strings.ContainsAny(s, "\n\r\t") ||
		strings.Contains(s, ": ") || strings.Contains(s, " #") || strings.HasSuffix(s, ":") {
		return false
	}
	switch strings.ToLower(s) {
	case "null", "~":
		return false
	}
	if strings.ContainsAny(s[:1], "[]{},#&*!|>'\"%@`") {
		return false
	}
	if strings.ContainsAny(s[:1], "-?:") && (len(s) == 1 || s[1] == ' ') {
		return false
	}
	return true
}
