package control

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const tunedText = `
rate: 200 Hz
blocks:
  - {name: y, kind: sensor, channel: y}
  - {name: body_roll, kind: pid, kp: 2.0, ki: 0.5, kd: 0.1, limits: [-10 deg, 10 deg], input: {setpoint: 0, measurement: y}}
  - {name: split, kind: split, outputs: {hip: 1, ankle: 0.4}, input: body_roll}
`

func TestGainSetRoundTrip(t *testing.T) {
	g := build(t, tunedText, []string{"y"}, nil)
	if err := g.Set("body_roll.kp", 3.25); err != nil {
		t.Fatal(err)
	}
	if err := g.Set("split.ankle", 1.0/3); err != nil {
		t.Fatal(err)
	}
	gs := g.Gains()
	dir := t.TempDir()
	for _, name := range []string{"g.json", "g.yaml"} {
		file := filepath.Join(dir, name)
		if err := WriteGains(file, gs); err != nil {
			t.Fatal(err)
		}
		back, err := ReadGains(file)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if back.Rate != 200 || len(back.Gains) != len(gs.Gains) {
			t.Fatalf("%s: read back rate %g with %d gains, want 200 Hz and %d", name, back.Rate, len(back.Gains), len(gs.Gains))
		}
		for i, e := range gs.Gains {
			// Shortest round-trip formatting gives the same float64 back
			// (strconv.FormatFloat with precision -1, Go documentation).
			if back.Gains[i].Path != e.Path || back.Gains[i].Value != e.Value {
				t.Errorf("%s: gain %d is %s = %v, want %s = %v", name, i, back.Gains[i].Path, back.Gains[i].Value, e.Path, e.Value)
			}
		}
		fresh := build(t, tunedText, []string{"y"}, nil)
		if err := fresh.Apply(back); err != nil {
			t.Fatal(err)
		}
		if v, _ := fresh.Get("split.ankle"); v != 1.0/3 {
			t.Errorf("%s: applied split.ankle = %v", name, v)
		}
		// Saving twice gives the same bytes.
		again := filepath.Join(dir, "again-"+name)
		WriteGains(again, fresh.Gains())
		a, _ := os.ReadFile(file)
		b, _ := os.ReadFile(again)
		if !bytes.Equal(a, b) {
			t.Errorf("%s: saving the same gains twice gave different files", name)
		}
	}
	// Nothing but the two files is left in the directory: no temp files.
	entries, _ := os.ReadDir(dir)
	if len(entries) != 4 {
		t.Errorf("%d files in the directory after four writes", len(entries))
	}
}

func TestGainSetRejectsUnknownPaths(t *testing.T) {
	g := build(t, tunedText, []string{"y"}, nil)
	gs, err := ParseGains("tuned.yaml", []byte(`format: teeter-gains
version: 1
rate: 200 Hz
gains:
  body_roll.kp: 2.5
  body_roll.kq: 1
  bodyroll.ki: 3
  body_roll.b: 2
`))
	if err != nil {
		t.Fatal(err)
	}
	err = g.Apply(gs)
	want := `tuned.yaml:6:3: gains.body_roll.kq: no tunable parameter "body_roll.kq" (block body_roll has kp, ki, kd, b, tf, min, max, tt, on)
tuned.yaml:7:3: gains.bodyroll.ki: no tunable parameter "bodyroll.ki": there is no block "bodyroll" with tunable parameters
tuned.yaml:8:3: gains.body_roll.b: body_roll.b: 2 is outside 0 .. 1`
	if err == nil || err.Error() != want {
		t.Fatalf("got:\n%v\nwant:\n%s", err, want)
	}
	// Nothing was applied.
	if v, _ := g.Get("body_roll.kp"); v != 2 {
		t.Fatalf("a rejected gain set changed kp to %g", v)
	}
	_, err = ParseGains("old.json", []byte(`{"format": "teeter-gains", "version": 7, "gains": {}}`))
	if err == nil || !strings.Contains(err.Error(), `old.json:1:39: version: version "7" is not supported`) {
		t.Fatalf("version check: %v", err)
	}
}

func TestCHeader(t *testing.T) {
	params := []ParamInfo{
		{Path: "body_roll.kp", Value: 2, Unit: ""},
		{Path: "body_roll.max", Value: 0.17453292519943295, Unit: "rad"},
		{Path: "body-roll.kp", Value: 1.5},                                     // same identifier as body_roll.kp
		{Path: "2nd.k", Value: -0.25},                                          // leading digit
		{Path: "evil*/\n#define X 1\n/*.kp", Value: 1e-7, Unit: "s*/\nint y;"}, // hostile
		{Path: "TEETER_CONTROL_RATE_HZ", Value: 3},                             // the header's own macro
	}
	got := string(CHeader(params, 200, "robot */ file\n#include <evil.h>"))
	want := `/* Controller parameters for firmware, written by teeter; do not edit.
 * Source: robot _/ file_#include <evil.h>
 * The controller runs at 200 Hz (period 0.005 s). Gains are in SI units
 * of continuous time (ki per second, kd in seconds); discretise with
 * that period.
 */
#ifndef TEETER_CONTROLLER_H
#define TEETER_CONTROLLER_H

#define TEETER_CONTROL_RATE_HZ 200.0f

static const float P_2ND_K = -0.25f; /* 2nd.k */
static const float TEETER_CONTROL_RATE_HZ_2 = 3.0f; /* TEETER_CONTROL_RATE_HZ */
static const float BODY_ROLL_KP = 1.5f; /* body-roll.kp */
static const float BODY_ROLL_KP_2 = 2.0f; /* body_roll.kp */
static const float BODY_ROLL_MAX = 0.17453292f; /* body_roll.max, rad */
static const float EVIL____DEFINE_X_1____KP = 1e-07f; /* evil_/_#define X 1_/_.kp, s_/_int y; */

#endif /* TEETER_CONTROLLER_H */
`
	if got != want {
		t.Fatalf("header:\n%s\nwant:\n%s", got, want)
	}
	// The C rules checked by hand above: an identifier is [A-Za-z_][A-Za-z0-9_]*
	// and a comment ends at the first "*/" (ISO C11, 6.4.2.1 and 6.4.9);
	// checked again mechanically so that a change of wording cannot hide a
	// break-out.
	for _, line := range strings.Split(got, "\n") {
		if i := strings.Index(line, "*/"); i >= 0 && i != len(line)-2 {
			t.Errorf("a comment ends before the end of line %q", line)
		}
		if strings.HasPrefix(line, "#") && !strings.HasPrefix(line, "#define TEETER_") && !strings.HasPrefix(line, "#ifndef TEETER_") && !strings.HasPrefix(line, "#endif") {
			t.Errorf("unexpected preprocessor line %q", line)
		}
	}
	if again := string(CHeader(params, 200, "robot */ file\n#include <evil.h>")); again != got {
		t.Fatal("exporting twice gave different bytes")
	}
}

func TestGraphCHeaderFile(t *testing.T) {
	g := build(t, tunedText, []string{"y"}, nil)
	file := filepath.Join(t.TempDir(), "gains.h")
	if err := g.WriteCHeader(file, "tuned.yaml"); err != nil {
		t.Fatal(err)
	}
	data, _ := os.ReadFile(file)
	// 10 deg = 0.17453292 rad as a float (pi/18, NIST SP 811 for the degree).
	for _, want := range []string{"static const float BODY_ROLL_KP = 2.0f; /* body_roll.kp */",
		"static const float BODY_ROLL_MAX = 0.17453292f; /* body_roll.max, rad */",
		"static const float BODY_ROLL_KI = 0.5f; /* body_roll.ki, 1/s */",
		"static const float SPLIT_ANKLE = 0.4f; /* split.ankle */"} {
		if !strings.Contains(string(data), want) {
			t.Errorf("header lacks %q", want)
		}
	}
}

func TestGainsJSONForm(t *testing.T) {
	// The layout of SCHEMA.md's gain set file, written out by hand: two-space
	// indent, paths sorted, numbers in strconv's shortest 'g' form (Go
	// documentation: 1e-05 rather than 0.00001).
	gs := GainSet{Rate: 200, Gains: []Gain{{Path: "b.ki", Value: 1e-05}, {Path: "a.kp", Value: 2.5}}}
	want := `{
  "format": "teeter-gains",
  "version": 1,
  "rate": "200 Hz",
  "gains": {
    "a.kp": 2.5,
    "b.ki": 1e-05
  }
}
`
	if got := string(MarshalGainsJSON(gs)); got != want {
		t.Errorf("JSON form\n got:\n%s\nwant:\n%s", got, want)
	}
	empty := "{\n  \"format\": \"teeter-gains\",\n  \"version\": 1,\n  \"rate\": \"0 Hz\",\n  \"gains\": {}\n}\n"
	if got := string(MarshalGainsJSON(GainSet{})); got != empty {
		t.Errorf("empty set\n got:\n%s\nwant:\n%s", got, empty)
	}
}

func TestWriteGainsRefusesNonFinite(t *testing.T) {
	// JSON has no NaN (RFC 8259, section 6) and the gain reader takes only
	// finite numbers, so such a file could not be read back.
	file := filepath.Join(t.TempDir(), "g.json")
	err := WriteGains(file, GainSet{Rate: 200, Gains: []Gain{{Path: "a.kp", Value: math.NaN()}}})
	if err == nil || !strings.Contains(err.Error(), "a.kp") {
		t.Fatalf("WriteGains with a NaN gain: %v, want an error naming a.kp", err)
	}
	if _, serr := os.Stat(file); serr == nil {
		t.Error("a file was written anyway")
	}
}
