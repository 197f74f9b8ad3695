package sil_test

import (
	"bytes"
	"errors"
	"math"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
)

// The parity test of issue 13: the sensor readings of a 30 s run of a robot
// under shoves, recorded from the plant, go through the Go graph and
// through the generated C (float and double) tick by tick, with the run's
// requests and its mid-run gain change at the same ticks. Every actuator
// command must agree within 1e-4 (float) and 1e-9 (double) of full scale
// (commands are in [-1, 1]) on every tick. The Go graph is the reference;
// its blocks are checked against closed forms in the control package.

// stateProbe routes a sequencer's state output to one more command, so
// that its state and transitions are compared as the commands are: 0.05 per
// state keeps twelve states inside [-1, 1].
const stateProbe = `
    - {name: parity_state_probe, kind: gain, k: 0.05, input: stepper.state}
    - {name: parity_state_out, kind: actuator, actuator: parity_state_probe, input: parity_state_probe}
`

type parityCase struct {
	model, controller string
	shoves            []string
	// between runs is done to the graph at its time, s: a request or a
	// parameter change.
	between []parityStep
	probe   bool // the controller has a sequencer named stepper
}

type parityStep struct {
	at          float64
	block, what string // a request, or "" and a parameter path
	value       float64
}

// recorder runs the graph in the plant and keeps what it was given.
type recorder struct {
	g      *control.Graph
	script []string // harness commands (control/testdata/cgen/harness.c)
	pend   []string // commands to go before the next tick
	ticks  int
	sent   [][]float64 // the commands of each tick
}

func (r *recorder) Reset() { r.g.Reset() }
func (r *recorder) Tick(now float64, readings, commands []float64) {
	r.script = append(r.script, r.pend...)
	r.pend = r.pend[:0]
	var b strings.Builder
	b.WriteString("t " + strconv.FormatFloat(now, 'g', -1, 64))
	for _, x := range readings {
		b.WriteString(" " + strconv.FormatFloat(x, 'g', -1, 64))
	}
	r.script = append(r.script, b.String())
	r.g.Tick(now, readings, commands)
	r.ticks++
	r.sent = append(r.sent, append([]float64(nil), commands...))
}

func TestParityWithRecordedRuns(t *testing.T) {
	gcc, err := exec.LookPath("gcc")
	if err != nil {
		t.Skip("gcc is not installed (make test installs it): the C module cannot be compiled here")
	}
	cases := []parityCase{
		{
			model: "builtin:frontal", controller: "builtin:frontal_stepping", probe: true,
			shoves: []string{"at=4s,impulse=1.5N*s,dir=left", "at=11s,impulse=1.5N*s,dir=right", "at=23s,impulse=2N*s,dir=left"},
			between: []parityStep{
				{at: 0.5, block: "stepper", what: "start"}, // as the window's start button
				{at: 15, what: "body_loop.kp", value: 1.5},
				{at: 15, what: "leg_angle_left.ki", value: 2.5},
				{at: 15, what: "stepper.shift_left.ramp", value: 0.75},
				{at: 20, block: "stepper", what: "stop"},
				{at: 26, block: "stepper", what: "start"},
			},
		},
		{
			model:  "builtin:sagittal",
			shoves: []string{"at=3s,impulse=2N*s,dir=back", "at=12s,impulse=2N*s,dir=forward", "at=22s,impulse=1.5N*s,dir=back"},
			between: []parityStep{
				{at: 15, what: "body_loop.kp", value: 1.25},
				{at: 15, what: "body_loop.kd", value: 0.25},
				{at: 15, what: "ballast_loop.kp", value: 40},
			},
		},
	}
	for _, pc := range cases {
		t.Run(filepath.Base(pc.model), func(t *testing.T) {
			r, err := rig.Load(pc.model, pc.controller, "")
			if err != nil {
				t.Fatal(err)
			}
			script, sent := record(t, r, pc)
			spec, actuators := replaySpec(t, r, pc)
			channels := models.Channels(r.Robot)
			goOut := replayGo(t, spec, channels, actuators, script)
			checkReplay(t, sent, goOut, pc.probe)
			for _, double := range []bool{false, true} {
				tol := 1e-4
				if double {
					tol = 1e-9
				}
				g, err := control.Build(spec, channels, actuators)
				if err != nil {
					t.Fatal(err)
				}
				dir := t.TempDir()
				opt := control.COptions{Double: double, Channels: channels, Units: models.ChannelUnits(r.Robot), Actuators: actuators}
				if err := g.WriteC(dir, opt); err != nil {
					t.Fatal(err)
				}
				cOut := runHarness(t, gcc, dir, script)
				worst := compareCommands(t, goOut, cOut, tol)
				t.Logf("double %v: largest command difference over %d ticks: %.3g (tolerance %g)", double, countTicks(script), worst, tol)
			}
		})
	}
}

// record runs the robot for 30 s with the case's shoves and steps and
// returns the harness script of what the graph was given and the commands
// it sent.
func record(t *testing.T, r *rig.Rig, pc parityCase) ([]string, [][]float64) {
	t.Helper()
	g, err := r.Controller()
	if err != nil {
		t.Fatal(err)
	}
	opt := sim.Options{Seed: 5, ControlRate: r.ControlRate()}
	for _, s := range pc.shoves {
		sh, err := sim.ParseShove(s)
		if err != nil {
			t.Fatal(err)
		}
		opt.Shoves = append(opt.Shoves, sh)
	}
	rec := &recorder{g: g}
	p, err := sim.New(r.Robot, rec, opt)
	if err != nil {
		t.Fatal(err)
	}
	params := g.Params()
	done := 0.0
	for _, st := range append(pc.between, parityStep{at: 30}) {
		if err := p.RunFor(st.at - done); err != nil {
			if errors.Is(err, sim.ErrFallen) {
				t.Fatalf("the robot fell (%v): the shoves are too hard for a fair trace", err)
			}
			t.Fatal(err)
		}
		done = st.at
		switch {
		case st.what == "":
		case st.block != "":
			if err := g.Request(st.block, st.what); err != nil {
				t.Fatal(err)
			}
			rec.pend = append(rec.pend, "e "+st.block+" "+st.what)
		default:
			if err := g.Set(st.what, st.value); err != nil {
				t.Fatal(err)
			}
			for i, pi := range params {
				if pi.Path == st.what {
					// the value is exact as a float, so float C is given it too
					rec.pend = append(rec.pend, "p "+strconv.Itoa(i)+" "+strconv.FormatFloat(st.value, 'g', -1, 64))
				}
			}
		}
	}
	if rec.ticks < 30*int(r.ControlRate()) {
		t.Fatalf("only %d ticks recorded", rec.ticks)
	}
	return rec.script, rec.sent
}

// checkReplay checks that the trace is faithful, the replayed graph giving
// the run's commands exactly, and that the stepping went through its
// states, so that the comparison covers transitions.
func checkReplay(t *testing.T, sent, replayed [][]float64, probe bool) {
	t.Helper()
	states := map[float64]bool{}
	for k := range sent {
		for i, u := range sent[k] {
			if replayed[k][i] != u {
				t.Fatalf("tick %d: the replayed graph sent %v to actuator %d, the run %v", k, replayed[k][i], i, u)
			}
		}
		if probe {
			states[replayed[k][len(sent[k])]] = true
		}
	}
	if probe {
		t.Logf("the sequencer went through %d of its states", len(states))
	}
	if probe && len(states) < 8 {
		t.Errorf("the sequencer went through %d states; a fair trace steps through most of its twelve", len(states))
	}
}

// replaySpec is the case's controller, with the sequencer state probe when
// it has one, and the actuators it drives.
func replaySpec(t *testing.T, r *rig.Rig, pc parityCase) (*control.Spec, []string) {
	t.Helper()
	actuators := models.ActuatorNames(r.Robot)
	if !pc.probe {
		return r.Spec, actuators
	}
	src, err := control.BuiltinSource(strings.TrimPrefix(pc.controller, "builtin:"))
	if err != nil {
		t.Fatal(err)
	}
	spec, err := control.ParseBytes("probe.yaml", append(bytes.TrimRight(src, "\n"), stateProbe...))
	if err != nil {
		t.Fatal(err)
	}
	return spec, append(actuators, "parity_state_probe")
}

// replayGo answers the script from a fresh Go graph, as the harness does.
func replayGo(t *testing.T, spec *control.Spec, channels, actuators []string, script []string) [][]float64 {
	t.Helper()
	g, err := control.Build(spec, channels, actuators)
	if err != nil {
		t.Fatal(err)
	}
	params := g.Params()
	in, cmds := make([]float64, len(channels)), make([]float64, len(actuators))
	var out [][]float64
	for _, line := range script {
		f := strings.Fields(line)
		switch f[0] {
		case "t":
			now, _ := strconv.ParseFloat(f[1], 64)
			for i := range in {
				in[i], _ = strconv.ParseFloat(f[2+i], 64)
			}
			g.Tick(now, in, cmds)
			out = append(out, append([]float64(nil), cmds...))
		case "e":
			if err := g.Request(f[1], f[2]); err != nil {
				t.Fatal(err)
			}
		case "p":
			i, _ := strconv.Atoi(f[1])
			v, _ := strconv.ParseFloat(f[2], 64)
			if err := g.Set(params[i].Path, v); err != nil {
				t.Fatal(err)
			}
		}
	}
	return out
}

// runHarness compiles the module in dir with the control package's test
// harness under the strictest flags and answers the script with it.
func runHarness(t *testing.T, gcc, dir string, script []string) [][]float64 {
	t.Helper()
	bin := filepath.Join(dir, "harness")
	args := []string{"-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic", "-O1", "-I", dir,
		filepath.Join(dir, control.CSourceFile), "../../control/testdata/cgen/harness.c", "-o", bin, "-lm"}
	if out, err := exec.Command(gcc, args...).CombinedOutput(); err != nil {
		t.Fatalf("gcc: %v\n%s", err, out)
	}
	cmd := exec.Command(bin)
	cmd.Stdin = strings.NewReader(strings.Join(script, "\n") + "\n")
	text, err := cmd.Output()
	if err != nil {
		t.Fatalf("harness: %v", err)
	}
	var out [][]float64
	for _, line := range strings.Split(strings.TrimSpace(string(text)), "\n") {
		f := strings.Fields(line)
		switch f[0] {
		case "c":
			row := make([]float64, len(f)-1)
			for i := range row {
				row[i], _ = strconv.ParseFloat(f[i+1], 64)
			}
			out = append(out, row)
		case "r":
			if f[1] != "0" {
				t.Fatalf("the harness refused a request or a parameter change: %s", line)
			}
		}
	}
	return out
}

func compareCommands(t *testing.T, goOut, cOut [][]float64, tol float64) float64 {
	t.Helper()
	if len(goOut) != len(cOut) {
		t.Fatalf("the C answered %d ticks, Go %d", len(cOut), len(goOut))
	}
	worst, bad := 0.0, 0
	for k := range goOut {
		for i := range goOut[k] {
			d := math.Abs(goOut[k][i] - cOut[k][i])
			if !(d <= tol) {
				if bad++; bad <= 5 {
					t.Errorf("tick %d, command %d: C %v, Go %v (tolerance %g)", k, i, cOut[k][i], goOut[k][i], tol)
				}
			}
			worst = math.Max(worst, d)
		}
	}
	return worst
}

func countTicks(script []string) int {
	n := 0
	for _, l := range script {
		if strings.HasPrefix(l, "t ") {
			n++
		}
	}
	return n
}
