//go:build unix

package ui

import (
	"os"
	"syscall"
)

// lockExclusive takes an advisory lock on f without waiting; the system
// drops it when f is closed or the process ends, however it ends.
func lockExclusive(f *os.File) error {
	return syscall.Flock(int(f.Fd()), syscall.LOCK_EX|syscall.LOCK_NB)
}

// heldByAWindow reports whether a live window holds the lock file at path.
func heldByAWindow(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false // no lock file: an autosave from before locks, or a broken one
	}
	defer f.Close() // closing drops the lock taken here
	return lockExclusive(f) != nil
}
