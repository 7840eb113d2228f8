//go:build !unix

package atomicfile

import (
	"os"
	"path/filepath"
)

// ProcessAlive cannot tell here: every temporary counts as live, and none is
// cleaned.
func ProcessAlive(pid int) bool { return true }

// renameIfAbsent renames a to b unless b exists.
func renameIfAbsent(a, b string) error {
	if _, err := os.Lstat(b); err == nil {
		return &os.LinkError{Op: "rename", Old: a, New: filepath.Clean(b), Err: os.ErrExist}
	}
	return os.Rename(a, b)
}
