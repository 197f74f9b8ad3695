package ui

import (
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// writeProgram writes a controller program for sh that speaks the line
// protocol (sim/sil/PROTOCOL.md): it reads the three header lines, says
// ready, notes in log when it starts and ends, and answers every tick with
// zero commands for the frontal robot's six actuators, failing at the tick
// after failAfter when that is above 0.
func writeProgram(t *testing.T, dir, name, log string, failAfter int) string {
	t.Helper()
	path := filepath.Join(dir, name)
	script := `#!/bin/sh
read header; read in; read out
echo started >> ` + log + `
echo ready
n=0
while read line; do
  case "$line" in t*) n=$((n+1));; *) continue;; esac
  if [ ` + strconv.Itoa(failAfter) + ` -gt 0 ] && [ $n -gt ` + strconv.Itoa(failAfter) + ` ]; then echo "motor driver lost" >&2; exit 3; fi
  echo "c 0 0 0 0 0 0"
done
echo ended >> ` + log + `
`
	if err := os.WriteFile(path, []byte(script), 0o755); err != nil {
		t.Fatal(err)
	}
	return path
}

// must waits for a runner command and fails the test on its error.
func must(t *testing.T, c <-chan error) {
	t.Helper()
	if err := <-c; err != nil {
		t.Fatal(err)
	}
}

func TestAControllerProgramDrivesTheWindow(t *testing.T) {
	// File > Run a controller program…: the program drives the robot; a
	// reset starts it afresh and ends the one before (PROTOCOL.md: teeter
	// closes the program's input and the program exits), and going back
	// to the robot's own controller ends it too.
	if _, err := exec.LookPath("sh"); err != nil {
		t.Skip("no sh")
	}
	w, _ := openTest(t, "builtin:frontal")
	dir := t.TempDir()
	log := filepath.Join(dir, "log")
	good := writeProgram(t, dir, "zeros.sh", log, 0)
	if err := w.RunProgram(good); err != nil {
		t.Fatal(err)
	}
	for range 5 {
		must(t, w.run.StepOnce())
	}
	if st := w.run.Status(); st.Err != nil || st.Time <= 0 {
		t.Fatalf("after five steps with the program: t = %g s, %v", st.Time, st.Err)
	}
	if w.drawnSpec() != nil || !strings.Contains(w.noGraphText(), "zeros.sh") {
		t.Errorf("the Controller tab, with a program driving: %q", w.noGraphText())
	}
	w.reset()
	must(t, w.run.StepOnce())
	if got := readLog(t, log); got != "started started ended" && got != "started ended started" {
		t.Errorf("after a reset the program log reads %q: the first program was not ended", got)
	}
	if err := w.UseOwnController(); err != nil {
		t.Fatal(err)
	}
	if got := readLog(t, log); strings.Count(got, "ended") != 2 {
		t.Errorf("back on the robot's own controller the program log reads %q", got)
	}
	if w.drawnSpec() == nil {
		t.Error("the Controller tab does not draw the robot's own graph again")
	}
}

func TestAFailingProgramKeepsTheSession(t *testing.T) {
	// A program that dies stops the run with its error in the window
	// (PROTOCOL.md, Failures: the exit status and its last words); one
	// that cannot start is refused. Neither loses the robot or its gains.
	if _, err := exec.LookPath("sh"); err != nil {
		t.Skip("no sh")
	}
	w, _ := openTest(t, "builtin:frontal")
	w.setGain("body_loop.kp", 1.5, true)
	dir := t.TempDir()
	if err := w.RunProgram(filepath.Join(dir, "missing")); err == nil {
		t.Fatal("a program that does not exist was taken")
	}
	if w.program.Load() != nil {
		t.Fatal("a program that could not start is kept")
	}
	dies := writeProgram(t, dir, "dies.sh", filepath.Join(dir, "log"), 2)
	if err := w.RunProgram(dies); err != nil {
		t.Fatal(err)
	}
	for range 4 {
		<-w.run.StepOnce()
	}
	w.refresh()
	st := w.run.Status()
	if st.Err == nil || !w.banner.Visible() || !strings.Contains(w.bannerT.Text, "exit status 3") || !strings.Contains(w.bannerT.Text, "motor driver lost") {
		t.Fatalf("a dead program: error %v, banner %q", st.Err, w.bannerT.Text)
	}
	if err := w.UseOwnController(); err != nil {
		t.Fatal(err)
	}
	if w.robot.Source != "builtin:frontal" || w.gains["body_loop.kp"] != 1.5 {
		t.Fatalf("after the failure: robot %s, body_loop.kp %g", w.robot.Source, w.gains["body_loop.kp"])
	}
	if got, err := w.run.Gain("body_loop.kp"); err != nil || got != 1.5 {
		t.Fatalf("the running body_loop.kp is %g (%v), want the 1.5 set before", got, err)
	}
	must(t, w.run.StepOnce())
	if st := w.run.Status(); st.Err != nil {
		t.Fatalf("the robot's own controller does not run again: %v", st.Err)
	}
}

func readLog(t *testing.T, path string) string {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return strings.Join(strings.Fields(string(b)), " ")
}
