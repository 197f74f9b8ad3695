package models

import (
	"errors"
	"io"
	"os"
	"path/filepath"
	"testing"
)

// A write that fails half way must leave the old file as it was and no
// temporary file behind (the guarantee the README states about data).
func TestWriteFileAtomicKeepsOldFileOnFailure(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "gains.yaml")
	if err := os.WriteFile(path, []byte("old contents\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	boom := errors.New("disk on fire")
	err := WriteFileAtomic(path, func(w io.Writer) error {
		io.WriteString(w, "half of the new")
		return boom
	})
	if !errors.Is(err, boom) {
		t.Fatalf("error = %v, want %v", err, boom)
	}
	got, _ := os.ReadFile(path)
	if string(got) != "old contents\n" {
		t.Errorf("old file changed to %q", got)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("directory holds %d entries after a failed write, want only the old file", len(entries))
	}
	if err := WriteFileAtomic(path, func(w io.Writer) error { _, err := io.WriteString(w, "new\n"); return err }); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(path); string(got) != "new\n" {
		t.Errorf("after a good write the file holds %q", got)
	}
}
