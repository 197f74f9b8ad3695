package control

import (
	"os"
	"path/filepath"
	"testing"
	"unicode/utf8"

	"teeter/models"
)

// FuzzParseGains feeds arbitrary bytes to the gain set reader (DEVELOPERS.md:
// nothing panics on any input). A set it accepts is applied to the built-in
// frontal controller, which must either refuse it or take it, and, when it
// names a rate, must read back unchanged from both of the forms teeter
// writes.
func FuzzParseGains(f *testing.F) {
	addGainSeeds(f)
	frontal, err := Builtin("frontal")
	if err != nil {
		f.Fatal(err)
	}
	channels, actuators := frontalNames()
	f.Fuzz(func(t *testing.T, data []byte) {
		gs, err := ParseGains("fuzz.yaml", data)
		if err != nil {
			return
		}
		g, err := Build(frontal, channels, actuators)
		if err != nil {
			t.Fatal(err)
		}
		if err := g.Apply(gs); err == nil {
			// Apply checked every value; a tick must take them.
			g.Tick(0, make([]float64, len(channels)), make([]float64, len(actuators)))
		}
		if gs.Rate <= 0 {
			return // written back as "0 Hz", which the reader refuses
		}
		for _, e := range gs.Gains {
			if !utf8.ValidString(e.Path) {
				return // JSON writes invalid UTF-8 as U+FFFD
			}
		}
		checkGainsReadBack(t, gs)
	})
}

// addGainSeeds seeds the fuzzer with the gain sets of every built-in
// controller in JSON and YAML, every gain file under testdata/ and a few
// edge cases.
func addGainSeeds(f *testing.F) {
	for _, name := range BuiltinNames() {
		spec, err := Builtin(name)
		if err != nil {
			continue
		}
		robot, err := models.Load("builtin:" + name)
		if err != nil {
			// Controllers such as frontal_stepping run on another
			// built-in robot; their gain sets are seeds all the same.
			robot, err = models.Load("builtin:frontal")
			if err != nil {
				continue
			}
		}
		g, err := Build(spec, models.Channels(robot), models.ActuatorNames(robot))
		if err != nil {
			continue
		}
		f.Add(MarshalGainsJSON(g.Gains()))
		f.Add(MarshalGainsYAML(g.Gains()))
	}
	files, _ := filepath.Glob("../testdata/bad/gains_*")
	more, _ := filepath.Glob("../testdata/*gains*")
	for _, file := range append(files, more...) {
		if filepath.Ext(file) == ".want" {
			continue
		}
		if data, err := os.ReadFile(file); err == nil {
			f.Add(data)
		}
	}
	for _, s := range []string{
		"", "{}", "[]", "null", "gains: 3", `{"format": "teeter-gains", "version": 1, "gains": {"a.b": [1]}}`,
		"format: teeter-gains\nversion: 1\nrate: 1e400 Hz\ngains: {a.kp: 1e400}",
		"format: teeter-gains\nversion: 1\nrate: 200 Hz\ngains: {\"\": 1, a.kp: 2 deg, a.kp: 3}",
	} {
		f.Add([]byte(s))
	}
}

// checkGainsReadBack writes gs in JSON and in YAML and checks that each
// reads back to the same rate, paths and values.
func checkGainsReadBack(t *testing.T, gs GainSet) {
	t.Helper()
	for _, form := range []struct {
		name string
		data []byte
	}{{"json", MarshalGainsJSON(gs)}, {"yaml", MarshalGainsYAML(gs)}} {
		back, err := ParseGains("back."+form.name, form.data)
		if err != nil {
			t.Fatalf("%s form does not read back: %v\n%s", form.name, err, form.data)
		}
		if back.Rate != gs.Rate || len(back.Gains) != len(gs.Gains) {
			t.Fatalf("%s form: rate %v with %d gains, want %v with %d", form.name, back.Rate, len(back.Gains), gs.Rate, len(gs.Gains))
		}
		for i, e := range gs.Gains {
			if back.Gains[i].Path != e.Path || back.Gains[i].Value != e.Value {
				t.Fatalf("%s form: gain %q = %v came back as %q = %v", form.name, e.Path, e.Value, back.Gains[i].Path, back.Gains[i].Value)
			}
		}
	}
}
