package control

import (
	"errors"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"teeter/models"
)

// TestBadFiles reads each hand-written broken controller and gain set in
// testdata/bad and compares every problem with the file's .want sidecar,
// written by hand from the broken file before the reader was run: one
// "line:col: path: message" per line, in the style of the robot files'
// sidecars there. Each controller_*.yaml is testdata/good_controller.yaml
// changed in a few places; problems that need the robot come from Build
// against the built-in frontal robot. Each gains_* file is read and, when
// it reads, applied to the good controller, which must refuse it whole.
func TestBadFiles(t *testing.T) {
	robot, err := models.Load("builtin:frontal")
	if err != nil {
		t.Fatal(err)
	}
	channels, actuators := models.Channels(robot), models.ActuatorNames(robot)
	good, err := ParseFile("../testdata/good_controller.yaml")
	if err != nil {
		t.Fatalf("the base of the bad files must read:\n%v", err)
	}
	if _, err := Build(good, channels, actuators); err != nil {
		t.Fatalf("the base of the bad files must build:\n%v", err)
	}
	controllers, _ := filepath.Glob("../testdata/bad/controller_*.yaml")
	gainFiles, _ := filepath.Glob("../testdata/bad/gains_*")
	gainFiles = slices.DeleteFunc(gainFiles, func(f string) bool { return filepath.Ext(f) == ".want" })
	if len(controllers) < 10 || len(gainFiles) < 5 {
		t.Fatalf("found %d bad controllers and %d bad gain sets, want at least 10 and 5", len(controllers), len(gainFiles))
	}
	for _, file := range controllers {
		t.Run(filepath.Base(file), func(t *testing.T) {
			spec, err := ParseFile(file)
			if err == nil {
				_, err = Build(spec, channels, actuators)
			}
			compareProblems(t, file, err)
		})
	}
	for _, file := range gainFiles {
		t.Run(filepath.Base(file), func(t *testing.T) {
			g, err := Build(good, channels, actuators)
			if err != nil {
				t.Fatal(err)
			}
			before := MarshalGainsJSON(g.Gains())
			gs, err := ReadGains(file)
			if err == nil {
				err = g.Apply(gs)
			}
			compareProblems(t, file, err)
			// Never half-applied: not one value changed, even after a tick
			// (where accepted gains take effect).
			g.Tick(0, make([]float64, len(channels)), make([]float64, len(actuators)))
			if after := MarshalGainsJSON(g.Gains()); string(after) != string(before) {
				t.Errorf("a refused gain set changed the controller:\nbefore %s\nafter %s", before, after)
			}
		})
	}
}

// compareProblems checks err against the .want sidecar of file.
func compareProblems(t *testing.T, file string, err error) {
	t.Helper()
	wantData, rerr := os.ReadFile(strings.TrimSuffix(file, filepath.Ext(file)) + ".want")
	if rerr != nil {
		t.Fatal(rerr)
	}
	want := strings.Split(strings.TrimSpace(string(wantData)), "\n")
	if err == nil {
		t.Fatal("accepted without problems")
	}
	var ps models.Problems
	if !errors.As(err, &ps) {
		t.Fatalf("error is not a list of positioned problems: %v", err)
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
}
