package ui

import (
	"path/filepath"

	"teeter/control"
	"teeter/sim/rig"
)

// RunProgram drives the robot with a controller program over the line
// protocol (sim/sil), from the start. A program that cannot start is shown
// and the run goes on as it was; one that fails while running stops the run
// with its error, and Reset starts it again.
func (w *Window) RunProgram(path string) error {
	return w.drive(&rig.Program{Path: path}, "The controller program "+filepath.Base(path)+" drives the robot")
}

// UseOwnController puts the robot's own controller back in place of a
// program.
func (w *Window) UseOwnController() error {
	if w.program.Load() == nil {
		return nil
	}
	return w.drive(nil, "The robot's own controller drives it again")
}

// drive rebuilds the run with program (nil: the robot's own controller),
// keeping the robot, gains and shoves, and runs on if it was running.
func (w *Window) drive(program *rig.Program, done string) error {
	running := w.run.Status().Running
	prev := w.program.Swap(program)
	if err := <-w.run.Reset(); err != nil {
		w.program.Store(prev)
		w.showError("The controller was not changed", err)
		return err
	}
	if running {
		w.after(w.run.Run())
	}
	w.graph.setSpec(w.drawnSpec())
	if w.spec == nil {
		w.buildGainRows() // its text says what drives the robot
	}
	w.lastVer = 0
	w.refresh()
	w.notice.SetText(done)
	return nil
}

// drawnSpec is the graph the Controller tab draws: none while a program
// drives the robot.
func (w *Window) drawnSpec() *control.Spec {
	if w.program.Load() != nil {
		return nil
	}
	return w.spec
}
