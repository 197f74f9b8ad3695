// Package sil runs a controller program in the loop over the line protocol
// (PROTOCOL.md): teeter starts the program, sends it the sensor readings once
// per control tick on its standard input and reads the actuator commands back
// from its standard output. A *Controller is a sim.Controller, so firmware
// code, in C or anything else, can drive the simulated robot.
package sil

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"
)

// DefaultTimeout is how long teeter waits for the program's ready line and
// for each answer when Options.Timeout is 0.
const DefaultTimeout = time.Second

// closeGrace is how long Close waits for the program to exit on its own
// after its input is closed (PROTOCOL.md, step 4).
const closeGrace = time.Second

// maxLine bounds a line from the program; a longer one is an error rather
// than a growing buffer.
const maxLine = 1 << 16

// Options tune how a program is run.
type Options struct {
	// Timeout bounds the wait for the ready line and for each answer; 0
	// means DefaultTimeout.
	Timeout time.Duration
}

// Controller is a controller program in the loop. One goroutine ticks it;
// Request and Set may be called from any goroutine and take effect at the
// next tick, as a control.Graph's do.
type Controller struct {
	program   string
	actuators []string
	header    []byte
	timeout   time.Duration

	proc  *process
	ticks int64 // ticks since the program started
	err   error

	wbuf       []byte
	rbuf       []byte
	rpos, rend int // unread bytes of rbuf

	mu      sync.Mutex
	pending []byte  // "e" and "p" lines for the next tick
	params  []param // every parameter ever set, re-sent after a restart
	waiting atomic.Bool
}

type param struct {
	path  string
	value float64
}

// Start starts program and exchanges the header (PROTOCOL.md): channels
// with their units (models.Channels and models.ChannelUnits of the robot),
// the actuators (models.ActuatorNames) and the control rate in Hz. It
// returns once the program has answered ready.
func Start(program string, channels, units, actuators []string, rate float64, opt Options) (*Controller, error) {
	if len(units) != len(channels) {
		return nil, fmt.Errorf("sil: %d units for %d channels", len(units), len(channels))
	}
	if !(rate > 0) || math.IsInf(rate, 1) {
		return nil, fmt.Errorf("sil: control rate %g Hz is not positive", rate)
	}
	h := fmt.Appendf(nil, "teeter-sil 1 %s %d %d\nin", strconv.FormatFloat(rate, 'g', -1, 64), len(channels), len(actuators))
	for i, ch := range channels {
		u := units[i]
		if u == "" {
			u = "1"
		}
		if err := checkToken("channel", ch+":"+u); err != nil {
			return nil, err
		}
		h = append(h, ' ')
		h = append(h, ch...)
		h = append(h, ':')
		h = append(h, u...)
	}
	h = append(h, "\nout"...)
	for _, a := range actuators {
		if err := checkToken("actuator", a); err != nil {
			return nil, err
		}
		h = append(h, ' ')
		h = append(h, a...)
	}
	h = append(h, '\n')
	c := &Controller{
		program:   program,
		actuators: actuators,
		header:    h,
		timeout:   opt.Timeout,
		rbuf:      make([]byte, maxLine),
	}
	if c.timeout <= 0 {
		c.timeout = DefaultTimeout
	}
	// A tick line: "t", the time and the readings, each at most 24 bytes
	// plus a space.
	c.wbuf = make([]byte, 0, 32+25*len(channels))
	if err := c.start(); err != nil {
		return nil, err
	}
	return c, nil
}

// checkToken refuses a name that would break a protocol line.
func checkToken(what, s string) error {
	if s == "" || strings.ContainsFunc(s, func(r rune) bool { return r <= ' ' || r > '~' }) {
		return fmt.Errorf("sil: %s %q cannot go in a protocol line (empty, or a space or control character)", what, s)
	}
	return nil
}

// start runs the program and waits for its ready line.
func (c *Controller) start() error {
	p, err := startProcess(c.program)
	if err != nil {
		return fmt.Errorf("controller program %s: %w", c.program, err)
	}
	c.proc, c.ticks, c.rpos, c.rend = p, 0, 0, 0
	// A controller dropped without Close (a plant let go) takes its
	// program with it, as a dropped os.File closes; killing a program that
	// has already exited does nothing.
	runtime.AddCleanup(c, func(p *process) { p.cmd.Process.Kill() }, p)
	fail := func(what string) error {
		p.kill()
		return fmt.Errorf("controller program %s: at start: %s", c.program, what)
	}
	deadline := time.Now().Add(c.timeout)
	if err := p.write(c.header, deadline); err != nil {
		return fail(c.ioFailure("it did not read the header", err))
	}
	line, err := c.readLine(deadline)
	if err != nil {
		return fail(c.ioFailure("no ready line", err))
	}
	if msg, ok := bytes.CutPrefix(line, []byte("error ")); ok {
		return fail(fmt.Sprintf("the program refused the robot: %s", msg))
	}
	if string(line) != "ready" {
		return fail(fmt.Sprintf("expected \"ready\", got %s", quote(line)))
	}
	return nil
}

// Request sends an event to a sequencer block of the program ("e BLOCK
// EVENT") before the next tick. teeter cannot check the names: the program
// knows its blocks.
func (c *Controller) Request(block, event string) error {
	if err := checkToken("block", block); err != nil {
		return err
	}
	if err := checkToken("event", event); err != nil {
		return err
	}
	c.mu.Lock()
	c.pending = fmt.Appendf(c.pending, "e %s %s\n", block, event)
	c.waiting.Store(true)
	c.mu.Unlock()
	return nil
}

// Set sends a parameter change ("p PATH VALUE") before the next tick. It is
// re-sent after Reset restarts the program, as a graph keeps its parameters
// over a reset.
func (c *Controller) Set(path string, v float64) error {
	if err := checkToken("parameter", path); err != nil {
		return err
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("%s: %g is not a finite number", path, v)
	}
	c.mu.Lock()
	defer c.mu.Unlock()
	c.pending = appendParam(c.pending, path, v)
	c.waiting.Store(true)
	for i := range c.params {
		if c.params[i].path == path {
			c.params[i].value = v
			return nil
		}
	}
	c.params = append(c.params, param{path, v})
	return nil
}

func appendParam(b []byte, path string, v float64) []byte {
	b = append(b, "p "...)
	b = append(b, path...)
	b = append(b, ' ')
	b = strconv.AppendFloat(b, v, 'g', -1, 64)
	return append(b, '\n')
}

// Reset brings the program to its state at power-on by starting it again,
// unless it has not been ticked since it started. Pending event requests are
// dropped and every parameter set so far is sent again before the first
// tick, as control.Graph.Reset keeps parameters and drops requests. A
// program that fails to start again fails the next tick.
func (c *Controller) Reset() {
	c.mu.Lock()
	c.pending = c.pending[:0]
	for _, p := range c.params {
		c.pending = appendParam(c.pending, p.path, p.value)
	}
	c.waiting.Store(len(c.pending) > 0)
	c.mu.Unlock()
	if c.err == nil && c.ticks == 0 {
		return
	}
	c.proc.stop()
	c.err = c.start()
}

// Tick sends the readings and reads the commands. Tick has no error return
// (sim.Controller): a failure panics with an error naming the tick, the
// simulated time and what was wrong, which the plant reports as its
// controller's failure; Err keeps it.
func (c *Controller) Tick(now float64, readings, commands []float64) {
	if c.err != nil {
		panic(c.err)
	}
	c.ticks++
	if err := c.exchange(now, readings, commands); err != nil {
		c.proc.kill()
		c.err = fmt.Errorf("controller program %s: tick %d at %.4f s: %s", c.program, c.ticks, now, err)
		panic(c.err)
	}
}

// exchange is one tick's lines: pending requests and changes, the readings,
// then the answer. Errors are described for a person.
func (c *Controller) exchange(now float64, readings, commands []float64) error {
	b := c.wbuf[:0]
	if c.waiting.Load() {
		c.mu.Lock()
		b = append(b, c.pending...)
		c.pending = c.pending[:0]
		c.waiting.Store(false)
		c.mu.Unlock()
	}
	b = append(b, 't', ' ')
	b = strconv.AppendFloat(b, now, 'g', -1, 64)
	for _, v := range readings {
		b = append(b, ' ')
		b = strconv.AppendFloat(b, v, 'g', -1, 64)
	}
	b = append(b, '\n')
	c.wbuf = b
	deadline := time.Now().Add(c.timeout)
	if err := c.proc.write(b, deadline); err != nil {
		return errors.New(c.ioFailure("it did not read its input", err))
	}
	line, err := c.readLine(deadline)
	if err != nil {
		return errors.New(c.ioFailure("no answer", err))
	}
	return c.parse(line, commands)
}

// parse reads "c U1 ... UM" into commands without allocating.
func (c *Controller) parse(line []byte, commands []float64) error {
	tag, rest := nextField(line)
	if string(tag) != "c" {
		if msg, ok := bytes.CutPrefix(line, []byte("error ")); ok {
			return fmt.Errorf("the program reported an error: %s", msg)
		}
		return fmt.Errorf("answer %s does not start with \"c \"", quote(line))
	}
	m := len(c.actuators)
	for i := range m {
		var f []byte
		if f, rest = nextField(rest); f == nil {
			return fmt.Errorf("answer %s has %d of the %d commands (%s)", quote(line), i, m, strings.Join(c.actuators, " "))
		}
		v, err := strconv.ParseFloat(string(f), 64)
		switch {
		case err != nil:
			return fmt.Errorf("answer %s: command %d of %d (%s) %s is not a number", quote(line), i+1, m, c.actuators[i], quote(f))
		case math.IsNaN(v) || math.IsInf(v, 0):
			return fmt.Errorf("answer %s: command %d of %d (%s) is %g", quote(line), i+1, m, c.actuators[i], v)
		}
		if i < len(commands) {
			commands[i] = v
		}
	}
	if f, _ := nextField(rest); f != nil {
		return fmt.Errorf("answer %s has more than %d commands (%s)", quote(line), m, strings.Join(c.actuators, " "))
	}
	return nil
}

// nextField splits the first space-separated field off b; nil when none is
// left.
func nextField(b []byte) (field, rest []byte) {
	for len(b) > 0 && b[0] == ' ' {
		b = b[1:]
	}
	if len(b) == 0 {
		return nil, nil
	}
	i := bytes.IndexByte(b, ' ')
	if i < 0 {
		return b, nil
	}
	return b[:i], b[i:]
}

// quote shows a line from the program, cut short when long.
func quote(b []byte) string {
	const most = 120
	if len(b) > most {
		return strconv.Quote(string(b[:most])) + "..."
	}
	return strconv.Quote(string(b))
}

// Err is the first failure of the program, or nil.
func (c *Controller) Err() error { return c.err }

// Close closes the program's input and waits for it to exit, killing it
// after a second. It reports a program that had to be killed or that exited
// with a failure status after a session that went well.
func (c *Controller) Close() error {
	if c.proc == nil {
		return nil
	}
	err := c.proc.stop()
	c.proc = nil
	if c.err != nil {
		return nil // the failure is already reported, and the program killed
	}
	if err != nil {
		return fmt.Errorf("controller program %s: at the end: %w", c.program, err)
	}
	return nil
}
