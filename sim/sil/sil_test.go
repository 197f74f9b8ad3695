package sil

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"testing"
	"time"

	"teeter/models"
	"teeter/sim"
)

var _ sim.Controller = (*Controller)(nil)

var (
	testChannels  = []string{"torso_imu.tilt", "torso_imu.rate", "load_toe.force"}
	testUnits     = []string{"rad", "rad/s", ""}
	testActuators = []string{"hip", "knee"}
)

// useHelper makes the test binary play the program of mode
// (helper_test.go) in the programs the test starts.
func useHelper(t testing.TB, mode string) {
	t.Setenv(helperEnv, mode)
	// The race detector's runtime waits a second at exit by default, which
	// would look like a program that does not exit when its input closes.
	t.Setenv("GORACE", "atexit_sleep_ms=0")
}

// startHelper starts the test binary as the program of the given mode
// (helper_test.go) and returns it with the file it logs its input to.
func startHelper(t testing.TB, mode string, opt Options) (*Controller, string, error) {
	t.Helper()
	log := filepath.Join(t.TempDir(), "input.log")
	useHelper(t, mode)
	t.Setenv(logEnv, log)
	c, err := Start(os.Args[0], testChannels, testUnits, testActuators, 200, opt)
	if c != nil {
		t.Cleanup(func() { c.Close() })
	}
	return c, log, err
}

func mustStart(t testing.TB, mode string) (*Controller, string) {
	t.Helper()
	c, log, err := startHelper(t, mode, Options{})
	if err != nil {
		t.Fatal(err)
	}
	return c, log
}

// tick runs one tick and returns its failure, caught from the panic.
func tick(c *Controller, now float64, readings, commands []float64) (err error) {
	defer func() {
		if e := recover(); e != nil {
			err = e.(error)
		}
	}()
	c.Tick(now, readings, commands)
	return nil
}

func readLog(t *testing.T, log string) []string {
	t.Helper()
	b, err := os.ReadFile(log)
	if err != nil {
		t.Fatal(err)
	}
	return strings.Split(strings.TrimSuffix(string(b), "\n"), "\n")
}

func TestHeaderAndExactNumbers(t *testing.T) {
	c, log := mustStart(t, "echo")
	// Numbers that only an exact decimal form survives: a third, a
	// subnormal, and the two sides of 0.1's rounding (strconv: 'g' with
	// precision -1 is the shortest form that parses back to the same
	// float64, Go's strconv documentation).
	readings := []float64{1.0 / 3, 5e-324, math.Nextafter(0.1, 1)}
	cmds := make([]float64, 2)
	if err := tick(c, 0.005, readings, cmds); err != nil {
		t.Fatal(err)
	}
	for i, v := range cmds {
		if v != readings[i] {
			t.Errorf("command %d: %v, sent %v: the number did not survive the round trip", i, v, readings[i])
		}
	}
	if err := c.Close(); err != nil {
		t.Fatal(err)
	}
	// The header and tick line as the protocol spec writes them
	// (PROTOCOL.md: a unitless channel takes "1").
	want := []string{
		"teeter-sil 1 200 3 2",
		"in torso_imu.tilt:rad torso_imu.rate:rad/s load_toe.force:1",
		"out hip knee",
		"t 0.005 0.3333333333333333 5e-324 0.10000000000000002",
	}
	if got := readLog(t, log); strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("the program read\n%s\nwant\n%s", strings.Join(got, "\n"), strings.Join(want, "\n"))
	}
}

func TestRequestAndSetGoBeforeTheTick(t *testing.T) {
	c, log := mustStart(t, "echo")
	cmds := make([]float64, 2)
	if err := tick(c, 0, []float64{1, 2, 3}, cmds); err != nil {
		t.Fatal(err)
	}
	if err := c.Set("gain", 2); err != nil {
		t.Fatal(err)
	}
	if err := c.Request("stepper", "start"); err != nil {
		t.Fatal(err)
	}
	if err := tick(c, 0.005, []float64{1, 2, 3}, cmds); err != nil {
		t.Fatal(err)
	}
	// The echo program answers gain*reading + events seen.
	if cmds[0] != 3 || cmds[1] != 5 {
		t.Errorf("commands %v after gain 2 and one event, want [3 5]", cmds)
	}
	c.Close()
	got := readLog(t, log)[4:]
	want := []string{"p gain 2", "e stepper start", "t 0.005 1 2 3"}
	if strings.Join(got, "|") != strings.Join(want, "|") {
		t.Errorf("the program read %q, want %q", got, want)
	}
	for _, bad := range []error{c.Set("two words", 1), c.Set("gain", math.NaN()), c.Request("stepper", "go\nt 0"), c.Request("", "start")} {
		if bad == nil {
			t.Error("a name or value that breaks a protocol line was accepted")
		}
	}
}

func TestResetRestartsTheProgram(t *testing.T) {
	c, log := mustStart(t, "count")
	cmds := make([]float64, 2)
	c.Reset() // not ticked yet: already at power-on, no restart
	if err := c.Set("gain", 2); err != nil {
		t.Fatal(err)
	}
	for want := 1.0; want <= 2; want++ {
		if err := tick(c, 0, nil, cmds); err != nil {
			t.Fatal(err)
		}
		if cmds[0] != want {
			t.Fatalf("tick %v: the program counted %v", want, cmds[0])
		}
	}
	c.Reset()
	if err := tick(c, 0, nil, cmds); err != nil {
		t.Fatal(err)
	}
	if cmds[0] != 1 {
		t.Errorf("after Reset the program counted %v ticks: not restarted", cmds[0])
	}
	c.Close()
	// One start before the ticks, one after Reset, and the parameter sent
	// to each, as a graph keeps its parameters over a reset.
	var headers, params int
	for _, l := range readLog(t, log) {
		if strings.HasPrefix(l, "teeter-sil ") {
			headers++
		}
		if l == "p gain 2" {
			params++
		}
	}
	if headers != 2 || params != 2 {
		t.Errorf("%d starts and %d parameter lines, want 2 and 2", headers, params)
	}
}

func TestStartFailures(t *testing.T) {
	for _, tc := range []struct {
		mode    string
		timeout time.Duration
		want    []string
	}{
		{"exit", 0, []string{"at start", "exited", "exit status 3", "no motor driver found"}},
		{"refuse", 0, []string{"at start", "refused", "this firmware drives 7 actuators"}},
		{"noready", 300 * time.Millisecond, []string{"at start", "no ready line within 300ms"}},
	} {
		t.Run(tc.mode, func(t *testing.T) {
			_, _, err := startHelper(t, tc.mode, Options{Timeout: tc.timeout})
			if err == nil {
				t.Fatal("started")
			}
			t.Log(err)
			for _, w := range tc.want {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("%q does not say %q", err, w)
				}
			}
		})
	}
	if _, err := Start(filepath.Join(t.TempDir(), "missing"), nil, nil, nil, 200, Options{}); err == nil || !strings.Contains(err.Error(), "missing") {
		t.Errorf("a missing program: %v", err)
	}
}

func TestTickFailures(t *testing.T) {
	for _, tc := range []struct {
		mode   string
		atTick int
		want   []string
	}{
		{"late-exit", 3, []string{"exited", "exit status 4", "watchdog tripped"}},
		{"garbage", 1, []string{`"hello world"`, `does not start with "c "`}},
		{"few", 1, []string{`"c 0.25"`, "has 1 of the 2 commands (hip knee)"}},
		{"many", 1, []string{"more than 2 commands"}},
		{"nan", 1, []string{"command 1 of 2 (hip) is NaN"}},
		{"word", 1, []string{`command 2 of 2 (knee) "fast" is not a number`}},
		{"hang", 3, []string{"no answer within 1s"}}, // the default timeout (PROTOCOL.md)
	} {
		t.Run(tc.mode, func(t *testing.T) {
			c, _ := mustStart(t, tc.mode)
			cmds := make([]float64, 2)
			var err error
			n := 0
			for err == nil && n < 5 {
				n++
				err = tick(c, float64(n-1)/200, []float64{0, 0, 0}, cmds)
			}
			if n != tc.atTick {
				t.Fatalf("failed at tick %d, want %d: %v", n, tc.atTick, err)
			}
			t.Log(err)
			at := fmt.Sprintf("tick %d at %.4f s", n, float64(n-1)/200)
			for _, w := range append(tc.want, at) {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("%q does not say %q", err, w)
				}
			}
			if c.Err() != err {
				t.Errorf("Err() = %v, want the first failure", c.Err())
			}
			if again := tick(c, 1, []float64{0, 0, 0}, cmds); again != err {
				t.Errorf("the tick after a failure: %v", again)
			}
		})
	}
}

func TestPlantReportsTheProgramsFailure(t *testing.T) {
	// The plant turns a controller's panic into ErrController with its
	// text (sim.Plant.Step); the run stops at the first tick.
	r, err := models.Load("builtin:pendulum")
	if err != nil {
		t.Fatal(err)
	}
	useHelper(t, "garbage")
	c, err := Start(os.Args[0], models.Channels(r), models.ChannelUnits(r), models.ActuatorNames(r), sim.DefaultControlRate, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	p, err := sim.New(r, c, sim.Options{})
	if err != nil {
		t.Fatal(err)
	}
	err = p.RunFor(1)
	if !errors.Is(err, sim.ErrController) || !strings.Contains(err.Error(), "tick 1 at 0.0000 s") || !strings.Contains(err.Error(), "hello world") {
		t.Errorf("run: %v", err)
	}
}

func TestSetFromAnotherGoroutine(t *testing.T) {
	// Run under -race: Set and Request while the owner ticks.
	c, _ := mustStart(t, "echo")
	cmds := make([]float64, 2)
	var wg sync.WaitGroup
	wg.Go(func() {
		for i := range 50 {
			c.Set("gain", float64(i))
			c.Request("stepper", "start")
		}
	})
	for range 50 {
		if err := tick(c, 0, []float64{1, 2, 3}, cmds); err != nil {
			t.Fatal(err)
		}
	}
	wg.Wait()
}

// frontalSize starts the echo program with as many channels and actuators
// as the frontal robot.
func frontalSize(t testing.TB) (c *Controller, readings, commands []float64) {
	r, err := models.Load("builtin:frontal")
	if err != nil {
		t.Fatal(err)
	}
	useHelper(t, "echo")
	c, err = Start(os.Args[0], models.Channels(r), models.ChannelUnits(r), models.ActuatorNames(r), 200, Options{})
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { c.Close() })
	readings = make([]float64, len(models.Channels(r)))
	for i := range readings {
		readings[i] = 0.1234567890123 * float64(i+1)
	}
	return c, readings, make([]float64, len(r.Actuators))
}

func TestTickAllocatesNothing(t *testing.T) {
	c, readings, cmds := frontalSize(t)
	now := 0.0
	allocs := testing.AllocsPerRun(200, func() {
		c.Tick(now, readings, cmds)
		now += 0.005
	})
	if allocs != 0 {
		t.Errorf("Tick allocates %v times per call", allocs)
	}
}

// BenchmarkExecTick is what the pipe costs per tick: one tick line to a
// program that answers at once, and its answer back, at the frontal robot's
// size (19 readings, 6 commands).
func BenchmarkExecTick(b *testing.B) {
	c, readings, cmds := frontalSize(b)
	now := 0.0
	for b.Loop() {
		c.Tick(now, readings, cmds)
		now += 0.005
	}
}

func TestDroppedControllerKillsItsProgram(t *testing.T) {
	// A plant let go without closing its controller (rig.Build's callers)
	// must not leave the program running: it is killed when collected.
	useHelper(t, "echo")
	c, err := Start(os.Args[0], testChannels, testUnits, testActuators, 200, Options{})
	if err != nil {
		t.Fatal(err)
	}
	done := c.proc.done
	c = nil
	for range 100 {
		runtime.GC()
		select {
		case <-done:
			return
		case <-time.After(20 * time.Millisecond):
		}
	}
	t.Fatal("the program of a dropped controller is still running")
}
