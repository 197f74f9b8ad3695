package main

import (
	"bytes"
	"os"
	"os/exec"
	"testing"
)

// TestMain lets a test run this binary as the teeter command itself, so
// that package initialisation happens exactly as in the real program.
func TestMain(m *testing.M) {
	if os.Getenv("TEETER_TEST_AS_COMMAND") == "1" {
		main()
	}
	os.Exit(m.Run())
}

// A command prints only its own output, even on a machine whose locale the
// window toolkit cannot parse (LANG=C.UTF-8, common in containers): the
// toolkit logs a warning about it from its package initialisers.
func TestCommandPrintsNoToolkitWarning(t *testing.T) {
	cmd := exec.Command(os.Args[0], "run", "--model", "builtin:pendulum", "--duration", "0.05s", "--json")
	cmd.Env = append(os.Environ(), "TEETER_TEST_AS_COMMAND=1", "LANG=C.UTF-8", "LC_ALL=", "LC_MESSAGES=")
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("%v\nstderr: %s", err, stderr.String())
	}
	if stderr.Len() != 0 {
		t.Errorf("the command wrote to standard error:\n%s", stderr.String())
	}
	if !bytes.HasPrefix(stdout.Bytes(), []byte("{")) {
		t.Errorf("stdout is not the JSON summary: %q", stdout.String())
	}
}
