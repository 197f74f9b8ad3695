package fit

import (
	"errors"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"teeter/models"
	"teeter/sim/rig"
)

var update = flag.Bool("update", false, "rewrite the .want sidecars of testdata/badlogs")

func frontal(t testing.TB) *rig.Rig {
	t.Helper()
	r, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		t.Fatal(err)
	}
	return r
}

// TestBadLogs reads every log in testdata/badlogs and compares its problems
// with the .want sidecar, written by hand from the file: each problem must
// name the line and column where a reader of the file would look.
func TestBadLogs(t *testing.T) {
	r := frontal(t)
	files, _ := filepath.Glob("../../../testdata/badlogs/*.csv")
	if len(files) < 10 {
		t.Fatalf("found %d bad logs", len(files))
	}
	for _, file := range files {
		t.Run(filepath.Base(file), func(t *testing.T) {
			data, err := os.ReadFile(file)
			if err != nil {
				t.Fatal(err)
			}
			l, err := ReadLogFor(filepath.Base(file), data, r)
			var ps models.Problems
			if l != nil || !errors.As(err, &ps) {
				t.Fatalf("accepted, or not with problems: %v", err)
			}
			var got []string
			for _, p := range ps {
				got = append(got, p.String())
			}
			wantFile := strings.TrimSuffix(file, ".csv") + ".want"
			if *update {
				os.WriteFile(wantFile, []byte(strings.Join(got, "\n")+"\n"), 0o644)
			}
			want, err := os.ReadFile(wantFile)
			if err != nil {
				t.Fatal(err)
			}
			if g, w := strings.Join(got, "\n"), strings.TrimSpace(string(want)); g != w {
				t.Errorf("problems:\n%s\nwant:\n%s", g, w)
			}
		})
	}
}

// TestReadLogUnits checks the units in brackets against the conversions of
// NIST SP 811 (1 deg = pi/180 rad, 1 ms = 1e-3 s) and that a column without
// a unit is SI.
func TestReadLogUnits(t *testing.T) {
	r := frontal(t)
	data := "time [ms],torso_imu.tilt [deg],pot_knee_left.position [mm],load_left_inner.force,hip_left.command [%]\n" +
		"0,90,2,5,50\n5,180,4,6,-100\n"
	l, err := ReadLogFor("u.csv", []byte(data), r)
	if err != nil {
		t.Fatal(err)
	}
	checks := []struct {
		name string
		got  float64
		want float64
	}{
		{"time", l.Time[1], 0.005},
		{"tilt", l.Column("torso_imu.tilt")[1], 3.141592653589793},
		{"knee", l.Column("pot_knee_left.position")[0], 0.002},
		{"load", l.Column("load_left_inner.force")[1], 6},
		{"command", l.Column("hip_left.command")[1], -1},
	}
	for _, c := range checks {
		if d := c.got - c.want; d > 1e-12 || d < -1e-12 {
			t.Errorf("%s: %g, want %g", c.name, c.got, c.want)
		}
	}
}

// FuzzReadLog: no input makes the reader panic, and an accepted log has
// increasing times and finite numbers.
func FuzzReadLog(f *testing.F) {
	files, _ := filepath.Glob("../../../testdata/badlogs/*.csv")
	for _, file := range files {
		data, _ := os.ReadFile(file)
		f.Add(data)
	}
	f.Add([]byte("time [s],torso_imu.tilt [deg],hip_left.command\n0,0.1,0\n0.01,0.2,0.5\n"))
	r := frontal(f)
	known, err := Known(r)
	if err != nil {
		f.Fatal(err)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		l, err := ReadLog("f.csv", data, known, 0.005)
		if err != nil {
			return
		}
		for i := 1; i < len(l.Time); i++ {
			if !(l.Time[i] > l.Time[i-1]) {
				t.Fatalf("time %g after %g", l.Time[i], l.Time[i-1])
			}
		}
	})
}
