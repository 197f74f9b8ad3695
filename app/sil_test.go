package main

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// buildFirmware runs the README's commands: export the frontal controller
// as C with the protocol main, then compile it with cc.
func buildFirmware(t *testing.T, real string) string {
	t.Helper()
	cc, err := exec.LookPath("cc")
	if err != nil {
		t.Skip("no C compiler (make test installs gcc)")
	}
	dir := t.TempDir()
	if code, _, errOut := runTeeter(t, "export", "--model", "builtin:frontal", "--format", "c", "--c-real", real, "--out", dir, "--sil"); code != 0 {
		t.Fatalf("export: exit %d: %s", code, errOut)
	}
	srcs, _ := filepath.Glob(filepath.Join(dir, "*.c"))
	bin := filepath.Join(dir, "ctl")
	args := append(append([]string{"-std=c99", "-O2"}, srcs...), "-o", bin, "-lm")
	if out, err := exec.Command(cc, args...).CombinedOutput(); err != nil {
		t.Fatalf("cc: %v\n%s", err, out)
	}
	return bin
}

// runTilt runs teeter run with args and returns its fall verdict and the
// torso tilt column of its recording.
func runTilt(t *testing.T, args ...string) (bool, []float64) {
	t.Helper()
	file := filepath.Join(t.TempDir(), "run.csv")
	code, out, errOut := runTeeter(t, append([]string{"run", "--model", "builtin:frontal", "--duration", "20s", "--json", "--csv", file}, args...)...)
	if code != 0 {
		t.Fatalf("run %v: exit %d: %s", args, code, errOut)
	}
	var sum struct{ Fell bool }
	if err := json.Unmarshal([]byte(out), &sum); err != nil {
		t.Fatal(err)
	}
	return sum.Fell, csvColumn(t, file, "torso_tilt [rad]")
}

func csvColumn(t *testing.T, file, name string) []float64 {
	t.Helper()
	f, err := os.Open(file)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := slices.Index(rows[0], name)
	if col < 0 {
		t.Fatalf("%s has no column %q", file, name)
	}
	var out []float64
	for _, r := range rows[1:] {
		v, err := strconv.ParseFloat(r[col], 64)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, v)
	}
	return out
}

func TestExportedFirmwareRunsLikeTheGoController(t *testing.T) {
	// issue 13: the exported module with its protocol main, in the loop,
	// matches the built-in controller's run: no fall, the torso tilt within
	// 0.01 deg at every recorded row in double, the same fall verdict in
	// float.
	goFell, goTilt := runTilt(t)
	if goFell {
		t.Fatal("the built-in controller let the robot fall")
	}
	for _, real := range []string{"double", "float"} {
		fell, tilt := runTilt(t, "--controller-exec", buildFirmware(t, real))
		if fell != goFell {
			t.Errorf("%s: fell %v, the built-in controller %v", real, fell, goFell)
		}
		if real == "float" {
			continue
		}
		if len(tilt) != len(goTilt) {
			t.Fatalf("%d rows, the built-in run %d", len(tilt), len(goTilt))
		}
		for i := range tilt {
			if d := math.Abs(tilt[i]-goTilt[i]) * 180 / math.Pi; d > 0.01 {
				t.Fatalf("row %d: torso tilt %.4f deg from the built-in run's", i+1, d)
			}
		}
	}
}

func TestMarginAndSweepTakeAProgram(t *testing.T) {
	// The same firmware in double gives the Go controller's recovery margin
	// and sweep, number for number (the run above agrees to the last bit).
	ctl := buildFirmware(t, "double")
	for _, args := range [][]string{
		{"margin", "--model", "builtin:frontal", "--dir", "left", "--tol", "0.5N*s", "--json"},
		{"sweep", "--model", "builtin:frontal", "--param", "actuators.backlash=0:0.4mm:2", "--duration", "2s", "--metric", "peak_tilt"},
	} {
		code, want, errOut := runTeeter(t, args...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errOut)
		}
		code, got, errOut := runTeeter(t, append(args, "--controller-exec", ctl)...)
		if code != 0 {
			t.Fatalf("%v with the program: exit %d: %s", args, code, errOut)
		}
		if got != want {
			t.Errorf("%s with the program:\n%s\nwith the built-in controller:\n%s", args[0], got, want)
		}
	}
}

func TestAFailingProgramKeepsTheRun(t *testing.T) {
	// A program that answers three ticks and dies: the error names the
	// tick, the time, the exit status and its last words, and the three
	// recorded rows are still written (PROTOCOL.md, Failures).
	if _, err := exec.LookPath("sh"); err != nil {
		t.Skip("no sh")
	}
	dir := t.TempDir()
	prog := filepath.Join(dir, "dies.sh")
	script := `#!/bin/sh
read header; read in; read out
echo ready
n=0
while read line; do
  n=$((n+1))
  if [ $n -gt 3 ]; then echo "motor driver lost" >&2; exit 3; fi
  echo "c 0 0 0 0 0 0"
done
`
	if err := os.WriteFile(prog, []byte(script), 0o755); err != nil {
		t.Fatal(err)
	}
	file := filepath.Join(dir, "run.csv")
	code, _, errOut := runTeeter(t, "run", "--model", "builtin:frontal", "--duration", "1s", "--controller-exec", prog, "--csv", file)
	if code == 0 {
		t.Fatal("the run succeeded")
	}
	for _, w := range []string{"tick 4 at 0.0150 s", "exit status 3", "motor driver lost"} {
		if !strings.Contains(errOut, w) {
			t.Errorf("%q does not say %q", errOut, w)
		}
	}
	if rows := csvColumn(t, file, "time [s]"); len(rows) != 3 {
		t.Errorf("%d rows recorded, want the 3 ticks before the failure", len(rows))
	}
	if code, _, errOut := runTeeter(t, "run", "--controller-exec", prog, "--exec-timeout", "soon"); code != 2 || !strings.Contains(errOut, "--exec-timeout") {
		t.Errorf("a bad --exec-timeout: exit %d, %s", code, errOut)
	}
}

func TestMarginStopsOnAFailingProgram(t *testing.T) {
	// A controller program that dies is a broken study, not a robot that
	// fell without a shove: margin must stop with the program's error.
	if _, err := exec.LookPath("sh"); err != nil {
		t.Skip("no sh")
	}
	prog := filepath.Join(t.TempDir(), "dies.sh")
	script := `#!/bin/sh
read header; read in; read out
echo ready
read line; echo "c 0 0 0 0 0 0"
echo "motor driver lost" >&2; exit 3
`
	if err := os.WriteFile(prog, []byte(script), 0o755); err != nil {
		t.Fatal(err)
	}
	code, out, errOut := runTeeter(t, "margin", "--model", "builtin:frontal", "--dir", "left", "--seeds", "1", "--controller-exec", prog)
	if code == 0 {
		t.Fatalf("margin succeeded with a dead program:\n%s", out)
	}
	if !strings.Contains(errOut, "exit status 3") {
		t.Errorf("the error does not name the program's failure: %q", errOut)
	}
}
