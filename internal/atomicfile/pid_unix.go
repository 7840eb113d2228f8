//go:build unix

package atomicfile

import (
	"errors"
	"os"
	"path/filepath"
	"syscall"
)

// ProcessAlive reports whether a process with this ID runs (or may run: a
// process of another user answers EPERM).
func ProcessAlive(pid int) bool {
	if pid <= 0 {
		return false
	}
	err := syscall.Kill(pid, 0)
	return err == nil || errors.Is(err, syscall.EPERM)
}

// renameIfAbsent renames a to b unless b exists (with a window between
// the check and the rename, where no single-step rename exists).
func renameIfAbsent(a, b string) error {
	if _, err := os.Lstat(b); err == nil {
		return &os.LinkError{Op: "rename", Old: a, New: filepath.Clean(b), Err: os.ErrExist}
	}
	return os.Rename(a, b)
}
