package models

import (
	"bytes"
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestBadFiles loads each hand-written broken robot in testdata/bad and
// compares every problem with the file's .want sidecar, written by hand
// from reading the broken file: one "line:col: path: message" per line.
// Each bad file is testdata/good_stick.yaml changed in a few places.
func TestBadFiles(t *testing.T) {
	if _, err := Load("../testdata/good_stick.yaml"); err != nil {
		t.Fatalf("the base of the bad files must load:\n%v", err)
	}
	files, err := filepath.Glob("../testdata/bad/*.yaml")
	// Bad controllers and gain sets there are the control package's.
	files = slices.DeleteFunc(files, func(f string) bool {
		return strings.HasPrefix(filepath.Base(f), "controller_") || strings.HasPrefix(filepath.Base(f), "gains_")
	})
	if err != nil || len(files) < 15 {
		t.Fatalf("want at least 15 bad files, found %d (%v)", len(files), err)
	}
	for _, file := range files {
		t.Run(filepath.Base(file), func(t *testing.T) {
			wantData, err := os.ReadFile(strings.TrimSuffix(file, ".yaml") + ".want")
			if err != nil {
				t.Fatal(err)
			}
			want := strings.Split(strings.TrimSpace(string(wantData)), "\n")
			r, err := Load(file)
			if err == nil {
				t.Fatalf("loaded without problems: %+v", r)
			}
			var ps Problems
			if !errors.As(err, &ps) {
				t.Fatalf("error is not Problems: %v", err)
			}
			var got []string
			for _, p := range ps {
				if p.Pos.File != file {
					t.Errorf("problem names file %q, want %q", p.Pos.File, file)
				}
				// The sidecars leave out the file name that starts the text.
				got = append(got, strings.TrimPrefix(p.String(), file+":"))
			}
			if strings.Join(got, "\n") != strings.Join(want, "\n") {
				t.Errorf("problems\n got:\n%s\nwant:\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
			}
		})
	}
}

// Every problem is also in the error text with the file name in front, the
// form a compiler uses ("file:line:col: ...").
func TestProblemText(t *testing.T) {
	_, err := Parse("robot.yaml", []byte("name: x\nplane: frontal\nroot: a\nlinks: []\nfeet: []\n"))
	if err == nil {
		t.Fatal("want problems")
	}
	want := "robot.yaml:3:7: root: unknown link \"a\"\nrobot.yaml:4:8: links: the list is empty\nrobot.yaml:5:7: feet: the list is empty"
	if err.Error() != want {
		t.Errorf("got\n%s\nwant\n%s", err, want)
	}
}

// Positions of named elements are kept for checks made after loading.
func TestPositions(t *testing.T) {
	r, err := Load("../testdata/good_stick.yaml")
	if err != nil {
		t.Fatal(err)
	}
	// Lines as grep -n finds them in testdata/good_stick.yaml.
	for path, line := range map[string]int{
		"links.pole": 9, "links.pole.mass": 11, "joints.ankle": 13, "actuators.ankle": 21,
		"sensors.pole_imu": 26, "sensors.pot_ankle.bits": 27, "feet.base.pads.toe": 33,
	} {
		if p, ok := r.Pos[path]; !ok || p.Line != line || p.File != "../testdata/good_stick.yaml" {
			t.Errorf("Pos[%q] = %v, want line %d", path, p, line)
		}
	}
}

// Defaults documented in SCHEMA.md.
func TestDefaults(t *testing.T) {
	r, err := Load("../testdata/good_stick.yaml")
	if err != nil {
		t.Fatal(err)
	}
	a := r.Actuators[0]
	if a.Kind != LeadScrew || a.NominalVoltage != 12 || a.StrokeMin != r.Joints[0].Lower || a.StrokeMax != r.Joints[0].Upper || a.Linear {
		t.Errorf("actuator defaults: %+v", a)
	}
	s := r.Sensors[1]
	if s.Min != r.Joints[0].Lower || s.Max != r.Joints[0].Upper || s.Bits != 12 {
		t.Errorf("potentiometer range should default to the joint limits: %+v", s)
	}
	p := r.Feet[0].Pads[0]
	if p.Mass != 0.01 || p.Friction != 0.8 || p.Damping != 0 {
		t.Errorf("pad defaults: %+v", p)
	}
	if r.Ground.Friction != 0.8 || r.Fall.TorsoLink != "base" || r.NoiseScale != 1 || r.Battery != nil || r.Ballast != nil {
		t.Errorf("robot defaults: ground %+v fall %+v noise %g", r.Ground, r.Fall, r.NoiseScale)
	}
}

// Latency may be written as whole samples or as a duration that is a whole
// number of samples: 10 ms at 200 Hz is 2 samples.
func TestLatency(t *testing.T) {
	base, _ := os.ReadFile("../testdata/good_stick.yaml")
	for _, c := range []struct {
		text string
		want int
		ok   bool
	}{{"2", 2, true}, {"10 ms", 2, true}, {"0", 0, true}, {"7 ms", 0, false}, {"1.5", 0, false}, {"3 mm", 0, false}} {
		src := strings.Replace(string(base), "link: pole, rate: 200 Hz}", "link: pole, rate: 200 Hz, latency: "+c.text+"}", 1)
		r, err := Parse("l.yaml", []byte(src))
		switch {
		case c.ok && err != nil:
			t.Errorf("latency %s: %v", c.text, err)
		case c.ok && r.Sensors[0].Latency != c.want:
			t.Errorf("latency %s: got %d samples, want %d", c.text, r.Sensors[0].Latency, c.want)
		case !c.ok && err == nil:
			t.Errorf("latency %s should be refused", c.text)
		}
	}
}

// FuzzParse feeds arbitrary bytes to the loader: it must never panic, and a
// robot it accepts must save and load back unchanged.
func FuzzParse(f *testing.F) {
	for _, n := range BuiltinNames() {
		data, _ := BuiltinSource(n)
		f.Add(data)
	}
	files, _ := filepath.Glob("../testdata/bad/*.yaml")
	files = append(files, "../testdata/good_stick.yaml")
	for _, file := range files {
		if data, err := os.ReadFile(file); err == nil {
			f.Add(data)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		r, err := Parse("fuzz.yaml", data)
		if err != nil {
			return
		}
		var buf bytes.Buffer
		if err := Save(&buf, r); err != nil {
			t.Fatal(err)
		}
		back, err := Parse("saved.yaml", buf.Bytes())
		if err != nil {
			t.Fatalf("saved robot does not load: %v\n%s", err, buf.String())
		}
		if !sameModel(r, back) {
			t.Fatalf("round trip changed the robot\n%s", buf.String())
		}
	})
}

// A fixed root needs no feet, keeps its written pose (nothing lifts it onto
// the ground) and saves and loads back as written; a fixed link other than
// the root, pads on a fixed link and a physics rate out of range are
// problems at the field that says so (the rules in SCHEMA.md).
func TestFixedRootAndPhysicsRate(t *testing.T) {
	base, err := os.ReadFile("../testdata/good_stick.yaml")
	if err != nil {
		t.Fatal(err)
	}
	src := string(base)
	noFeet := src[:strings.Index(src, "feet:")]
	fixed := strings.Replace(noFeet, "    mass: 2 kg\n", "    mass: 2 kg\n    position: [0, 1.5]\n    angle: 10 deg\n    fixed: true\n", 1) + "physics_rate: 2 kHz\n"
	r, err := Parse("fixed.yaml", []byte(fixed))
	if err != nil {
		t.Fatal(err)
	}
	if !r.Links[0].Fixed || r.PhysicsRate != 2000 || len(r.Feet) != 0 {
		t.Fatalf("fixed %v, physics rate %g, %d feet", r.Links[0].Fixed, r.PhysicsRate, len(r.Feet))
	}
	poses, err := r.InitialPoses()
	if err != nil {
		t.Fatal(err)
	}
	if p := poses["base"]; p.Position != (Vec2{0, 1.5}) || math.Abs(p.Angle-10*math.Pi/180) > 1e-15 {
		t.Errorf("fixed root placed at %+v, want as written", p)
	}
	var buf bytes.Buffer
	if err := Save(&buf, r); err != nil {
		t.Fatal(err)
	}
	back, err := Parse("saved.yaml", buf.Bytes())
	if err != nil || !back.Links[0].Fixed || back.PhysicsRate != 2000 {
		t.Errorf("saved and loaded back: %v, %+v", err, back)
	}
	for _, tc := range []struct{ name, file, want string }{
		{"no feet, not fixed", noFeet, "feet: missing required field feet"},
		{"fixed pole", strings.Replace(src, "    mass: 1.5 kg\n", "    mass: 1.5 kg\n    fixed: true\n", 1), "links.pole.fixed: only the root link can be fixed"},
		{"pads on the fixed root", strings.Replace(src, "    mass: 2 kg\n", "    mass: 2 kg\n    fixed: true\n", 1), "feet.base.link: link \"base\" is fixed to the world"},
		{"physics rate", src + "physics_rate: 0 Hz\n", "physics_rate: must be above 0 Hz"},
	} {
		_, err := Parse(tc.name, []byte(tc.file))
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: got %v, want a problem with %q", tc.name, err, tc.want)
		}
	}
}
