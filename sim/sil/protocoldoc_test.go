package sil

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"teeter/models"
)

func TestProtocolExampleRuns(t *testing.T) {
	// The C program in PROTOCOL.md compiles and answers what it says:
	// -2 times the first reading, then zeros.
	gcc, err := exec.LookPath("gcc")
	if err != nil {
		t.Skip("no gcc (make test installs it)")
	}
	doc, err := os.ReadFile("PROTOCOL.md")
	if err != nil {
		t.Fatal(err)
	}
	_, code, ok := strings.Cut(string(doc), "```c\n")
	code, _, ok2 := strings.Cut(code, "```")
	if !ok || !ok2 {
		t.Fatal("PROTOCOL.md has no C example")
	}
	dir := t.TempDir()
	src, bin := filepath.Join(dir, "example.c"), filepath.Join(dir, "example")
	if err := os.WriteFile(src, []byte(code), 0o644); err != nil {
		t.Fatal(err)
	}
	if out, err := exec.Command(gcc, "-std=c99", "-Wall", "-Wextra", "-Werror", "-pedantic", src, "-o", bin).CombinedOutput(); err != nil {
		t.Fatalf("gcc: %v\n%s", err, out)
	}
	r, err := models.Load("builtin:frontal")
	if err != nil {
		t.Fatal(err)
	}
	c, err := Start(bin, models.Channels(r), models.ChannelUnits(r), models.ActuatorNames(r), 200, Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	readings := make([]float64, len(models.Channels(r)))
	cmds := make([]float64, len(r.Actuators))
	for _, tilt := range []float64{0.01, -0.125} {
		readings[0] = tilt
		c.Tick(0, readings, cmds)
		if cmds[0] != -2*tilt || cmds[len(cmds)-1] != 0 {
			t.Errorf("tilt %v: commands %v", tilt, cmds)
		}
	}
}
