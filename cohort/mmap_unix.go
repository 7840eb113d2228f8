//go:build linux || darwin || freebsd || netbsd || openbsd

package cohort

import (
	"os"
	"syscall"

	"golang.org/x/sys/unix"
)

// mapFile maps the file at path read-only into memory and returns its
// bytes, whether they are a mapping, and a function that unmaps them.
// Files too small to be worth it, and files that cannot be mapped, are
// read instead.
func mapFile(path string) ([]byte, bool, func(), error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, false, nil, err
	}
	defer f.Close()
	st, err := f.Stat()
	if err != nil {
		return nil, false, nil, err
	}
	size := st.Size()
	if !st.Mode().IsRegular() || size < 1<<20 || int64(int(size)) != size {
		data, err := os.ReadFile(path)
		return data, false, func() {}, err
	}
	data, err := syscall.Mmap(int(f.Fd()), 0, int(size), syscall.PROT_READ, syscall.MAP_PRIVATE|mapPopulate)
	if err != nil {
		data, err := os.ReadFile(path)
		return data, false, func() {}, err
	}
	return data, true, func() { _ = syscall.Munmap(data) }, nil
}

// dropPages tells the kernel that the mapped pages b (whole pages) are
// not needed now; an error only leaves them resident.
func dropPages(b []byte) { _ = unix.Madvise(b, unix.MADV_DONTNEED) }
