//go:build !(linux || darwin || freebsd || netbsd || openbsd)

package cohort

import "os"

// mapFile reads the file at path; this platform has no memory mapping.
func mapFile(path string) ([]byte, bool, func(), error) {
	data, err := os.ReadFile(path)
	return data, false, func() {}, err
}

// dropPages does nothing: without a mapping there are no pages to drop.
func dropPages([]byte) {}
