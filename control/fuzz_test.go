package control

import (
	"os"
	"path/filepath"
	"testing"
)

// FuzzParse checks that no controller text makes Parse or Build panic
// (DEVELOPERS.md: nothing panics on any input). The seeds run with go test;
// go test -fuzz=FuzzParse explores further.
func FuzzParse(f *testing.F) {
	for _, name := range BuiltinNames() {
		data, _ := BuiltinSource(name)
		f.Add(data)
	}
	for _, s := range []string{
		"", "null", "[1, 2]", "controller: 3", "rate: 100 Hz\nblocks: {a: 1}",
		"rate: 100 Hz\nblocks: [3, [4], {name: 5}]",
		"rate: 100 Hz\nblocks:\n  - {name: a, kind: sum, signs: \"\", input: [a]}",
		"rate: 100 Hz\nblocks:\n  - {name: a, kind: select, count: 2.5, input: [1, 2]}",
		"rate: 100 Hz\nblocks:\n  - {name: a, kind: select, count: 1e9}",
		"rate: 100 Hz\nblocks:\n  - {name: q, kind: sequencer, outputs: [state], states: []}",
		"rate: 100 Hz\nblocks:\n  - {name: q, kind: sequencer, outputs: [x], events: [x], states: [{name: s, next: [{on: x, after: 1 s}]}]}",
		"rate: 100 Hz\nblocks:\n  - {name: q, kind: sequencer, outputs: [x], states: [{name: s, set: {x: [1]}, next: [{when: y, above: 1, below: 2, to: s}]}]}",
		"rate: 100 Hz\nblocks:\n  - {name: p, kind: pid, tf: 1 s, n: 3, limits: [2, 1], input: {setpoint: p.i, measurement: p.d}}",
		"rate: 100 Hz\nblocks:\n  - {name: s, kind: split, outputs: {in: 1, a: x}, input: [1, 2]}",
		"rate: 100 Hz\nblocks:\n  - {name: g, kind: gain, k: 1, input: +}",
		"rate: 100 Hz\nblocks:\n  - {name: g, kind: gain, k: 1, input: .5x}",
	} {
		f.Add([]byte(s))
	}
	files, _ := filepath.Glob("../testdata/bad/controller_*.yaml")
	for _, file := range append(files, "../testdata/good_controller.yaml") {
		if data, err := os.ReadFile(file); err == nil {
			f.Add(data)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		spec, err := ParseBytes("f.yaml", data)
		if err != nil {
			return
		}
		g, err := Build(spec, []string{"torso_imu.tilt", "pot_hip_left.position"}, []string{"hip_left"})
		if err != nil {
			return
		}
		g.Tick(0, []float64{0.1}, []float64{0, 0})
		g.Tick(0.01, nil, nil)
	})
}
