package models

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"testing"
)

func loadBuiltin(t *testing.T, name string) *Robot {
	t.Helper()
	r, err := Load("builtin:" + name)
	if err != nil {
		t.Fatalf("builtin:%s: %v", name, err)
	}
	return r
}

// The contract in DEVELOPERS.md fixes the built-in names.
func TestBuiltinNames(t *testing.T) {
	want := []string{"frontal", "pendulum", "sagittal"}
	if got := BuiltinNames(); !reflect.DeepEqual(got, want) {
		t.Fatalf("BuiltinNames() = %v, want %v", got, want)
	}
	if _, err := Load("builtin:nope"); err == nil {
		t.Fatal("loading an unknown builtin should fail")
	}
}

// The element names below are the contract's (DEVELOPERS.md), which the sim
// and control packages code against.
func TestBuiltinContract(t *testing.T) {
	names := func(r *Robot) map[string][]string {
		m := map[string][]string{}
		for _, l := range r.Links {
			m["links"] = append(m["links"], l.Name)
		}
		for _, j := range r.Joints {
			m["joints"] = append(m["joints"], j.Name+":"+string(j.Kind))
		}
		for _, a := range r.Actuators {
			m["actuators"] = append(m["actuators"], a.Name)
		}
		for _, s := range r.Sensors {
			m["sensors"] = append(m["sensors"], s.Name+":"+string(s.Kind))
		}
		for _, f := range r.Feet {
			for _, p := range f.Pads {
				m["pads"] = append(m["pads"], f.Name+"/"+p.Name)
			}
		}
		return m
	}
	cases := map[string]map[string][]string{
		"frontal": {
			"links":     {"torso", "thigh_left", "thigh_right", "shin_left", "shin_right", "foot_left", "foot_right"},
			"joints":    {"hip_left:revolute", "hip_right:revolute", "knee_left:prismatic", "knee_right:prismatic", "ankle_left:revolute", "ankle_right:revolute"},
			"actuators": {"hip_left", "hip_right", "ankle_left", "ankle_right", "leg_left", "leg_right"},
			"sensors": {"torso_imu:imu", "leg_imu_left:imu", "leg_imu_right:imu",
				"pot_hip_left:joint_position", "pot_hip_right:joint_position", "pot_ankle_left:joint_position",
				"pot_ankle_right:joint_position", "pot_knee_left:joint_position", "pot_knee_right:joint_position",
				"load_left_inner:foot_load", "load_left_outer:foot_load", "load_right_inner:foot_load", "load_right_outer:foot_load"},
			"pads": {"foot_left/left_outer", "foot_left/left_inner", "foot_right/right_inner", "foot_right/right_outer"},
		},
		"sagittal": {
			"links":     {"torso", "thigh", "shin", "foot"},
			"joints":    {"hip:revolute", "knee:revolute", "ankle:revolute"},
			"actuators": {"hip", "knee", "ankle", "ballast_drive"},
			"sensors": {"torso_imu:imu", "pot_hip:joint_position", "pot_knee:joint_position", "pot_ankle:joint_position",
				"pot_ballast:joint_position", "load_heel:foot_load", "load_toe:foot_load"},
			"pads": {"foot/heel", "foot/toe"},
		},
		"pendulum": {
			"links":     {"foot", "pole"},
			"joints":    {"ankle:revolute"},
			"actuators": {"ankle"},
			"sensors":   {"pole_imu:imu", "pot_ankle:joint_position"},
			"pads":      {"foot/heel", "foot/toe"},
		},
	}
	for name, want := range cases {
		r := loadBuiltin(t, name)
		if got := names(r); !reflect.DeepEqual(got, want) {
			t.Errorf("%s: elements\n got %v\nwant %v", name, got, want)
		}
		if r.Controller != nil {
			t.Errorf("%s: built-ins carry no controller section", name)
		}
	}
	f := loadBuiltin(t, "frontal")
	for _, n := range []string{"hip_left", "hip_right", "ankle_left", "ankle_right"} {
		if a := f.Actuator(n); a.From == nil || a.To == nil || !a.Linear || a.Kind != LeadScrew {
			t.Errorf("frontal %s should be a linear lead screw between two links", n)
		}
	}
	if a := f.Actuator("leg_left"); a.Joint != "knee_left" || !a.Linear {
		t.Errorf("frontal leg_left should drive knee_left linearly: %+v", a)
	}
	if f.Battery == nil || f.Plane != Frontal || f.Root != "torso" {
		t.Error("frontal: battery, plane or root wrong")
	}
	s := loadBuiltin(t, "sagittal")
	if s.Ballast == nil || !s.Actuator("ballast_drive").Ballast || s.Plane != Sagittal {
		t.Error("sagittal: the ballast must be driven by ballast_drive")
	}
	if p := loadBuiltin(t, "pendulum"); p.Actuator("ankle").Linear || p.Root != "foot" {
		t.Error("pendulum: ankle is a rotary actuator on the joint, root is foot")
	}
}

// Physical sense of the built-ins against the brief's hobby-biped numbers
// (common practice for a ~1 m, 10-15 kg robot).
func TestBuiltinPhysics(t *testing.T) {
	for _, name := range BuiltinNames() {
		r := loadBuiltin(t, name)
		poses, err := r.InitialPoses()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		top, com, mass := 0.0, Vec2{}, 0.0
		for _, l := range r.Links {
			p := poses[l.Name]
			top = math.Max(top, l.ShapeTop(p))
			c := p.Apply(l.CenterOfMass())
			com.X += l.Mass * c.X
			mass += l.Mass
		}
		com.X /= mass
		// Support polygon: from the outermost pad edge to the other.
		lo, hi := math.Inf(1), math.Inf(-1)
		for _, f := range r.Feet {
			fp := poses[f.Link]
			if math.Abs(math.Remainder(fp.Angle, 2*math.Pi)) > 1e-9 {
				t.Errorf("%s: foot %s is not flat (angle %g rad)", name, f.Name, fp.Angle)
			}
			for _, p := range f.Pads {
				for _, c := range boxCorners(p.Position, p.Width, p.Thickness) {
					w := fp.Apply(c)
					lo, hi = math.Min(lo, w.X), math.Max(hi, w.X)
				}
				// Every pad touches the ground: the pad bottoms are all at y = 0.
				bottom := fp.Apply(Vec2{p.Position.X, p.Position.Y - p.Thickness/2}).Y
				if math.Abs(bottom) > 1e-9 {
					t.Errorf("%s: pad %s bottom at %g m, want 0", name, p.Name, bottom)
				}
			}
		}
		if com.X < lo+0.03 || com.X > hi-0.03 {
			t.Errorf("%s: centre of mass x=%g not well inside the support %g..%g", name, com.X, lo, hi)
		}
		if name == "pendulum" {
			continue
		}
		if m := r.TotalMass(); m < 10 || m > 15 {
			t.Errorf("%s: total mass %g kg, want 10..15", name, m)
		}
		if top < 0.9 || top > 1.1 {
			t.Errorf("%s: height %g m, want about 1 m", name, top)
		}
		if w := hi - lo; w < 0.15 {
			t.Errorf("%s: stance %g m is too narrow to stand on", name, w)
		}
		if math.Abs(r.Fall.MaxTilt-30*math.Pi/180) > 1e-12 {
			t.Errorf("%s: fall tilt %g rad, want 30 deg", name, r.Fall.MaxTilt)
		}
	}
}

// A lever of a few cm turns a fraction of a millimetre of screw play into a
// fraction of a degree (small-angle geometry: angle = play / lever).
func TestFrontalLevers(t *testing.T) {
	r := loadBuiltin(t, "frontal")
	poses, _ := r.InitialPoses()
	for _, n := range []string{"hip_left", "hip_right", "ankle_left", "ankle_right"} {
		a := r.Actuator(n)
		// The joint between the two links.
		var j *Joint
		for i := range r.Joints {
			jj := &r.Joints[i]
			if (jj.Parent == a.From.Link && jj.Child == a.To.Link) || (jj.Parent == a.To.Link && jj.Child == a.From.Link) {
				j = jj
			}
		}
		if j == nil {
			t.Fatalf("%s: no joint between %s and %s", n, a.From.Link, a.To.Link)
		}
		pin := poses[j.Parent].Apply(j.ParentAnchor)
		p, q := poses[a.From.Link].Apply(a.From.Point), poses[a.To.Link].Apply(a.To.Point)
		// Distance from the pin to the actuator's line.
		dx, dy := q.X-p.X, q.Y-p.Y
		lever := math.Abs(dx*(p.Y-pin.Y)-dy*(p.X-pin.X)) / math.Hypot(dx, dy)
		if lever < 0.02 || lever > 0.08 {
			t.Errorf("%s: lever %g m, want a few cm", n, lever)
		}
		play := 0.3e-3 / lever * 180 / math.Pi
		if play < 0.1 || play > 1 {
			t.Errorf("%s: 0.3 mm of backlash gives %g deg, want a fraction of a degree", n, play)
		}
	}
}

// stripPos clears the positions in a Value, which a save and load moves.
func stripPos(v *Value) {
	if v == nil {
		return
	}
	v.Pos = Pos{}
	for i := range v.Items {
		stripPos(&v.Items[i])
	}
	for i := range v.Fields {
		v.Fields[i].KeyPos = Pos{}
		stripPos(&v.Fields[i].Value)
	}
}

func sameModel(a, b *Robot) bool {
	a, b = a.Clone(), b.Clone()
	for _, r := range []*Robot{a, b} {
		r.Source, r.Pos = "", nil
		stripPos(r.Controller)
	}
	return reflect.DeepEqual(a, b)
}

func roundTrip(t *testing.T, r *Robot) *Robot {
	t.Helper()
	var buf bytes.Buffer
	if err := Save(&buf, r); err != nil {
		t.Fatal(err)
	}
	back, err := Parse("saved.yaml", buf.Bytes())
	if err != nil {
		t.Fatalf("saved file does not load:\n%v\n%s", err, buf.String())
	}
	return back
}

// Save then Parse must give the identical model: shortest round-trip float
// formatting ('g', -1) is exact by Go's strconv specification.
func TestRoundTrip(t *testing.T) {
	for _, name := range BuiltinNames() {
		r := loadBuiltin(t, name)
		if back := roundTrip(t, r); !sameModel(r, back) {
			t.Errorf("%s: round trip changed the model\n got %+v\nwant %+v", name, back, r)
		}
	}
	// A controller section, odd strings and non-default fields survive too.
	r := loadBuiltin(t, "sagittal")
	r.Description = "quotes \" and: colons # and\nnewlines"
	r.NoiseScale = 2.5
	r.Ground.StepX, r.Ground.StepHeight = 0.3, 0.01
	c, err := ParseValue("c.yaml", []byte("controller:\n  rate: 200 Hz\n  blocks:\n    - {name: body_roll, kind: pid, kp: 3, note: 'null'}\n    - []\n    - {}\n  empty:\n  text: \"a: b\"\n"))
	if err != nil {
		t.Fatal(err)
	}
	f, _ := c.Get("controller")
	r.Controller = &f.Value
	if back := roundTrip(t, r); !sameModel(r, back) {
		t.Errorf("round trip changed the model\n got %+v\nwant %+v", back.Controller, r.Controller)
	}
}

func TestSaveFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "robot.yaml")
	r := loadBuiltin(t, "frontal")
	if err := SaveFile(path, r); err != nil {
		t.Fatal(err)
	}
	back, err := Load(path)
	if err != nil {
		t.Fatal(err)
	}
	if !sameModel(r, back) || back.Source != path {
		t.Error("SaveFile then Load changed the model")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("SaveFile left %d files, want just the robot", len(entries))
	}
}

// Parameter paths: each value set is read back, group paths set all members,
// and out-of-range values are refused without changing the model.
func TestParams(t *testing.T) {
	r := loadBuiltin(t, "frontal")
	for _, path := range ParamPaths(r) {
		old, err := GetParam(r, path)
		if err != nil {
			t.Errorf("%s: %v", path, err)
			continue
		}
		v := old * 0.5
		if v == 0 {
			v = 0.001
		}
		if err := SetParam(r, path, v); err != nil {
			t.Errorf("%s = %g: %v", path, v, err)
			continue
		}
		if got, _ := GetParam(r, path); got != v {
			t.Errorf("%s: set %g, got %g", path, v, got)
		}
	}
	r = loadBuiltin(t, "frontal")
	if err := SetParam(r, "actuators.backlash", 0.4e-3); err != nil {
		t.Fatal(err)
	}
	for _, a := range r.Actuators {
		if a.Backlash != 0.4e-3 {
			t.Errorf("actuators.backlash did not reach %s", a.Name)
		}
	}
	r.Actuators[2].Backlash = 0.9e-3
	if got, _ := GetParam(r, "actuators.backlash"); got != 0.9e-3 {
		t.Errorf("actuators.backlash reads %g, want the largest 0.9e-3", got)
	}
	if err := SetParam(r, "feet.pad_stiffness", 3e4); err != nil {
		t.Fatal(err)
	}
	for _, f := range r.Feet {
		for _, p := range f.Pads {
			if p.Stiffness != 3e4 {
				t.Errorf("feet.pad_stiffness did not reach %s", p.Name)
			}
		}
	}
	// 3S LiPo: 12.6 V full, 10.5 V empty (common practice); halving the
	// full voltage halves the empty one.
	if err := SetParam(r, "battery.voltage", 6.3); err != nil || math.Abs(r.Battery.EmptyVoltage-5.25) > 1e-12 {
		t.Errorf("battery.voltage: err %v, empty %g, want 5.25", err, r.Battery.EmptyVoltage)
	}
	before := r.Clone()
	for _, bad := range []struct {
		path string
		v    float64
	}{
		{"actuators.backlash", -1e-3}, {"actuators.hip_left.deadband", 1}, {"battery.charge", 1.5},
		{"ground.friction", -0.1}, {"ground.tilt", math.NaN()}, {"feet.left_inner.stiffness", 0},
		{"joints.hip_left.initial", 1}, {"sensors.noise", math.Inf(1)}, {"actuators.nope.backlash", 0},
		{"feet.pad_mass", 1}, {"nothing", 0}, {"ballast.mass", 1},
	} {
		if err := SetParam(r, bad.path, bad.v); err == nil {
			t.Errorf("SetParam(%s, %g) should fail", bad.path, bad.v)
		}
	}
	if !sameModel(before, r) {
		t.Error("failed SetParam calls changed the model")
	}
	s := loadBuiltin(t, "sagittal")
	if err := SetParam(s, "ballast.position", 0.05); err != nil || s.Ballast.Position != 0.05 {
		t.Errorf("ballast.position: %v", err)
	}
	if err := SetParam(s, "ballast.position", 0.07); err == nil {
		t.Error("ballast.position beyond the 60 mm travel should fail")
	}
}

func TestClone(t *testing.T) {
	r := loadBuiltin(t, "sagittal")
	c, _ := ParseValue("c", []byte("a: [1, {b: 2}]"))
	r.Controller = &c
	k := r.Clone()
	if !sameModel(r, k) {
		t.Fatal("clone differs from the original")
	}
	k.Links[0].COM.X = 1
	k.Actuators[0].From.Point.X = 1
	k.Feet[0].Pads[0].Stiffness = 1
	k.Ballast.Mass = 9
	k.Battery.FullVoltage = 1
	k.Joints[0].Initial = 0.3
	k.Sensors[0].Noise = 9
	k.Controller.Fields[0].Value.Items[1].Fields[0].Value.Text = "x"
	k.Pos["root"] = Pos{}
	o := loadBuiltin(t, "sagittal")
	o.Controller = &c
	if !sameModel(r, o) || r.Pos["root"] == (Pos{}) {
		t.Error("changing the clone changed the original")
	}
}

// The capsule's inertia must match the box formula as the radius shrinks
// (a thin rod: m L^2 / 12) and the disc formula as the length does (m r^2 / 2):
// standard moments of inertia from any mechanics handbook.
func TestMomentOfInertia(t *testing.T) {
	rod := Link{Mass: 2, Shape: Shape{Kind: Capsule, Length: 1, Radius: 1e-6}}
	if got, want := rod.MomentOfInertia(), 2.0/12; math.Abs(got-want) > 1e-6 {
		t.Errorf("thin capsule: %g, want %g", got, want)
	}
	disc := Link{Mass: 2, Shape: Shape{Kind: Capsule, Length: 0, Radius: 0.5}}
	if got, want := disc.MomentOfInertia(), 2*0.25/2; math.Abs(got-want) > 1e-12 {
		t.Errorf("zero-length capsule: %g, want %g", got, want)
	}
	box := Link{Mass: 3, Shape: Shape{Kind: Box, Width: 0.2, Height: 0.4}}
	if got, want := box.MomentOfInertia(), 3*(0.04+0.16)/12; math.Abs(got-want) > 1e-12 {
		t.Errorf("box: %g, want %g", got, want)
	}
	given := Link{Mass: 3, Inertia: 0.5, Shape: box.Shape}
	if given.MomentOfInertia() != 0.5 {
		t.Error("a written inertia must win")
	}
}
