package sil

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"strings"
	"sync"
	"syscall"
	"time"
)

// process is one run of the program, with pipes of our own so that reads
// and writes can have deadlines.
type process struct {
	cmd    *exec.Cmd
	in     *os.File // the program's standard input, our end
	out    *os.File // the program's standard output, our end
	stderr tail
	done   chan struct{} // closed once the program has exited
	err    error         // Wait's result, once done is closed
}

func startProcess(program string) (*process, error) {
	inR, inW, err := os.Pipe()
	if err != nil {
		return nil, err
	}
	outR, outW, err := os.Pipe()
	if err != nil {
		inR.Close()
		inW.Close()
		return nil, err
	}
	p := &process{cmd: exec.Command(program), in: inW, out: outR, done: make(chan struct{})}
	p.cmd.Stdin, p.cmd.Stdout, p.cmd.Stderr = inR, outW, &p.stderr
	// A child the program leaves behind may hold its stderr open.
	p.cmd.WaitDelay = closeGrace
	err = p.cmd.Start()
	inR.Close()
	outW.Close()
	if err != nil {
		inW.Close()
		outR.Close()
		return nil, err
	}
	go func() {
		p.err = p.cmd.Wait()
		close(p.done)
	}()
	return p, nil
}

func (p *process) write(b []byte, deadline time.Time) error {
	if err := p.in.SetWriteDeadline(deadline); err != nil {
		return err
	}
	_, err := p.in.Write(b)
	return err
}

// kill ends the program at once and waits for it.
func (p *process) kill() {
	p.cmd.Process.Kill()
	<-p.done
	p.in.Close()
	p.out.Close()
}

// stop closes the program's input and gives it closeGrace to exit before
// killing it. It reports a kill or a failure exit status.
func (p *process) stop() error {
	p.in.Close()
	var err error
	select {
	case <-p.done:
		if p.err != nil {
			err = fmt.Errorf("%s%s", p.cmd.ProcessState, p.stderr.last())
		}
	case <-time.After(closeGrace):
		err = fmt.Errorf("still running %v after its input closed; killed", closeGrace)
		p.cmd.Process.Kill()
		<-p.done
	}
	p.out.Close()
	return err
}

// exited waits up to closeGrace for the program to exit and describes how
// it ended, with the end of its stderr; "" if it is still running.
func (p *process) exited() string {
	select {
	case <-p.done:
		return fmt.Sprintf("the program exited (%s)%s", p.cmd.ProcessState, p.stderr.last())
	case <-time.After(closeGrace):
		return ""
	}
}

var errLongLine = fmt.Errorf("a line longer than %d bytes", maxLine)

// readLine returns the next line from the program, without its "\n" (and a
// "\r" before it). The line is valid until the next call.
func (c *Controller) readLine(deadline time.Time) ([]byte, error) {
	for {
		if i := bytes.IndexByte(c.rbuf[c.rpos:c.rend], '\n'); i >= 0 {
			line := c.rbuf[c.rpos : c.rpos+i]
			c.rpos += i + 1
			return bytes.TrimSuffix(line, []byte{'\r'}), nil
		}
		if c.rpos > 0 {
			c.rend = copy(c.rbuf, c.rbuf[c.rpos:c.rend])
			c.rpos = 0
		}
		if c.rend == len(c.rbuf) {
			return nil, errLongLine
		}
		if err := c.proc.out.SetReadDeadline(deadline); err != nil {
			return nil, err
		}
		n, err := c.proc.out.Read(c.rbuf[c.rend:])
		c.rend += n
		if err != nil && n == 0 {
			return nil, err
		}
	}
}

// ioFailure says what went wrong: the program's exit, a timeout (late is
// what did not come in time) or the pipe's own error.
func (c *Controller) ioFailure(late string, err error) string {
	switch {
	case errors.Is(err, os.ErrDeadlineExceeded):
		return fmt.Sprintf("%s within %v: the program hangs or is too slow%s", late, c.timeout, c.proc.stderr.last())
	case errors.Is(err, io.EOF):
		if s := c.proc.exited(); s != "" {
			return s
		}
		return "the program closed its standard output"
	case errors.Is(err, syscall.EPIPE):
		if s := c.proc.exited(); s != "" {
			return s
		}
		return "the program closed its standard input"
	}
	return err.Error()
}

// tail keeps the end of what the program writes to its standard error.
type tail struct {
	mu sync.Mutex
	b  []byte
}

const (
	tailBytes = 4096
	tailLines = 5
)

func (t *tail) Write(b []byte) (int, error) {
	t.mu.Lock()
	defer t.mu.Unlock()
	t.b = append(t.b, b...)
	if len(t.b) > 2*tailBytes {
		t.b = append(t.b[:0], t.b[len(t.b)-tailBytes:]...)
	}
	return len(b), nil
}

// last is the last few lines of stderr as the end of a message, or "".
func (t *tail) last() string {
	t.mu.Lock()
	defer t.mu.Unlock()
	lines := strings.Split(strings.TrimRight(string(t.b), "\n"), "\n")
	if len(lines) == 1 && lines[0] == "" {
		return ""
	}
	lines = lines[max(0, len(lines)-tailLines):]
	return "; its standard error ends:\n    " + strings.Join(lines, "\n    ")
}
