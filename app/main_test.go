package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runTeeter(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errOut bytes.Buffer
	code := run(args, &out, &errOut)
	return code, out.String(), errOut.String()
}

// The JSON summary carries the fields scripts rely on (the run command's
// documented interface).
func TestRunJSONSummary(t *testing.T) {
	code, out, errOut := runTeeter(t, "run", "--model", "builtin:pendulum", "--duration", "1s", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var sum map[string]any
	if err := json.Unmarshal([]byte(out), &sum); err != nil {
		t.Fatalf("output is not one JSON object: %v\n%s", err, out)
	}
	for _, key := range []string{"fell", "fall_time_s", "fall_reason", "peak_tilt_deg", "final_tilt_deg", "sim_seconds", "wall_seconds", "realtime_factor"} {
		if _, ok := sum[key]; !ok {
			t.Errorf("summary lacks %q", key)
		}
	}
	// 1 s at a 1 kHz physics step is 1000 steps; the summary must say so.
	if s, _ := sum["sim_seconds"].(float64); s < 0.999 || s > 1.001 {
		t.Errorf("sim_seconds = %v, want 1", sum["sim_seconds"])
	}
}

// Same inputs and seed give the same bytes (determinism is promised in the README).
func TestRunCSVIsDeterministic(t *testing.T) {
	dir := t.TempDir()
	var files [2][]byte
	for i := range files {
		path := filepath.Join(dir, "run"+string(rune('a'+i))+".csv")
		code, _, errOut := runTeeter(t, "run", "--model", "builtin:frontal", "--duration", "0.5s", "--seed", "7",
			"--shove", "at=0.1s,impulse=1N*s,dir=left", "--csv", path)
		if code != 0 {
			t.Fatalf("exit %d: %s", code, errOut)
		}
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		files[i] = data
	}
	if len(files[0]) == 0 || !bytes.Equal(files[0], files[1]) {
		t.Fatalf("two runs with the same seed wrote different CSV (%d and %d bytes)", len(files[0]), len(files[1]))
	}
}

func TestRunReportsBadModelWithPosition(t *testing.T) {
	path := filepath.Join(t.TempDir(), "bad.yaml")
	os.WriteFile(path, []byte("name: x\nplane: frontal\nroot: a\nlinks:\n  - name: a\n    mass: -1 kg\n    shape: {circle: {radius: 1 cm}}\n"), 0o644)
	code, _, errOut := runTeeter(t, "run", "--model", path)
	if code != 1 {
		t.Fatalf("exit %d, want 1", code)
	}
	if !strings.Contains(errOut, path+":6:") || !strings.Contains(errOut, "mass") {
		t.Errorf("error does not point at line 6 and the mass field:\n%s", errOut)
	}
}

func TestUsageErrorsExitTwo(t *testing.T) {
	for _, args := range [][]string{
		{"run", "--duration", "ten seconds"},
		{"run", "--shove", "nonsense"},
		{"run", "--no-such-flag"},
		{"no-such-command"},
		{"export", "--format", "pdf"},
	} {
		if code, _, _ := runTeeter(t, args...); code != 2 {
			t.Errorf("teeter %s: exit %d, want 2", strings.Join(args, " "), code)
		}
	}
}

// An export is byte for byte the same each time, so it diffs cleanly in
// firmware repositories.
func TestExportIsDeterministic(t *testing.T) {
	for _, format := range []string{"c-header", "json", "yaml"} {
		_, a, errA := runTeeter(t, "export", "--format", format)
		_, b, _ := runTeeter(t, "export", "--format", format)
		if a == "" || a != b {
			t.Errorf("%s export differs between two calls or is empty (%s)", format, errA)
		}
	}
}

func TestWindowWithoutDisplayIsAClearError(t *testing.T) {
	t.Setenv("DISPLAY", "")
	t.Setenv("WAYLAND_DISPLAY", "")
	code, _, errOut := runTeeter(t)
	if code != 1 || !strings.Contains(errOut, "no display") {
		t.Errorf("exit %d, stderr %q; want exit 1 and a message about the missing display", code, errOut)
	}
}

// modes linearises by default and sets each mode beside the identified one
// (its documented output, README "Studies"); the JSON carries both.
func TestModesLinearisesAndCrossChecks(t *testing.T) {
	code, out, errOut := runTeeter(t, "modes", "--model", "builtin:pendulum", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var ms []struct {
		FrequencyHz float64          `json:"frequency_hz"`
		Weight      float64          `json:"weight"`
		Identified  *json.RawMessage `json:"identified"`
	}
	if err := json.Unmarshal([]byte(out), &ms); err != nil {
		t.Fatalf("output is not a JSON list of modes: %v\n%s", err, out)
	}
	checked := 0
	for _, m := range ms {
		if m.Weight > 0.1 && m.Identified != nil {
			checked++
		}
	}
	if checked == 0 {
		t.Errorf("no heavy mode carries its identified twin:\n%s", out)
	}
	code, out, errOut = runTeeter(t, "modes", "--model", "builtin:pendulum", "--kicks")
	if code != 0 || !strings.Contains(out, "identified from kicks") {
		t.Errorf("--kicks: exit %d, output:\n%s%s", code, out, errOut)
	}
}

// The sagittal ankle with 1 mm of play wobbles after any shove (the
// simulation, sim/study/wobble's tests): each --kicks value is one run,
// the count says how many wobble, and the prediction stands beside it.
// With the play in the hip too, whose joint stands loose in it, the
// prediction for both together is refused with why.
func TestWobbleRunsEachShove(t *testing.T) {
	code, out, errOut := runTeeter(t, "wobble", "--model", "builtin:sagittal", "--actuators", "ankle", "--backlash", "1mm",
		"--duration", "12s", "--kicks", "0.2N*s,0.5N*s,1N*s")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"3 of 3 shoves (0.20 to 1.00 N*s) leave it wobbling", "describing function"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	code, out, errOut = runTeeter(t, "wobble", "--model", "builtin:sagittal", "--actuators", "hip,ankle", "--backlash", "1mm",
		"--duration", "12s", "--kicks", "0.5N*s")
	if code != 0 || !strings.Contains(out, "not valid here: hip stands with") {
		t.Errorf("hip and ankle: exit %d, output:\n%s%s", code, out, errOut)
	}
	code, _, errOut = runTeeter(t, "wobble", "--model", "builtin:sagittal", "--kicks", "0.2N*s,2mm")
	if code == 0 || !strings.Contains(errOut, "--kicks") {
		t.Errorf("a kick in mm: exit %d, %s", code, errOut)
	}
}
