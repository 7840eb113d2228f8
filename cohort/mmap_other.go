//go:build !(linux || darwin || freebsd || netbsd || openbsd)

package cohort

import "os"

// mapFile reads the file at path; this platform has no memory mapping.
func mapFile(path string) ([]byte, func(), error) {
	data, err := os.ReadFile(path)
	return data, func() {}, err
}
