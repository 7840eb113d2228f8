// Package atomicfile puts outputs in place so that a reader never sees a
// half-written file or folder, a failed run leaves nothing behind, and
// nothing but a regular file (or, for an output folder, a folder) is ever
// replaced.
//
// A Set stages files and folders under temporary names beside their
// targets (".NAME.riskaudit-tmp-PID-…"), synced to disk, and Commit
// renames them into place; a folder that exists is swapped with its new
// version in one step where the system allows it (Linux's
// RENAME_EXCHANGE), so the folder never holds a mix of old and new
// files. What a commit replaced is kept (".NAME.riskaudit-old-PID-…")
// until Finish, so that Undo can put it back when a later step of the
// same output fails. Temporaries left by a run that was killed (its PID
// no longer runs) are removed by the next Set that writes in the same
// folder.
package atomicfile

import (
	"crypto/rand"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"unicode/utf8"

	"github.com/riskaudit/riskaudit/internal/pathtext"
)

// File is one file of a set: its path and its content.
type File struct {
	Path string
	Data []byte
}

// TargetError is an output path that exists and is not what an output
// may replace: a regular file for a file, a folder for an output folder.
type TargetError struct {
	Path string
	// What the path is, such as "a symbolic link" or "a named pipe".
	What string
	// Folder says that the path was to be an output folder.
	Folder bool
}

// Error says what the path is and that it is not replaced.
func (e *TargetError) Error() string {
	want := "a regular file"
	if e.Folder {
		want = "a folder"
	}
	return fmt.Sprintf("%s exists and is %s, not %s: riskaudit never replaces it; choose another output path", pathtext.Path(e.Path), e.What, want)
}

// CheckTarget refuses a path that exists and is not a regular file (or,
// with folder, not a folder), without following a symbolic link: a
// *TargetError. A path that does not exist is fine.
func CheckTarget(path string, folder bool) error {
	st, err := os.Lstat(path)
	if errors.Is(err, fs.ErrNotExist) {
		return nil
	}
	if err != nil {
		return fmt.Errorf("cannot write %s: %w", path, unwrap(err))
	}
	m := st.Mode()
	switch {
	case folder && m.IsDir(), !folder && m.IsRegular():
		return nil
	case m&fs.ModeSymlink != 0:
		return &TargetError{Path: path, What: "a symbolic link", Folder: folder}
	case m&fs.ModeNamedPipe != 0:
		return &TargetError{Path: path, What: "a named pipe (FIFO)", Folder: folder}
	case m&fs.ModeSocket != 0:
		return &TargetError{Path: path, What: "a socket", Folder: folder}
	case m&fs.ModeDevice != 0:
		return &TargetError{Path: path, What: "a device", Folder: folder}
	case m.IsDir():
		return &TargetError{Path: path, What: "a folder", Folder: folder}
	case m.IsRegular():
		return &TargetError{Path: path, What: "a file", Folder: folder}
	}
	return &TargetError{Path: path, What: "not a regular file (" + m.Type().String() + ")", Folder: folder}
}

// Set stages files and folders and makes them appear together.
type Set struct {
	staged  []*entry
	applied []*entry
}

type entry struct {
	target  string
	tmp     string // the staged new content
	old     string // where the replaced content goes at Commit
	folder  bool
	existed bool
}

// tempName is a fresh name beside path for kind ("tmp" or "old"),
// carrying this process's ID so that a later run can tell a live run's
// temporaries from a dead one's.
func tempName(path, kind string) string {
	var b [6]byte
	_, _ = rand.Read(b[:])
	return TempPrefix(path, kind, os.Getpid()) + hex.EncodeToString(b[:])
}

// maxTempBase is the longest target name a temporary's name carries in
// full: with the dot, ".riskaudit-old-", a process ID and 12 hex digits
// the name stays within the 255 bytes a file name may have.
const maxTempBase = 200

// TempPrefix is the start of the names of path's temporaries of kind
// ("tmp" or "old") made by process pid, before their random part:
// ".NAME.riskaudit-KIND-PID-" beside path. A NAME longer than
// maxTempBase bytes is cut (at a character boundary) and marked with a
// hash of the whole name, so that a legal target name never gives a
// temporary name too long to create.
func TempPrefix(path, kind string, pid int) string {
	base := filepath.Base(path)
	if len(base) > maxTempBase {
		cut := 160
		for cut > 0 && !utf8.RuneStart(base[cut]) {
			cut--
		}
		sum := sha256.Sum256([]byte(base))
		base = base[:cut] + "~" + hex.EncodeToString(sum[:4])
	}
	return filepath.Join(filepath.Dir(path), "."+base+".riskaudit-"+kind+"-"+strconv.Itoa(pid)+"-")
}

// Add writes data to a temporary file beside path, after refusing a path
// that is not a regular file (CheckTarget).
func (s *Set) Add(path string, data []byte) error {
	CleanStale(filepath.Dir(path))
	if err := CheckTarget(path, false); err != nil {
		return err
	}
	e := &entry{target: path, tmp: tempName(path, "tmp"), old: tempName(path, "old")}
	if err := writeSynced(e.tmp, data); err != nil {
		return fmt.Errorf("cannot write %s: %w", path, unwrap(err))
	}
	_, err := os.Lstat(path)
	e.existed = err == nil
	s.staged = append(s.staged, e)
	return nil
}

// AddFolder builds the folder dir with files (their paths relative to
// dir, without separators) in a temporary folder beside it; dir's parent
// is created if absent. When dir exists and is a folder, replace (when
// not nil) is given its entries and may refuse to replace them.
func (s *Set) AddFolder(dir string, files []File, replace func(entries []os.DirEntry) error) (err error) {
	dir = filepath.Clean(dir)
	parent := filepath.Dir(dir)
	if err := os.MkdirAll(parent, 0o755); err != nil {
		return fmt.Errorf("cannot create %s: %w", parent, unwrap(err))
	}
	CleanStale(parent)
	if err := CheckTarget(dir, true); err != nil {
		return err
	}
	e := &entry{target: dir, tmp: tempName(dir, "tmp"), old: tempName(dir, "old"), folder: true}
	if entries, err := os.ReadDir(dir); err == nil {
		e.existed = true
		if replace != nil {
			if err := replace(entries); err != nil {
				return err
			}
		}
	} else if !errors.Is(err, fs.ErrNotExist) {
		return fmt.Errorf("cannot read %s: %w", dir, unwrap(err))
	}
	if err := os.Mkdir(e.tmp, 0o755); err != nil {
		return fmt.Errorf("cannot create %s: %w", dir, unwrap(err))
	}
	defer func() {
		if err != nil {
			os.RemoveAll(e.tmp)
		}
	}()
	for _, f := range files {
		if f.Path != filepath.Base(f.Path) || f.Path == "." || f.Path == ".." {
			return fmt.Errorf("atomicfile: %q is not a plain file name", f.Path)
		}
		if err := writeSynced(filepath.Join(e.tmp, f.Path), f.Data); err != nil {
			return fmt.Errorf("cannot write %s: %w", filepath.Join(dir, f.Path), unwrap(err))
		}
	}
	if err := syncDir(e.tmp); err != nil {
		return fmt.Errorf("cannot write %s: %w", dir, unwrap(err))
	}
	s.staged = append(s.staged, e)
	return nil
}

// Replaced reports whether the target of a staged path existed, and the
// name its content is kept under from Commit until Finish.
func (s *Set) Replaced(target string) (old string, existed bool) {
	for _, e := range s.staged {
		if e.target == filepath.Clean(target) || e.target == target {
			return e.old, e.existed
		}
	}
	return "", false
}

// Commit puts every staged file and folder in place, in the order added.
// When one cannot be put in place, what was done is undone and the
// staging removed.
func (s *Set) Commit() error {
	for _, e := range s.staged {
		if err := e.commit(); err != nil {
			s.undo()
			s.Abort()
			return fmt.Errorf("cannot write %s: %w", e.target, unwrap(err))
		}
		s.applied = append(s.applied, e)
	}
	s.staged = nil
	return nil
}

func (e *entry) commit() error {
	if !e.existed {
		if e.folder {
			return renameNoReplace(e.tmp, e.target)
		}
		return os.Rename(e.tmp, e.target)
	}
	if e.folder {
		if err := exchange(e.tmp, e.target); err == nil {
			return os.Rename(e.tmp, e.old) // tmp now holds the replaced folder
		} else if !errors.Is(err, errNoExchange) {
			return err
		}
		if err := os.Rename(e.target, e.old); err != nil {
			return err
		}
		if err := os.Rename(e.tmp, e.target); err != nil {
			os.Rename(e.old, e.target)
			return err
		}
		return nil
	}
	// A hard link keeps the replaced file while the rename swaps the new
	// one in atomically; without hard links, the old file moves aside.
	if err := os.Link(e.target, e.old); err != nil {
		if err := os.Rename(e.target, e.old); err != nil {
			return err
		}
	}
	return os.Rename(e.tmp, e.target)
}

// Undo, after a successful Commit and before Finish, restores every
// target as it was before the commit: replaced files and folders come
// back, new ones are removed.
func (s *Set) Undo() error {
	err := s.undo()
	s.applied = nil
	return err
}

func (s *Set) undo() error {
	var errs []error
	for i := len(s.applied) - 1; i >= 0; i-- {
		e := s.applied[i]
		switch {
		case !e.existed && e.folder:
			errs = append(errs, os.RemoveAll(e.target))
		case !e.existed:
			errs = append(errs, os.Remove(e.target))
		case e.folder:
			if err := exchange(e.old, e.target); err == nil {
				errs = append(errs, os.RemoveAll(e.old))
			} else {
				errs = append(errs, os.RemoveAll(e.target), os.Rename(e.old, e.target))
			}
		default:
			errs = append(errs, os.Rename(e.old, e.target))
		}
	}
	s.applied = nil
	return errors.Join(errs...)
}

// Finish, after Commit, removes what the commit replaced; Undo is no
// longer possible.
func (s *Set) Finish() {
	for _, e := range s.applied {
		if e.existed {
			os.RemoveAll(e.old)
		}
	}
	s.applied = nil
}

// Abort removes every staged temporary file and folder.
func (s *Set) Abort() {
	for _, e := range s.staged {
		os.RemoveAll(e.tmp)
	}
	s.staged = nil
}

// WriteAll creates dir (and its parents) if it is absent, then writes
// every file as one set: all of them appear, or none does. The files'
// paths need not lie inside dir; dir is the folder the caller promised
// to create.
func WriteAll(dir string, files []File) error {
	if dir != "" {
		if err := CheckTarget(dir, true); err != nil {
			return err
		}
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return fmt.Errorf("cannot create %s: %w", dir, unwrap(err))
		}
	}
	var s Set
	defer s.Abort()
	for _, f := range files {
		if err := s.Add(f.Path, f.Data); err != nil {
			return err
		}
	}
	if err := s.Commit(); err != nil {
		return err
	}
	s.Finish()
	return nil
}

// WriteFile writes one file atomically.
func WriteFile(path string, data []byte) error { return WriteAll("", []File{{path, data}}) }

func writeSynced(path string, data []byte) error {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	_, werr := f.Write(data)
	serr := f.Sync()
	cerr := f.Close()
	if err := errors.Join(werr, serr, cerr); err != nil {
		os.Remove(path)
		return err
	}
	return nil
}

func syncDir(dir string) error {
	f, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer f.Close()
	if err := f.Sync(); err != nil && !errors.Is(err, errors.ErrUnsupported) {
		return err
	}
	return nil
}

// staleName matches this package's temporary names and captures the PID;
// it is compiled at its first use, not at every start of the program.
var staleName = sync.OnceValue(func() *regexp.Regexp {
	return regexp.MustCompile(`^\..+\.riskaudit-(?:tmp|old)-(\d+)-[0-9a-f]+$`)
})

// CleanStale removes, from dir, the temporaries of runs that no longer
// run (their PID is not alive); those of live runs, this one included,
// are kept.
func CleanStale(dir string) {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return
	}
	for _, e := range entries {
		if !strings.Contains(e.Name(), ".riskaudit-") {
			continue
		}
		m := staleName().FindStringSubmatch(e.Name())
		if m == nil {
			continue
		}
		pid, err := strconv.Atoi(m[1])
		if err != nil || pid == os.Getpid() || ProcessAlive(pid) {
			continue
		}
		os.RemoveAll(filepath.Join(dir, e.Name()))
	}
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
