//go:build linux || darwin || freebsd || netbsd || openbsd

package cohort

import (
	"os"
	"syscall"
)

// mapFile maps the file at path read-only into memory and returns its
// bytes and a function that unmaps them. Files too small to be worth it,
// and files that cannot be mapped, are read instead.
func mapFile(path string) ([]byte, func(), error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, nil, err
	}
	size := st.Size()
	if !st.Mode().IsRegular() || size < 1<<20 || int64(int(size)) != size {
		data, err := os.ReadFile(path)
		return data, func() {}, err
	}
	data, err := syscall.Mmap(int(f.Fd()), 0, int(size), syscall.PROT_READ, syscall.MAP_PRIVATE|mapPopulate)
	if err != nil {
		data, err := os.ReadFile(path)
		return data, func() {}, err
	}
	return data, func() { _ = syscall.Munmap(data) }, nil
}
