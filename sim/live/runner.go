// Package live runs one simulated robot and its controller in a goroutine of
// its own for the desktop window: run, pause, single step, reset, slow motion
// or as fast as possible, shoves, live gain changes, robot parameter changes
// (which rebuild the plant) and a pinned reference run.
//
// The window never waits for the simulation: it reads the latest snapshot
// and the recent trace through a mutex held only for a copy, and every
// command goes to the goroutine through a channel and takes effect before
// the next controller tick.
package live

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"sync"
	"time"

	"teeter/models"
	"teeter/sim"
)

// Plant is one simulated robot with its controller, advanced one controller
// tick at a time. Step reports a blow-up as an error; a fall shows in the
// snapshot.
type Plant[S any] interface {
	Step() error
	Time() float64
	Shove(sim.Shove) error
	// Schedule replaces the shoves given at set times that have not come
	// yet (sim.Plant.Schedule).
	Schedule([]sim.Shove) error
	// Snapshot fills dst with the current state for drawing.
	Snapshot(dst *S)
	// Fall reports whether the robot has fallen, why and when.
	Fall() (fallen bool, reason string, at float64)
	// SignalNames and Signals give the values recorded in the trace, and
	// SignalUnits the SI unit of each ("" for a pure number).
	SignalNames() []string
	SignalUnits() []string
	Signals(dst []float64)
}

// Tuner is the tunable side of a controller: a parameter by path, changed
// bumplessly between ticks.
type Tuner interface {
	Get(path string) (float64, error)
	Set(path string, v float64) error
}

// Build makes a fresh plant and its tuner from a robot description. A
// plant that holds something outside the process, such as a controller
// program, implements io.Closer: the runner closes it when it builds the
// next one or stops.
type Build[S any] func(robot *models.Robot) (Plant[S], Tuner, error)

// Config says what a Runner runs.
type Config[S any] struct {
	Robot *models.Robot
	Build Build[S]
	// SetParam changes one robot parameter by path, such as
	// "actuators.hip_left.backlash"; it must reject unknown paths and leave
	// the robot unchanged on error. Default: models.SetParam.
	SetParam func(r *models.Robot, path string, v float64) error
	// TraceSeconds is the length of the rolling trace (default 60 s) and
	// TraceRate its sample rate (default 200 Hz; samples are taken at
	// controller ticks, at most this often).
	TraceSeconds float64
	TraceRate    float64
}

// Status is what the window shows about the run.
type Status struct {
	Time    float64 // simulated time since the last reset, s
	Running bool
	Speed   float64 // wanted speed: 1 is real time, 0 as fast as possible
	// Achieved is the simulated seconds per wall second over the last frame.
	Achieved   float64
	Fallen     bool
	FallReason string
	FallTime   float64
	// Err is set when the simulation blew up or could not be built; the run
	// pauses and waits for a reset or a fix.
	Err error
	// Restarts counts rebuilds after robot parameter changes; Notice says
	// what happened last, for a status line.
	Restarts int
	Notice   string
	// Version grows every time a new snapshot or trace sample is published,
	// so the window redraws only when something changed.
	Version uint64
	// ReferencePinned says whether a reference run is held.
	ReferencePinned bool
}

// Runner owns a plant and runs it in its own goroutine.
type Runner[S any] struct {
	cmds chan command
	quit chan struct{}
	done chan struct{}

	mu       sync.Mutex
	status   Status
	names    []string
	units    []string
	trace    *rolling
	ref      *rolling
	fresh    *S // published by the goroutine, waiting for the reader
	hasFresh bool
	reader   *S // owned by the reader between calls to Latest

	// Owned by the goroutine.
	cfg      Config[S]
	robot    *models.Robot
	plant    Plant[S]
	tuner    Tuner
	gains    map[string]float64
	gainList []string // keys of gains in the order first set, for replay
	back     *S
	sample   []float64
	lastRec  float64
	running  bool
	speed    float64
	schedule []sim.Shove // given to every plant built
	// The pace: wall and simulated time when pacing began, and when the
	// achieved speed was last measured.
	wallStart, rateWall time.Time
	simStart, rateSim   float64
}

type command struct {
	apply func() error
	reply chan error
}

// New builds the plant and starts the goroutine, paused. Close stops it.
func New[S any](cfg Config[S]) (*Runner[S], error) {
	if cfg.Robot == nil || cfg.Build == nil {
		return nil, errors.New("live: a robot and a build function are needed")
	}
	if cfg.SetParam == nil {
		cfg.SetParam = models.SetParam
	}
	if cfg.TraceSeconds <= 0 {
		cfg.TraceSeconds = 60
	}
	if cfg.TraceRate <= 0 {
		cfg.TraceRate = 200
	}
	r := &Runner[S]{
		cmds:   make(chan command, 256),
		quit:   make(chan struct{}),
		done:   make(chan struct{}),
		cfg:    cfg,
		robot:  cfg.Robot,
		gains:  map[string]float64{},
		speed:  1,
		back:   new(S),
		fresh:  new(S),
		reader: new(S),
	}
	if err := r.rebuild(); err != nil {
		return nil, err
	}
	go r.loop()
	return r, nil
}

// Close stops the goroutine and waits for it.
func (r *Runner[S]) Close() {
	select {
	case <-r.quit:
	default:
		close(r.quit)
	}
	<-r.done
}

// rebuild makes a fresh plant from r.robot, replays the gains set so far and
// clears the live trace. It runs in the goroutine (or in New before it).
func (r *Runner[S]) rebuild() error {
	plant, tuner, err := r.cfg.Build(r.robot)
	if err != nil {
		return err
	}
	for _, path := range r.gainList {
		if tuner == nil {
			break
		}
		if err := tuner.Set(path, r.gains[path]); err != nil {
			closePlant(plant)
			return fmt.Errorf("gain %s: %w", path, err)
		}
	}
	names, units := plant.SignalNames(), plant.SignalUnits()
	notice := ""
	if err := plant.Schedule(r.schedule); err != nil {
		notice = fmt.Sprintf("scheduled shoves left out: %v", err)
	}
	if r.plant != nil {
		closePlant(r.plant)
	}
	r.plant, r.tuner = plant, tuner
	r.sample = make([]float64, len(names))
	r.lastRec = math.Inf(-1)
	capacity := int(r.cfg.TraceSeconds*r.cfg.TraceRate) + 1
	r.mu.Lock()
	if r.trace == nil || !slices.Equal(r.names, names) {
		r.trace = newRolling(names, capacity)
		if r.ref != nil && !slices.Equal(r.ref.names, names) {
			r.ref = nil
			r.status.ReferencePinned = false
		}
	} else {
		r.trace.clear()
	}
	r.names, r.units = names, units
	r.status.Time = plant.Time()
	r.status.Fallen, r.status.FallReason, r.status.FallTime = false, "", 0
	r.status.Err = nil
	if notice != "" {
		r.status.Notice = notice
	}
	r.mu.Unlock()
	r.record(true)
	r.publish()
	return nil
}

// closePlant ends a plant that holds something outside the process. Its
// error is dropped: the plant is no longer run, and a failure while it ran
// was reported then.
func closePlant[S any](p Plant[S]) {
	if c, ok := p.(io.Closer); ok {
		c.Close()
	}
}

// record adds one trace sample when one is due.
func (r *Runner[S]) record(force bool) {
	t := r.plant.Time()
	if !force && t-r.lastRec < 1/r.cfg.TraceRate-1e-9 {
		return
	}
	r.lastRec = t
	r.plant.Signals(r.sample)
	r.mu.Lock()
	r.trace.add(t, r.sample)
	r.mu.Unlock()
}

// publish hands a new snapshot and the status to the reader.
func (r *Runner[S]) publish() {
	r.plant.Snapshot(r.back)
	fallen, reason, at := r.plant.Fall()
	r.mu.Lock()
	r.back, r.fresh = r.fresh, r.back
	r.hasFresh = true
	r.status.Time = r.plant.Time()
	r.status.Running = r.running
	r.status.Speed = r.speed
	if fallen && !r.status.Fallen {
		r.status.Fallen, r.status.FallReason, r.status.FallTime = true, reason, at
	}
	r.status.Version++
	r.mu.Unlock()
}

// tick advances one controller tick and reports whether the run may go on.
// A panic in the plant or controller stops the run with an error instead
// of taking the program down.
func (r *Runner[S]) tick() (ok bool) {
	defer func() {
		if e := recover(); e != nil {
			r.stop(fmt.Errorf("simulation failed at %.4f s: %v", r.plant.Time(), e))
			ok = false
		}
	}()
	if err := r.plant.Step(); err != nil {
		r.stop(err)
		return false
	}
	r.record(false)
	if fallen, _, _ := r.plant.Fall(); fallen {
		r.running = false
		return false
	}
	return true
}

// frame is how often a running simulation publishes, and the most wall
// time one batch of steps may take before commands are looked at again.
const frame = 15 * time.Millisecond

func (r *Runner[S]) loop() {
	defer close(r.done)
	defer func() { closePlant(r.plant) }()
	timer := time.NewTimer(time.Hour)
	defer timer.Stop()
	for {
		if !r.running {
			if !r.await(nil) {
				return
			}
			continue
		}
		if !r.drain() {
			return
		}
		if !r.running {
			continue
		}
		begin := time.Now()
		target := r.runFrame(begin)
		r.publish()
		elapsed := time.Since(begin)
		r.measureSpeed()
		if r.speed > 0 && r.plant.Time() < target {
			// Behind real time: do not try to catch up later in a burst.
			r.restartClock()
		}
		if r.speed > 0 && elapsed < frame {
			timer.Reset(frame - elapsed)
			ok := r.await(timer.C)
			timer.Stop()
			if !ok {
				return
			}
		}
	}
}

// restartClock paces the run from now and the plant's time now.
func (r *Runner[S]) restartClock() {
	r.wallStart, r.simStart = time.Now(), r.plant.Time()
	r.rateWall, r.rateSim = r.wallStart, r.simStart
}

// obey runs a command and paces from there: it may have changed the speed
// or rebuilt the plant (time back to zero).
func (r *Runner[S]) obey(c command) {
	r.handle(c)
	r.restartClock()
}

// await waits for a command, which it runs, or for wake (nil: none). It
// reports false when the runner is closing.
func (r *Runner[S]) await(wake <-chan time.Time) bool {
	select {
	case <-r.quit:
		return false
	case c := <-r.cmds:
		r.obey(c)
	case <-wake:
	}
	return true
}

// drain runs every command waiting, without waiting for more. It reports
// false when the runner is closing.
func (r *Runner[S]) drain() bool {
	for {
		select {
		case <-r.quit:
			return false
		case c := <-r.cmds:
			r.obey(c)
		default:
			return true
		}
	}
}

// runFrame steps towards where the simulated time should be at the end of
// the frame begun at begin (as far as it can at speed 0) and returns that
// target. It stops early at the frame's end, a fall or a failure.
func (r *Runner[S]) runFrame(begin time.Time) (target float64) {
	deadline := begin.Add(frame)
	target = math.Inf(1)
	if r.speed > 0 {
		target = r.simStart + deadline.Sub(r.wallStart).Seconds()*r.speed
	}
	for steps := 1; r.plant.Time() < target && r.tick(); steps++ {
		// Look at the clock every few steps only: it costs more than a step.
		if steps%8 == 0 && time.Now().After(deadline) {
			break
		}
	}
	return target
}

// measureSpeed updates the achieved speed over about half a second of wall
// time, sleeps included.
func (r *Runner[S]) measureSpeed() {
	wall := time.Since(r.rateWall).Seconds()
	if wall < 0.5 {
		return
	}
	r.mu.Lock()
	r.status.Achieved = (r.plant.Time() - r.rateSim) / wall
	r.mu.Unlock()
	r.rateWall, r.rateSim = time.Now(), r.plant.Time()
}

func (r *Runner[S]) stop(err error) {
	r.running = false
	r.mu.Lock()
	r.status.Err = err
	r.mu.Unlock()
}

// handle runs one command; a panic in it becomes the command's error.
func (r *Runner[S]) handle(c command) {
	var err error
	func() {
		defer func() {
			if e := recover(); e != nil {
				err = fmt.Errorf("command failed: %v", e)
			}
		}()
		err = c.apply()
	}()
	if c.reply != nil {
		c.reply <- err
	}
}

// send queues a command; fn runs in the goroutine before the next tick.
func (r *Runner[S]) send(fn func() error) <-chan error {
	reply := make(chan error, 1)
	select {
	case r.cmds <- command{apply: fn, reply: reply}:
	case <-r.done:
		reply <- errors.New("live: runner closed")
	}
	return reply
}

// Run starts or resumes the run. A fallen or blown-up run stays stopped
// until it is reset.
func (r *Runner[S]) Run() <-chan error {
	return r.send(func() error {
		r.mu.Lock()
		st := r.status
		r.mu.Unlock()
		if st.Err != nil {
			return fmt.Errorf("the run stopped (%v); reset it first", st.Err)
		}
		if st.Fallen {
			return errors.New("the robot has fallen; reset it first")
		}
		r.running = true
		r.publish()
		return nil
	})
}

// Pause stops the run where it is.
func (r *Runner[S]) Pause() <-chan error {
	return r.send(func() error {
		r.running = false
		r.publish()
		return nil
	})
}

// StepOnce pauses and advances exactly one controller tick.
func (r *Runner[S]) StepOnce() <-chan error {
	return r.send(func() error {
		r.running = false
		r.mu.Lock()
		stopped := r.status.Err != nil || r.status.Fallen
		r.mu.Unlock()
		if stopped {
			r.publish()
			return errors.New("the run has stopped; reset it first")
		}
		r.tick()
		r.publish()
		r.mu.Lock()
		err := r.status.Err
		r.mu.Unlock()
		return err
	})
}

// Reset rebuilds the plant from the robot as it is now, keeping the gains,
// and pauses.
func (r *Runner[S]) Reset() <-chan error {
	return r.send(func() error {
		r.running = false
		return r.rebuild()
	})
}

// SetSpeed sets the simulated seconds per wall second: 0.1 to 10, or 0 for
// as fast as possible.
func (r *Runner[S]) SetSpeed(speed float64) <-chan error {
	return r.send(func() error {
		if math.IsNaN(speed) || speed < 0 || (speed > 0 && speed < 0.1) || speed > 10 {
			return fmt.Errorf("speed %g is out of range: 0.1 to 10, or 0 for as fast as possible", speed)
		}
		r.speed = speed
		r.publish()
		return nil
	})
}

// Shove gives the robot an impulse at the next tick; its At is ignored.
func (r *Runner[S]) Shove(s sim.Shove) <-chan error {
	return r.send(func() error {
		if err := r.plant.Shove(s); err != nil {
			return err
		}
		if !r.running {
			r.publish()
		}
		return nil
	})
}

// Schedule replaces the list of shoves given at set times of every run
// from the next reset on, and of this run for those not yet due. The
// plant schedules them; a list it refuses changes nothing.
func (r *Runner[S]) Schedule(shoves []sim.Shove) <-chan error {
	list := slices.Clone(shoves)
	return r.send(func() error {
		if err := r.plant.Schedule(list); err != nil {
			return err
		}
		r.schedule = list
		return nil
	})
}

// SetGain changes one controller parameter before the next tick. The value
// is kept across resets and rebuilds.
func (r *Runner[S]) SetGain(path string, v float64) <-chan error {
	return r.send(func() error {
		if r.tuner == nil {
			return errors.New("this controller has no tunable parameters")
		}
		if err := r.tuner.Set(path, v); err != nil {
			return err
		}
		if _, ok := r.gains[path]; !ok {
			r.gainList = append(r.gainList, path)
		}
		r.gains[path] = v
		return nil
	})
}

// Requester is a controller that takes latched event requests, such as
// "start" and "stop" for a sequencer block (a *control.Graph is one).
type Requester interface {
	Request(block, event string) error
}

// Request sends an event to a block of the controller before the next
// tick. The request belongs to the current run: a reset or rebuild starts
// the controller afresh.
func (r *Runner[S]) Request(block, event string) <-chan error {
	return r.send(func() error {
		q, ok := r.tuner.(Requester)
		if !ok {
			return errors.New("this controller takes no requests")
		}
		return q.Request(block, event)
	})
}

// SetParam changes one robot parameter; the plant is rebuilt with the gains
// kept, and the run restarts from the beginning (paused if it was paused).
func (r *Runner[S]) SetParam(path string, v float64) <-chan error {
	return r.send(func() error {
		next := r.robot.Clone()
		if err := r.cfg.SetParam(next, path, v); err != nil {
			return err
		}
		old := r.robot
		r.robot = next
		if err := r.rebuild(); err != nil {
			r.robot = old
			return fmt.Errorf("%s: %w", path, err)
		}
		r.mu.Lock()
		r.status.Restarts++
		r.status.Notice = fmt.Sprintf("%s changed: the run restarted", path)
		r.mu.Unlock()
		r.publish()
		return nil
	})
}

// SetRobot replaces the robot (a file was opened, or its controller was
// edited) and rebuilds, paused, with the new robot's own gains and no
// scheduled shoves: gains and shoves set before are forgotten. On error the
// old robot stays.
func (r *Runner[S]) SetRobot(robot *models.Robot) <-chan error {
	return r.send(func() error {
		old, oldGains, oldList, oldSchedule := r.robot, r.gains, r.gainList, r.schedule
		r.robot, r.gains, r.gainList, r.schedule = robot, map[string]float64{}, nil, nil
		if err := r.rebuild(); err != nil {
			r.robot, r.gains, r.gainList, r.schedule = old, oldGains, oldList, oldSchedule
			return err
		}
		r.running = false
		r.mu.Lock()
		r.status.Notice = "robot loaded: the run restarted"
		r.mu.Unlock()
		r.publish()
		return nil
	})
}

// Robot returns a copy of the robot as currently run. It waits for the
// goroutine, so it is for file saving, not for every frame.
func (r *Runner[S]) Robot() *models.Robot {
	var out *models.Robot
	<-r.send(func() error { out = r.robot.Clone(); return nil })
	return out
}

// Gain reads one controller parameter as currently run. It waits for the
// goroutine.
func (r *Runner[S]) Gain(path string) (float64, error) {
	var v float64
	err := <-r.send(func() error {
		if r.tuner == nil {
			return errors.New("this controller has no tunable parameters")
		}
		var err error
		v, err = r.tuner.Get(path)
		return err
	})
	return v, err
}

// PinReference keeps the current run's trace as the reference run, drawn
// behind the runs that follow.
func (r *Runner[S]) PinReference() {
	r.mu.Lock()
	defer r.mu.Unlock()
	ref := newRolling(r.trace.names, len(r.trace.time))
	copy(ref.time, r.trace.time)
	for i := range ref.cols {
		copy(ref.cols[i], r.trace.cols[i])
	}
	ref.head, ref.n = r.trace.head, r.trace.n
	r.ref = ref
	r.status.ReferencePinned = true
	r.status.Version++
}

// ClearReference drops the pinned reference run.
func (r *Runner[S]) ClearReference() {
	r.mu.Lock()
	r.ref = nil
	r.status.ReferencePinned = false
	r.status.Version++
	r.mu.Unlock()
}

// Status returns the run's status.
func (r *Runner[S]) Status() Status {
	r.mu.Lock()
	defer r.mu.Unlock()
	return r.status
}

// Latest returns the newest snapshot. The snapshot belongs to the caller
// until its next call of Latest; only one goroutine may call it.
func (r *Runner[S]) Latest() *S {
	r.mu.Lock()
	if r.hasFresh {
		r.reader, r.fresh = r.fresh, r.reader
		r.hasFresh = false
	}
	s := r.reader
	r.mu.Unlock()
	return s
}

// SignalNames lists the signals recorded in the trace.
func (r *Runner[S]) SignalNames() []string {
	r.mu.Lock()
	defer r.mu.Unlock()
	return append([]string(nil), r.names...)
}

// SignalUnits gives the SI unit of each signal, as the plant tells them.
func (r *Runner[S]) SignalUnits() []string {
	r.mu.Lock()
	defer r.mu.Unlock()
	return append([]string(nil), r.units...)
}

// Trace is a copy of part of a recorded run: sample times and the values
// of the signals asked for.
type Trace struct {
	Time   []float64
	Values [][]float64 // Values[k][i] is signal k at Time[i]
}

// Recent copies the samples of the last window seconds for the signals at
// the given indices (into SignalNames) into dst, reusing its memory.
func (r *Runner[S]) Recent(dst *Trace, window float64, signals []int) {
	r.mu.Lock()
	defer r.mu.Unlock()
	r.trace.copyRange(r.status.Time-window, signals, &dst.Time, &dst.Values)
}

// ReferenceTrace copies the pinned run's samples between from and the end
// of the pinned run; it reports false when no run is pinned.
func (r *Runner[S]) ReferenceTrace(dst *Trace, from float64, signals []int) bool {
	r.mu.Lock()
	defer r.mu.Unlock()
	if r.ref == nil {
		dst.Time, dst.Values = dst.Time[:0], dst.Values[:0]
		return false
	}
	r.ref.copyRange(from, signals, &dst.Time, &dst.Values)
	return true
}
