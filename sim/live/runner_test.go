package live

import (
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync"
	"testing"

	"teeter/models"
	"teeter/sim"
)

// fakePlant is a point mass on a spring, x” = -kp*x, stepped with
// semi-implicit Euler at dt; it counts as fallen past |x| = 1 and blows up
// (reports an error) when x is NaN. Simple enough to check by hand.
type fakePlant struct {
	t, x, v  float64
	dt       float64
	kp       *float64
	kpSeen   float64 // the gain used by the last tick
	fallAt   float64
	fallen   bool
	poisoned bool
	schedule []sim.Shove // as last given to Schedule
}

type fakeSnap struct {
	T, X  float64
	Links []float64 // a slice, so that sharing a snapshot would show as a race
}

func (p *fakePlant) Step() error {
	if p.poisoned {
		return errors.New("blew up: x is not finite")
	}
	if p.x == 42 {
		panic("the fake plant panics at x = 42")
	}
	p.kpSeen = *p.kp
	p.v += -p.kpSeen * p.x * p.dt
	p.x += p.v * p.dt
	p.t += p.dt
	if !p.fallen && math.Abs(p.x) > 1 {
		p.fallen, p.fallAt = true, p.t
	}
	return nil
}
func (p *fakePlant) Time() float64 { return p.t }
func (p *fakePlant) Shove(s sim.Shove) error {
	if s.Link != "mass" {
		return fmt.Errorf("no link %q", s.Link)
	}
	p.v += s.Impulse.X // unit mass
	if math.IsNaN(s.Impulse.X) {
		p.poisoned = true
	}
	return nil
}
func (p *fakePlant) Schedule(list []sim.Shove) error {
	for _, s := range list {
		if s.Link != "mass" {
			return fmt.Errorf("no link %q", s.Link)
		}
	}
	p.schedule = list
	return nil
}
func (p *fakePlant) Snapshot(dst *fakeSnap) {
	dst.T, dst.X = p.t, p.x
	dst.Links = append(dst.Links[:0], p.x, p.v)
}
func (p *fakePlant) Fall() (bool, string, float64) {
	if p.fallen {
		return true, "x beyond 1 m", p.fallAt
	}
	return false, "", 0
}
func (p *fakePlant) SignalNames() []string { return []string{"x", "v", "kp"} }
func (p *fakePlant) SignalUnits() []string { return []string{"m", "m/s", "1/s^2"} }
func (p *fakePlant) Signals(dst []float64) { dst[0], dst[1], dst[2] = p.x, p.v, p.kpSeen }

type fakeTuner struct{ kp *float64 }

func (f fakeTuner) Get(path string) (float64, error) {
	if path != "spring.kp" {
		return 0, fmt.Errorf("no parameter %q", path)
	}
	return *f.kp, nil
}
func (f fakeTuner) Set(path string, v float64) error {
	if path != "spring.kp" {
		return fmt.Errorf("no parameter %q", path)
	}
	*f.kp = v
	return nil
}

// newFake builds from the robot: the starting offset is Ground.Tilt (a field
// borrowed for the test) and the gain starts at 4.
func newFake(t *testing.T) (*Runner[fakeSnap], *[]*fakePlant) {
	t.Helper()
	var mu sync.Mutex
	built := &[]*fakePlant{}
	cfg := Config[fakeSnap]{
		Robot: &models.Robot{Name: "fake", Ground: models.Ground{Tilt: 0.1}},
		Build: func(r *models.Robot) (Plant[fakeSnap], Tuner, error) {
			kp := 4.0
			p := &fakePlant{x: r.Ground.Tilt, dt: 0.01, kp: &kp}
			mu.Lock()
			*built = append(*built, p)
			mu.Unlock()
			return p, fakeTuner{&kp}, nil
		},
		SetParam: func(r *models.Robot, path string, v float64) error {
			if path != "start" {
				return fmt.Errorf("unknown parameter %q", path)
			}
			r.Ground.Tilt = v
			return nil
		},
		TraceSeconds: 5,
		TraceRate:    100,
	}
	run, err := New(cfg)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(run.Close)
	return run, built
}

func must(t *testing.T, c <-chan error) {
	t.Helper()
	if err := <-c; err != nil {
		t.Fatal(err)
	}
}

func TestStepIsOneTickAndGainAppliesAtNextTick(t *testing.T) {
	run, _ := newFake(t)
	must(t, run.StepOnce())
	// One tick of semi-implicit Euler from x0 = 0.1, v0 = 0, kp = 4, dt = 0.01:
	// v1 = -kp*x0*dt = -0.004, x1 = x0 + v1*dt = 0.09996 (worked by hand).
	s := run.Latest()
	if math.Abs(s.T-0.01) > 1e-12 || math.Abs(s.X-0.09996) > 1e-12 {
		t.Fatalf("after one step t=%g x=%g, want 0.01 and 0.09996", s.T, s.X)
	}
	must(t, run.SetGain("spring.kp", 9))
	if v, err := run.Gain("spring.kp"); err != nil || v != 9 {
		t.Fatalf("gain read back %g, %v", v, err)
	}
	must(t, run.StepOnce())
	var tr Trace
	run.Recent(&tr, 1, []int{2})
	if got := tr.Values[0][len(tr.Values[0])-1]; got != 9 {
		t.Fatalf("the tick after SetGain used kp=%g, want 9", got)
	}
	if err := <-run.SetGain("spring.nope", 1); err == nil {
		t.Fatal("an unknown gain was accepted")
	}
}

func TestSetParamRebuildsKeepsGainsAndSaysSo(t *testing.T) {
	run, built := newFake(t)
	must(t, run.SetGain("spring.kp", 2.5))
	must(t, run.StepOnce())
	must(t, run.StepOnce())
	must(t, run.SetParam("start", 0.3))
	st := run.Status()
	if st.Restarts != 1 || st.Notice == "" || st.Time != 0 {
		t.Fatalf("status after a rebuild: %+v", st)
	}
	if s := run.Latest(); s.X != 0.3 {
		t.Fatalf("rebuilt plant starts at %g, want the new 0.3", s.X)
	}
	if v, _ := run.Gain("spring.kp"); v != 2.5 {
		t.Fatalf("gain after rebuild %g, want the kept 2.5", v)
	}
	if len(*built) != 2 {
		t.Fatalf("%d plants built, want 2", len(*built))
	}
	if err := <-run.SetParam("nothing", 1); err == nil {
		t.Fatal("an unknown robot parameter was accepted")
	}
	if run.Status().Restarts != 1 {
		t.Fatal("a refused parameter counted as a restart")
	}
}

func TestFallIsReportedAndStopsTheRun(t *testing.T) {
	run, _ := newFake(t)
	must(t, run.SetSpeed(0))
	must(t, run.Shove(sim.Shove{Link: "mass", Impulse: models.Vec2{X: 50}}))
	must(t, run.Run())
	for !run.Status().Fallen {
		runtime.Gosched()
	}
	st := run.Status()
	if st.FallReason == "" || st.FallTime <= 0 {
		t.Fatalf("fall without reason or time: %+v", st)
	}
	// A run stops at the fall: stepping the paused runner changes nothing.
	for run.Status().Running {
		runtime.Gosched()
	}
	if err := <-run.Run(); err == nil {
		t.Fatal("a fallen run started again without a reset")
	}
	must(t, run.Reset())
	if st := run.Status(); st.Fallen || st.Time != 0 {
		t.Fatalf("after reset: %+v", st)
	}
	if err := <-run.Shove(sim.Shove{Link: "wing"}); err == nil {
		t.Fatal("a shove on a missing link was accepted")
	}
}

func TestBlowUpIsReportedNotPanicked(t *testing.T) {
	run, _ := newFake(t)
	must(t, run.Shove(sim.Shove{Link: "mass", Impulse: models.Vec2{X: math.NaN()}}))
	if err := <-run.StepOnce(); err == nil {
		t.Fatal("a blow-up was not reported by the step")
	}
	if run.Status().Err == nil {
		t.Fatal("a blow-up is not in the status")
	}
	if err := <-run.Run(); err == nil {
		t.Fatal("a blown-up run started again without a reset")
	}
	must(t, run.Reset())
	if run.Status().Err != nil {
		t.Fatal("reset kept the error")
	}
}

func TestTraceWindowAndReference(t *testing.T) {
	run, _ := newFake(t)
	for range 300 { // 3 s at 10 ms
		must(t, run.StepOnce())
	}
	var tr Trace
	run.Recent(&tr, 1, []int{0, 1})
	// Samples every 10 ms (the trace rate equals the tick rate), so a 1 s
	// window holds 100 or 101 of them depending on the edge.
	if n := len(tr.Time); n < 100 || n > 101 {
		t.Fatalf("1 s window holds %d samples, want 100 or 101", n)
	}
	if tr.Time[0] < 2-1e-9 || math.Abs(tr.Time[len(tr.Time)-1]-3) > 1e-9 {
		t.Fatalf("window spans %g..%g, want 2..3", tr.Time[0], tr.Time[len(tr.Time)-1])
	}
	// The spring's analytic motion x = x0 cos(2t) is followed closely at this dt.
	last := tr.Values[0][len(tr.Values[0])-1]
	if want := 0.1 * math.Cos(2*3); math.Abs(last-want) > 2e-3 {
		t.Fatalf("x(3 s) = %g, want about %g (x0 cos(w t), w = sqrt(kp))", last, want)
	}
	run.PinReference()
	must(t, run.SetGain("spring.kp", 1))
	must(t, run.Reset())
	must(t, run.StepOnce())
	var ref Trace
	if !run.ReferenceTrace(&ref, 0, []int{0}) {
		t.Fatal("no reference after pinning")
	}
	// The ring holds 5 s at 100 Hz, so the whole 3 s pinned run is there.
	if n := len(ref.Time); n != 301 {
		t.Fatalf("reference holds %d samples, want 301 (t = 0 .. 3 s)", n)
	}
	run.Recent(&tr, 10, []int{0})
	if len(tr.Time) != 2 {
		t.Fatalf("new run holds %d samples, want 2 (start and one tick)", len(tr.Time))
	}
	run.ClearReference()
	if run.ReferenceTrace(&ref, 0, []int{0}) {
		t.Fatal("reference still there after clearing")
	}
}

func TestRollingWrapsAround(t *testing.T) {
	r := newRolling([]string{"a"}, 4)
	for i := range 10 {
		r.add(float64(i), []float64{float64(i * 10)})
	}
	var ts []float64
	var cols [][]float64
	r.copyRange(7, []int{0}, &ts, &cols)
	if len(ts) != 3 || ts[0] != 7 || ts[2] != 9 || cols[0][0] != 70 || cols[0][2] != 90 {
		t.Fatalf("got %v %v, want times 7 8 9 and values 70 80 90", ts, cols)
	}
	r.copyRange(-1, []int{0, 5}, &ts, &cols)
	if len(ts) != 4 || ts[0] != 6 || len(cols[1]) != 0 {
		t.Fatalf("got %v %v, want the last four samples and nothing for a bad column", ts, cols)
	}
}

// TestConcurrentUse runs the simulation while one goroutine reads
// snapshots and traces and another sends commands; go test -race checks
// the hand-over.
func TestConcurrentUse(t *testing.T) {
	run, _ := newFake(t)
	must(t, run.SetSpeed(0))
	must(t, run.Run())
	stop := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(2)
	go func() {
		defer wg.Done()
		var tr, ref Trace
		for {
			select {
			case <-stop:
				return
			default:
			}
			s := run.Latest()
			if len(s.Links) == 2 && s.Links[0] != s.X {
				t.Error("snapshot torn: links and x disagree")
				return
			}
			run.Recent(&tr, 2, []int{0, 1, 2})
			run.ReferenceTrace(&ref, 0, []int{0})
			_ = run.Status()
		}
	}()
	go func() {
		defer wg.Done()
		for i := 0; ; i++ {
			select {
			case <-stop:
				return
			default:
			}
			switch i % 6 {
			case 0:
				<-run.SetGain("spring.kp", float64(1+i%5))
			case 1:
				<-run.Shove(sim.Shove{Link: "mass", Impulse: models.Vec2{X: 0.01}})
			case 2:
				run.PinReference()
			case 3:
				<-run.Pause()
			case 4:
				<-run.Reset()
			case 5:
				<-run.Run()
			}
		}
	}()
	// Let both goroutines work until the simulation has made some progress
	// a number of times over (reset sets time back to zero, so count rounds).
	seen := 0
	for last := uint64(0); seen < 60; {
		if v := run.Status().Version; v != last {
			last = v
			seen++
		}
		runtime.Gosched()
	}
	close(stop)
	wg.Wait()
}

func TestScheduleGoesToThisPlantAndEveryRebuiltOne(t *testing.T) {
	// The plant times the shoves (sim's tests check it); the runner hands
	// the list on, now and after every rebuild of the same robot, and keeps
	// the old list when the plant refuses a new one.
	run, built := newFake(t)
	list := []sim.Shove{{At: 0.05, Link: "mass", Impulse: models.Vec2{X: 1}}}
	must(t, run.Schedule(list))
	must(t, run.StepOnce())
	if got := (*built)[0].schedule; len(got) != 1 || got[0] != list[0] {
		t.Fatalf("the running plant was given %+v, want %+v", got, list)
	}
	if err := <-run.Schedule([]sim.Shove{{At: 1, Link: "nope"}}); err == nil {
		t.Fatal("a schedule the plant refused was accepted")
	}
	must(t, run.Reset())
	must(t, run.SetParam("start", 0.2))
	for i, p := range (*built)[1:] {
		if got := p.schedule; len(got) != 1 || got[0] != list[0] {
			t.Fatalf("rebuilt plant %d was given %+v, want %+v", i+1, got, list)
		}
	}
	// Another robot starts with no schedule, as with no gains.
	must(t, run.SetRobot(&models.Robot{Name: "other"}))
	if got := (*built)[len(*built)-1].schedule; len(got) != 0 {
		t.Fatalf("a new robot was given the old schedule %+v", got)
	}
}

func TestAPanickingPlantStopsTheRunWithAnError(t *testing.T) {
	run, _ := newFake(t)
	must(t, run.SetParam("start", 42))
	if err := <-run.StepOnce(); err == nil {
		t.Fatal("a panic in the plant was not reported")
	}
	if st := run.Status(); st.Err == nil || st.Running {
		t.Fatalf("status after a panic: %+v", st)
	}
	must(t, run.SetParam("start", 0.1))
	must(t, run.StepOnce())
}

func TestTickAllocatesNothing(t *testing.T) {
	run, _ := newFake(t)
	// The hot loop (a tick with its trace sample and a publish) must not
	// allocate (project rule); the fake plant allocates nothing itself.
	// Measured inside the runner's goroutine, which owns the plant.
	var allocs float64
	must(t, run.send(func() error {
		allocs = testing.AllocsPerRun(200, func() {
			run.tick()
			run.publish()
		})
		return nil
	}))
	if allocs != 0 {
		t.Fatalf("a tick allocates %g times", allocs)
	}
}

func TestSignalUnitsAreThePlants(t *testing.T) {
	run, _ := newFake(t)
	names, units := run.SignalNames(), run.SignalUnits()
	if want := []string{"m", "m/s", "1/s^2"}; len(names) != len(units) || fmt.Sprint(units) != fmt.Sprint(want) {
		t.Fatalf("signals %v have units %v, want the plant's %v", names, units, want)
	}
}

// closingPlant is a fake plant that holds a resource, such as a controller
// program, and counts how often it is closed.
type closingPlant struct {
	fakePlant
	closed int
}

func (p *closingPlant) Close() error { p.closed++; return nil }

func TestRebuildsCloseThePlantTheyReplace(t *testing.T) {
	// Every plant built holds a process (io.Closer: Close releases what
	// the value holds): a reset or a rebuild closes the one it replaces,
	// once, and leaves the running one open; Close ends the last one.
	var built []*closingPlant
	run, err := New(Config[fakeSnap]{
		Robot: &models.Robot{Name: "fake"},
		Build: func(r *models.Robot) (Plant[fakeSnap], Tuner, error) {
			kp := 4.0
			p := &closingPlant{fakePlant: fakePlant{dt: 0.01, kp: &kp}}
			built = append(built, p)
			return p, fakeTuner{&kp}, nil
		},
		SetParam: func(r *models.Robot, path string, v float64) error { r.Ground.Tilt = v; return nil },
	})
	if err != nil {
		t.Fatal(err)
	}
	must(t, run.Reset())
	must(t, run.SetParam("start", 0.2))
	must(t, run.SetRobot(&models.Robot{Name: "other"}))
	run.Close()
	if len(built) != 4 {
		t.Fatalf("%d plants built, want 4 (New, Reset, SetParam, SetRobot)", len(built))
	}
	for i, p := range built {
		if p.closed != 1 {
			t.Errorf("plant %d closed %d times, want once", i, p.closed)
		}
	}
}
