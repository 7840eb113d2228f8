package atomicfile

import (
	"errors"

	"golang.org/x/sys/unix"
)

// errNoExchange says that the system cannot swap two paths in one step.
var errNoExchange = errors.New("atomicfile: no atomic exchange")

// exchange swaps the two paths in one step (renameat2 RENAME_EXCHANGE).
func exchange(a, b string) error {
	err := unix.Renameat2(unix.AT_FDCWD, a, unix.AT_FDCWD, b, unix.RENAME_EXCHANGE)
	if errors.Is(err, unix.ENOSYS) || errors.Is(err, unix.EINVAL) {
		return errNoExchange
	}
	return err
}

// renameNoReplace renames a to b, failing if b exists (renameat2
// RENAME_NOREPLACE), so that a folder never lands on one that appeared
// meanwhile.
func renameNoReplace(a, b string) error {
	err := unix.Renameat2(unix.AT_FDCWD, a, unix.AT_FDCWD, b, unix.RENAME_NOREPLACE)
	if errors.Is(err, unix.ENOSYS) || errors.Is(err, unix.EINVAL) {
		return renameIfAbsent(a, b)
	}
	return err
}
