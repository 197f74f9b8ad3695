package control

import (
	"bytes"
	"errors"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// A hand-written module with the generated module's API (the lead's spec of
// teeter_controller.h): two inputs, two outputs, one parameter and one
// sequencer event. hip = kp*tilt + (1 once "stepper start" was requested),
// knee = the load reading as it arrived; kp starts at 2 and takes [0, 100].
const standInHeader = `#ifndef TEETER_CONTROLLER_H
#define TEETER_CONTROLLER_H
#ifndef TEETER_REAL
#define TEETER_REAL float
#endif
typedef TEETER_REAL teeter_real;
#define TEETER_RATE_HZ 200.0
#define TEETER_NUM_INPUTS 2
#define TEETER_NUM_OUTPUTS 2
#define TEETER_NUM_PARAMS 1
extern const char *const teeter_input_names[TEETER_NUM_INPUTS];
extern const char *const teeter_input_units[TEETER_NUM_INPUTS];
extern const char *const teeter_output_names[TEETER_NUM_OUTPUTS];
extern const char *const teeter_param_paths[TEETER_NUM_PARAMS];
void teeter_init(void);
void teeter_tick(double now_s, const teeter_real inputs[], teeter_real outputs[]);
int  teeter_request(const char *block, const char *event);
int  teeter_param_index(const char *path);
teeter_real teeter_get_param(int index);
int  teeter_set_param(int index, teeter_real value);
#endif
`

const standInModule = `#include <string.h>
#include "teeter_controller.h"
const char *const teeter_input_names[TEETER_NUM_INPUTS] = {"torso_imu.tilt", "load_toe.force"};
const char *const teeter_input_units[TEETER_NUM_INPUTS] = {"rad", "N"};
const char *const teeter_output_names[TEETER_NUM_OUTPUTS] = {"hip", "knee"};
const char *const teeter_param_paths[TEETER_NUM_PARAMS] = {"loop.kp"};
static teeter_real kp, kp_next;
static int started, start_next;
void teeter_init(void) { kp = kp_next = 2; started = start_next = 0; }
void teeter_tick(double now_s, const teeter_real inputs[], teeter_real outputs[])
{
    (void)now_s;
    kp = kp_next;
    started = start_next;
    outputs[0] = kp * inputs[0] + (teeter_real)started;
    outputs[1] = inputs[1];
}
int teeter_request(const char *block, const char *event)
{
    if (strcmp(block, "stepper") != 0 || strcmp(event, "start") != 0) return -1;
    start_next = 1;
    return 0;
}
int teeter_param_index(const char *path) { return strcmp(path, "loop.kp") == 0 ? 0 : -1; }
teeter_real teeter_get_param(int index) { return index == 0 ? kp : 0; }
int teeter_set_param(int index, teeter_real value)
{
    if (index != 0 || !(value >= 0 && value <= 100)) return -1;
    kp_next = value;
    return 0;
}
`

const standInHeaderLines = "teeter-sil 1 200 2 2\nin torso_imu.tilt:rad load_toe.force:N\nout hip knee\n"

// buildSILMain compiles the main around the stand-in module with the
// strictest flags the firmware module is held to (issue 13: C99, all
// warnings as errors, pedantic).
func buildSILMain(t *testing.T, real string) string {
	t.Helper()
	gcc, err := exec.LookPath("gcc")
	if err != nil {
		t.Skip("no gcc (make test installs it)")
	}
	dir := t.TempDir()
	for name, text := range map[string]string{"teeter_controller.h": standInHeader, "teeter_controller.c": standInModule} {
		if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := WriteSILMain(dir); err != nil {
		t.Fatal(err)
	}
	bin := filepath.Join(dir, "ctl")
	args := []string{"-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic", "-DTEETER_REAL=" + real,
		filepath.Join(dir, SILMainFile), filepath.Join(dir, "teeter_controller.c"), "-o", bin, "-lm"}
	if out, err := exec.Command(gcc, args...).CombinedOutput(); err != nil {
		t.Fatalf("gcc: %v\n%s", err, out)
	}
	return bin
}

// session runs the program on a script and returns its answers and exit
// status.
func session(t *testing.T, bin, script string) ([]string, int) {
	t.Helper()
	cmd := exec.Command(bin)
	cmd.Stdin = strings.NewReader(script)
	var out bytes.Buffer
	cmd.Stdout = &out
	err := cmd.Run()
	status := 0
	if ee := (*exec.ExitError)(nil); errors.As(err, &ee) {
		status = ee.ExitCode()
	} else if err != nil {
		t.Fatal(err)
	}
	return strings.Split(strings.TrimSuffix(out.String(), "\n"), "\n"), status
}

func TestSILMainSession(t *testing.T) {
	script := standInHeaderLines + "t 0 0.5 0.1\np loop.kp 3\ne stepper start\nt 0.005 0.5 0.1\n"
	// 0.1 as the nearest float is 0.100000001490116..., as the nearest
	// double 0.1000000000000000055511...; printed with 9 and 17 significant
	// digits, the counts that read back to the same number (IEEE 754-2008,
	// 5.12.2; from memory).
	for real, load := range map[string]string{"float": "0.100000001", "double": "0.10000000000000001"} {
		t.Run(real, func(t *testing.T) {
			got, status := session(t, buildSILMain(t, real), script)
			// kp 2 * 0.5; then kp 3 * 0.5 + 1 for the start request.
			want := []string{"ready", "c 1 " + load, "c 2.5 " + load}
			if strings.Join(got, "|") != strings.Join(want, "|") || status != 0 {
				t.Errorf("answers %q, exit status %d; want %q, 0", got, status, want)
			}
		})
	}
}

func TestSILMainRefuses(t *testing.T) {
	bin := buildSILMain(t, "float")
	for _, tc := range []struct{ script, want string }{
		{"teeter-sil 1 200 3 2\n", "2 sensor channels and 2 actuators, this one has 3 and 2"},
		{"teeter-sil 1 100 2 2\n", "runs at 200 Hz, teeter ticks it at 100 Hz"},
		{"teeter-sil 2 200 2 2\n", "protocol version 1"},
		{"hello\n", "expected a teeter-sil header"},
		{"teeter-sil 1 200 2 2\nin pot_hip.position:rad load_toe.force:N\n", "its in 1 is torso_imu.tilt"},
		{"teeter-sil 1 200 2 2\nin torso_imu.tilt:rad\n", "fewer names"},
		{"teeter-sil 1 200 2 2\nin torso_imu.tilt:rad load_toe.force:N\nout hip knee ankle\n", "more names"},
		{standInHeaderLines + "p loop.kd 1\n", "no parameter loop.kd"},
		{standInHeaderLines + "p loop.kp 1000\n", "parameter loop.kp does not take 1000"},
		{standInHeaderLines + "p loop.kp fast\n", "parameter loop.kp does not take fast"},
		{standInHeaderLines + "e stepper stop\n", "no sequencer block stepper with an event stop"},
		{standInHeaderLines + "t 0 0.5\n", "1 readings in the tick line, want 2"},
		{standInHeaderLines + "t 0 0.5 1 2\n", "more than 2 readings"},
		{standInHeaderLines + "x\n", "a line this program does not know: x"},
	} {
		got, status := session(t, bin, tc.script)
		last := got[len(got)-1]
		if status != 1 || !strings.HasPrefix(last, "error ") || !strings.Contains(last, tc.want) {
			t.Errorf("%q: answered %q with exit status %d, want an error saying %q", tc.script, got, status, tc.want)
		}
	}
}
