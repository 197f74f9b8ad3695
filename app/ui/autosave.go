package ui

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"time"

	"fyne.io/fyne/v2/dialog"

	"teeter/control"
	"teeter/models"
)

// Crash safety: each window keeps a copy of its session (the robot as
// edited, the gains, the robot parameter changes and the file it came from)
// in a directory of its own under the autosave directory, written on every
// change and every few seconds, and removes it when it closes normally.
// While the window lives it holds a lock on its directory; a directory found
// at the start with nobody holding its lock comes from a window that did
// not close normally, and is offered back. Another window still open keeps
// its lock, so it is never taken for a crash.

// AutosaveEnv names the environment variable that moves the autosave
// directory (tests use it).
const AutosaveEnv = "TEETER_AUTOSAVE_DIR"

// autosaveDir is $TEETER_AUTOSAVE_DIR, else teeter/autosave in the user's
// configuration directory.
func autosaveDir() string {
	if d := os.Getenv(AutosaveEnv); d != "" {
		return d
	}
	base, err := os.UserConfigDir()
	if err != nil {
		base = os.TempDir()
	}
	return filepath.Join(base, "teeter", "autosave")
}

const (
	sessionFile = "session.json" // written last: its presence marks a whole autosave
	robotFile   = "robot.yaml"
	gainsFile   = "gains.yaml"
	lockFile    = "lock"
)

// newSessionDir makes the window's own directory under root and takes its
// lock, held until the window closes or its process ends.
func newSessionDir(root string) (string, *os.File, error) {
	if err := os.MkdirAll(root, 0o755); err != nil {
		return "", nil, err
	}
	dir, err := os.MkdirTemp(root, "window-")
	if err != nil {
		return "", nil, err
	}
	lock, err := os.Create(filepath.Join(dir, lockFile))
	if err == nil {
		err = lockExclusive(lock)
	}
	if err != nil {
		os.RemoveAll(dir)
		return "", nil, err
	}
	return dir, lock, nil
}

// orphanSession finds the newest whole autosave under root whose window is
// gone (nobody holds its lock).
func orphanSession(root string) (dir string, s session, err error) {
	entries, err := os.ReadDir(root)
	if err != nil {
		if errors.Is(err, fs.ErrNotExist) {
			err = nil
		}
		return "", session{}, err
	}
	for _, e := range entries {
		d := filepath.Join(root, e.Name())
		if !e.IsDir() || heldByAWindow(filepath.Join(d, lockFile)) {
			continue
		}
		got, found, rerr := readSession(d)
		switch {
		case rerr != nil:
			err = rerr
		case found && (dir == "" || got.Saved.After(s.Saved)):
			dir, s = d, got
		}
	}
	if dir != "" {
		err = nil
	}
	return dir, s, err
}

// session is what session.json holds beside the robot and gain files.
type session struct {
	// Path is the robot file opened (or builtin:NAME), for Save.
	Path string `json:"path"`
	// Params are the robot parameter changes, in the order made (a group
	// path such as actuators.backlash before a member's own value).
	Params []sessionParam `json:"robot_params"`
	Saved  time.Time      `json:"saved"`
}

type sessionParam struct {
	Path  string  `json:"path"`
	Value float64 `json:"value"`
}

// autosave is one session to write.
type autosave struct {
	robot *models.Robot
	gains control.GainSet
	sess  session
}

// autosaver writes sessions in a goroutine of its own, so a slow disk never
// holds up the window; a newer session waiting replaces an older one.
type autosaver struct {
	dir     string
	lock    *os.File
	pending chan autosave
	quit    chan struct{}
	done    chan struct{}
}

func newAutosaver(root string) (*autosaver, error) {
	dir, lock, err := newSessionDir(root)
	if err != nil {
		return nil, err
	}
	a := &autosaver{dir: dir, lock: lock, pending: make(chan autosave, 1), quit: make(chan struct{}), done: make(chan struct{})}
	go a.loop()
	return a, nil
}

func (a *autosaver) loop() {
	defer close(a.done)
	defer a.lock.Close() // releases the lock
	for {
		select {
		case <-a.quit:
			return
		case s := <-a.pending:
			// A failed autosave is retried with the next change or tick;
			// there is nobody to tell in the middle of a drag.
			_ = writeSession(a.dir, s)
		}
	}
}

// queue hands a session to the goroutine; called from the UI thread only.
func (a *autosaver) queue(s autosave) {
	for {
		select {
		case a.pending <- s:
			return
		default:
			select {
			case <-a.pending: // drop the older one
			default:
			}
		}
	}
}

// closeClean stops the goroutine and removes the autosave: a normal exit.
func (a *autosaver) closeClean() {
	close(a.quit)
	<-a.done
	os.RemoveAll(a.dir)
}

func writeSession(dir string, s autosave) error {
	if err := models.SaveFile(filepath.Join(dir, robotFile), s.robot); err != nil {
		return err
	}
	if err := control.WriteGains(filepath.Join(dir, gainsFile), s.gains); err != nil {
		return err
	}
	data, err := json.MarshalIndent(s.sess, "", "  ")
	if err != nil {
		return err
	}
	return models.WriteFileAtomic(filepath.Join(dir, sessionFile), func(w io.Writer) error {
		_, err := w.Write(append(data, '\n'))
		return err
	})
}

// readSession reads an autosave left in dir, if there is one.
func readSession(dir string) (session, bool, error) {
	data, err := os.ReadFile(filepath.Join(dir, sessionFile))
	if errors.Is(err, fs.ErrNotExist) {
		return session{}, false, nil
	}
	if err != nil {
		return session{}, false, err
	}
	var s session
	if err := json.Unmarshal(data, &s); err != nil {
		return session{}, false, fmt.Errorf("%s: %v", filepath.Join(dir, sessionFile), err)
	}
	return s, true, nil
}

// startAutosave begins keeping the session, first offering back one left
// by a window that did not close normally (restored at once when restore
// is set). The old copy stays until the user decides.
func (w *Window) startAutosave(restore bool) {
	root := autosaveDir()
	prev, s, err := orphanSession(root)
	begin := func() {
		saver, err := newAutosaver(root)
		if err != nil {
			w.notice.SetText("This session cannot be autosaved: " + err.Error())
			return
		}
		w.saver = saver
		w.autosave()
	}
	switch {
	case err != nil:
		w.notice.SetText("The last session's autosave could not be read: " + err.Error())
		begin()
	case prev == "":
		begin()
	case restore:
		w.restoreSession(prev, s)
		begin()
	default:
		msg := fmt.Sprintf("teeter did not close normally last time. Restore the session saved at %s (robot %s, %d robot changes, and its gains)?",
			s.Saved.Local().Format("2 Jan 15:04:05"), s.Path, len(s.Params))
		d := dialog.NewConfirm("Restore the last session?", msg, func(ok bool) {
			if ok {
				w.restoreSession(prev, s)
			} else {
				os.RemoveAll(prev)
			}
			begin()
		}, w.win)
		d.SetConfirmText("Restore")
		d.SetDismissText("Discard")
		d.Show()
	}
}

// restoreSession brings back an autosaved session: its robot, robot
// parameter changes and gains. On a problem the current session stays and
// the autosave is kept for another try.
func (w *Window) restoreSession(dir string, s session) {
	r, err := models.Load(filepath.Join(dir, robotFile))
	var gs control.GainSet
	if err == nil {
		gs, err = control.ReadGains(filepath.Join(dir, gainsFile))
	}
	if err == nil {
		err = w.installRobot(r, s.Path)
	}
	if err != nil {
		w.showError("The last session could not be restored", err)
		return
	}
	for _, p := range s.Params {
		w.applyRobotParam(p.Path, p.Value)
	}
	for _, g := range gs.Gains {
		if v, ok := w.gains[g.Path]; ok && v != g.Value {
			w.applyGain(g.Path, g.Value)
		}
	}
	os.RemoveAll(dir) // this window's own autosave holds it from now on
	w.notice.SetText("Restored the session saved at " + s.Saved.Local().Format("15:04:05"))
}

// autosave queues the session as it is now; the UI thread calls it after
// every change and every few seconds.
func (w *Window) autosave() {
	if w.saver == nil {
		return
	}
	r, err := w.robotToSave()
	if err != nil {
		r = w.currentRobot() // the gains file below still holds every gain
	}
	s := autosave{robot: r, gains: w.Gains(), sess: session{Path: w.path, Saved: time.Now()}}
	for _, p := range w.rorder {
		s.sess.Params = append(s.sess.Params, sessionParam{p, w.rparam[p]})
	}
	w.saver.queue(s)
}
