// Package atomicfile writes output files so that a reader never sees a
// half-written file: the content goes to a temporary file in the same
// folder, which is synced and then renamed over the target.
package atomicfile

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
)

// Set stages several files and makes them appear together: nothing is
// renamed into place until Commit, and Abort (or a failed Commit before
// any rename) leaves no temporary file behind.
type Set struct {
	staged []staged
}

type staged struct {
	tmp, target string
}

// Add writes data to a temporary file beside path.
func (s *Set) Add(path string, data []byte) error {
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", path, unwrap(err))
	}
	_, werr := f.Write(data)
	serr := f.Sync()
	cerr := f.Close()
	if err := errors.Join(werr, serr, cerr); err != nil {
		os.Remove(f.Name())
		return fmt.Errorf("cannot write %s: %w", path, unwrap(err))
	}
	if err := os.Chmod(f.Name(), 0o644); err != nil {
		os.Remove(f.Name())
		return fmt.Errorf("cannot write %s: %w", path, unwrap(err))
	}
	s.staged = append(s.staged, staged{tmp: f.Name(), target: path})
	return nil
}

// Commit renames every staged file into place, in the order added.
func (s *Set) Commit() error {
	for i, st := range s.staged {
		if err := os.Rename(st.tmp, st.target); err != nil {
			for _, rest := range s.staged[i:] {
				os.Remove(rest.tmp)
			}
			s.staged = nil
			return fmt.Errorf("cannot write %s: %w", st.target, unwrap(err))
		}
	}
	s.staged = nil
	return nil
}

// Abort removes every staged temporary file.
func (s *Set) Abort() {
	for _, st := range s.staged {
		os.Remove(st.tmp)
	}
	s.staged = nil
}

// File is one file of a set: its path and its content.
type File struct {
	Path string
	Data []byte
}

// WriteAll creates dir (and its parents) if it is absent, then writes
// every file as one set: all of them appear, or none does. The files'
// paths need not lie inside dir; dir is the folder the caller promised
// to create.
func WriteAll(dir string, files []File) error {
	if dir != "" {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return fmt.Errorf("cannot create %s: %w", dir, err)
		}
	}
	var s Set
	defer s.Abort()
	for _, f := range files {
		if err := s.Add(f.Path, f.Data); err != nil {
			return err
		}
	}
	return s.Commit()
}

// WriteFile writes one file atomically.
func WriteFile(path string, data []byte) error {
	var s Set
	if err := s.Add(path, data); err != nil {
		return err
	}
	return s.Commit()
}

func unwrap(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	var le *os.LinkError
	if errors.As(err, &le) {
		return le.Err
	}
	return err
}
