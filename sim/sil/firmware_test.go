package sil_test

import (
	"errors"
	"math"
	"os/exec"
	"path/filepath"
	"testing"

	"teeter/control"
	"teeter/models"
	"teeter/sim"
	"teeter/sim/rig"
	"teeter/sim/sil"
)

// buildFirmware writes the frontal robot's built-in controller as C with the
// program-in-the-loop main and compiles it as the README says.
func buildFirmware(t *testing.T, r *rig.Rig, double bool) string {
	t.Helper()
	cc, err := exec.LookPath("cc")
	if err != nil {
		t.Skip("no C compiler (make test installs gcc)")
	}
	g, err := r.Controller()
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	opt := control.COptions{Double: double, Channels: models.Channels(r.Robot), Units: models.ChannelUnits(r.Robot), Actuators: models.ActuatorNames(r.Robot)}
	if err := g.WriteC(dir, opt); err != nil {
		t.Fatal(err)
	}
	if err := control.WriteSILMain(dir); err != nil {
		t.Fatal(err)
	}
	bin := filepath.Join(dir, "ctl")
	srcs, _ := filepath.Glob(filepath.Join(dir, "*.c"))
	args := append([]string{"-std=c99", "-O2"}, srcs...)
	if out, err := exec.Command(cc, append(args, "-o", bin, "-lm")...).CombinedOutput(); err != nil {
		t.Fatalf("cc: %v\n%s", err, out)
	}
	return bin
}

// run runs a plant for d seconds and returns its torso tilt trace and
// whether it fell.
func run(t *testing.T, p *sim.Plant, d float64) ([]float64, bool) {
	t.Helper()
	if err := p.RunFor(d); err != nil && !errors.Is(err, sim.ErrFallen) {
		t.Fatal(err)
	}
	_, fell := p.Fall()
	return p.Recorder().Column("torso_tilt"), fell
}

func TestGeneratedFirmwareInTheLoop(t *testing.T) {
	// The generated module is proven equal to the graph tick by tick by the
	// parity test; here it drives the robot through the pipe: the same run
	// as with the Go graph, to 0.01 deg at every recorded row in double
	// (issue 13's bound), and the same fall verdict in float, where the
	// float rounding may make the traces part over 20 s.
	const duration = 20
	r, err := rig.Load("builtin:frontal", "", "")
	if err != nil {
		t.Fatal(err)
	}
	opt := sim.Options{Seed: 1, RecordCapacity: 10000, ControlRate: r.ControlRate()}
	p, _, err := r.Build(opt)
	if err != nil {
		t.Fatal(err)
	}
	goTilt, goFell := run(t, p, duration)
	if goFell {
		t.Fatal("the built-in controller let the robot fall; nothing to compare")
	}
	for _, double := range []bool{true, false} {
		c, err := sil.Start(buildFirmware(t, r, double), models.Channels(r.Robot), models.ChannelUnits(r.Robot), models.ActuatorNames(r.Robot), r.ControlRate(), sil.Options{})
		if err != nil {
			t.Fatal(err)
		}
		p, err := sim.New(r.Robot, c, opt)
		if err != nil {
			t.Fatal(err)
		}
		tilt, fell := run(t, p, duration)
		if err := c.Close(); err != nil {
			t.Error(err)
		}
		if fell != goFell {
			t.Errorf("double %v: fell %v, the Go controller %v", double, fell, goFell)
		}
		if len(tilt) != len(goTilt) {
			t.Fatalf("double %v: %d rows, the Go run %d", double, len(tilt), len(goTilt))
		}
		worst := 0.0
		for i := range tilt {
			worst = math.Max(worst, math.Abs(tilt[i]-goTilt[i]))
		}
		t.Logf("double %v: largest torso tilt difference over %d rows: %.3g deg", double, len(tilt), worst*180/math.Pi)
		if double && worst > 0.01*math.Pi/180 {
			t.Errorf("the torso tilt parts from the Go run's by %.4f deg", worst*180/math.Pi)
		}
	}
}
