//go:build !linux

package atomicfile

import "errors"

// errNoExchange says that the system cannot swap two paths in one step.
var errNoExchange = errors.New("atomicfile: no atomic exchange")

// exchange is not available here: Commit moves the old folder aside and
// the new one in, in two steps.
func exchange(a, b string) error { return errNoExchange }

// renameNoReplace renames a to b when b does not exist.
func renameNoReplace(a, b string) error { return renameIfAbsent(a, b) }
