package atomicfile

import (
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"unicode/utf8"
)

func TestSetCommitAndAbort(t *testing.T) {
	dir := t.TempDir()
	a, b := filepath.Join(dir, "a.txt"), filepath.Join(dir, "b.txt")
	var s Set
	if err := s.Add(a, []byte("A")); err != nil {
		t.Fatal(err)
	}
	if err := s.Add(b, []byte("B")); err != nil {
		t.Fatal(err)
	}
	if _, err := os.Stat(a); !os.IsNotExist(err) {
		t.Fatal("a file appeared before Commit")
	}
	if err := s.Commit(); err != nil {
		t.Fatal(err)
	}
	if got, _ := os.ReadFile(b); string(got) != "B" {
		t.Fatalf("b.txt = %q", got)
	}
	var s2 Set
	if err := s2.Add(a, []byte("changed")); err != nil {
		t.Fatal(err)
	}
	s2.Abort()
	if got, _ := os.ReadFile(a); string(got) != "A" {
		t.Fatalf("Abort changed a.txt to %q", got)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 2 {
		t.Fatalf("temporary files left: %v", entries)
	}
	if err := WriteFile(filepath.Join(dir, "missing", "c.txt"), nil); err == nil {
		t.Fatal("writing into a missing folder should fail")
	}
}

// TestRefusesNonRegularTargets: a symbolic link, a named pipe, a device
// or a folder at an output file's path is refused and left as it was;
// a symbolic link or a file at an output folder's path too.
func TestRefusesNonRegularTargets(t *testing.T) {
	dir := t.TempDir()
	victim := filepath.Join(dir, "victim.txt")
	if err := os.WriteFile(victim, []byte("keep"), 0o644); err != nil {
		t.Fatal(err)
	}
	link := filepath.Join(dir, "link.txt")
	if err := os.Symlink(victim, link); err != nil {
		t.Fatal(err)
	}
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err != nil {
		t.Fatal(err)
	}
	folder := filepath.Join(dir, "folder")
	if err := os.Mkdir(folder, 0o755); err != nil {
		t.Fatal(err)
	}
	for path, what := range map[string]string{link: "a symbolic link", fifo: "a named pipe (FIFO)", "/dev/null": "a device", folder: "a folder"} {
		err := WriteFile(path, []byte("clobbered"))
		var te *TargetError
		if !errors.As(err, &te) || te.What != what {
			t.Errorf("%s: error %v, want a TargetError saying %q", path, err, what)
		}
	}
	if b, _ := os.ReadFile(victim); string(b) != "keep" {
		t.Errorf("the symbolic link's target was changed to %q", b)
	}
	if st, err := os.Lstat(link); err != nil || st.Mode()&os.ModeSymlink == 0 {
		t.Error("the symbolic link was replaced")
	}
	linkedFolder := filepath.Join(dir, "linked-folder")
	if err := os.Symlink(folder, linkedFolder); err != nil {
		t.Fatal(err)
	}
	for _, path := range []string{linkedFolder, victim} {
		var s Set
		err := s.AddFolder(path, []File{{Path: "a.txt", Data: []byte("A")}}, nil)
		var te *TargetError
		if !errors.As(err, &te) || !te.Folder {
			t.Errorf("folder %s: error %v, want a TargetError", path, err)
		}
	}
	if entries, _ := os.ReadDir(folder); len(entries) != 0 {
		t.Errorf("the linked folder gained %d files", len(entries))
	}
}

// TestFolderSwapUndoFinish: an output folder is replaced whole (no stale
// file survives), Undo puts the old folder and files back, and Finish
// removes what was replaced.
func TestFolderSwapUndoFinish(t *testing.T) {
	dir := t.TempDir()
	out := filepath.Join(dir, "audit")
	extra := filepath.Join(dir, "extra.txt")
	write := func(files map[string]string, extraText string) *Set {
		t.Helper()
		var fs []File
		for n, d := range files {
			fs = append(fs, File{Path: n, Data: []byte(d)})
		}
		s := &Set{}
		if err := s.AddFolder(out, fs, nil); err != nil {
			t.Fatal(err)
		}
		if err := s.Add(extra, []byte(extraText)); err != nil {
			t.Fatal(err)
		}
		if err := s.Commit(); err != nil {
			t.Fatal(err)
		}
		return s
	}
	names := func() []string {
		entries, _ := os.ReadDir(out)
		var n []string
		for _, e := range entries {
			n = append(n, e.Name())
		}
		return n
	}
	write(map[string]string{"report.md": "one", "subgroups.svg": "old figure"}, "first").Finish()
	s := write(map[string]string{"report.md": "two"}, "second")
	if got := names(); len(got) != 1 || got[0] != "report.md" {
		t.Fatalf("after the second write the folder holds %v: a stale file survived", got)
	}
	if err := s.Undo(); err != nil {
		t.Fatal(err)
	}
	if b, _ := os.ReadFile(filepath.Join(out, "subgroups.svg")); string(b) != "old figure" {
		t.Errorf("Undo did not restore the old folder: %v", names())
	}
	if b, _ := os.ReadFile(extra); string(b) != "first" {
		t.Errorf("Undo left the extra file as %q", b)
	}
	write(map[string]string{"report.md": "three"}, "third").Finish()
	entries, _ := os.ReadDir(dir)
	if len(entries) != 2 {
		t.Errorf("Finish left %d entries beside the outputs: %v", len(entries), entries)
	}
}

// TestCleanStale: temporaries of a process that no longer runs are
// removed by the next write in that folder; those of live processes
// stay.
func TestCleanStale(t *testing.T) {
	dir := t.TempDir()
	cmd := exec.Command("true")
	if err := cmd.Run(); err != nil {
		t.Skip("no true command")
	}
	dead := cmd.ProcessState.Pid() // it has exited
	deadTmp := filepath.Join(dir, fmt.Sprintf(".report.md.riskaudit-tmp-%d-0a1b2c", dead))
	deadOld := filepath.Join(dir, fmt.Sprintf(".audit.riskaudit-old-%d-0a1b2c", dead))
	live := filepath.Join(dir, fmt.Sprintf(".report.md.riskaudit-tmp-%d-0a1b2c", os.Getppid()))
	other := filepath.Join(dir, ".notes.tmp")
	for _, p := range []string{deadTmp, live, other} {
		if err := os.WriteFile(p, nil, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Mkdir(deadOld, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := WriteFile(filepath.Join(dir, "out.txt"), []byte("x")); err != nil {
		t.Fatal(err)
	}
	for p, want := range map[string]bool{deadTmp: false, deadOld: false, live: true, other: true} {
		if _, err := os.Lstat(p); (err == nil) != want {
			t.Errorf("%s: present %v, want %v", filepath.Base(p), err == nil, want)
		}
	}
}

// TestLongTargetName: a target name of 255 bytes, the most a file name
// may have, gets temporaries whose names are legal too (cut and marked
// by a hash, so two long names sharing their first 160 bytes differ),
// and the write goes through; a short name is kept whole.
func TestLongTargetName(t *testing.T) {
	dir := t.TempDir()
	long := strings.Repeat("é", 127) + "x" // 255 bytes
	other := strings.Repeat("é", 127) + "y"
	for _, kind := range []string{"tmp", "old"} {
		p := filepath.Base(TempPrefix(filepath.Join(dir, long), kind, 4194304)) + "0a1b2c3d4e5f"
		if len(p) > 255 || !utf8.ValidString(p) {
			t.Errorf("%s: temporary name of %d bytes (%q)", kind, len(p), p)
		}
		if TempPrefix(filepath.Join(dir, long), kind, 1) == TempPrefix(filepath.Join(dir, other), kind, 1) {
			t.Errorf("%s: two long names share their temporaries' prefix", kind)
		}
	}
	if got := TempPrefix(filepath.Join(dir, "report.md"), "tmp", 42); got != filepath.Join(dir, ".report.md.riskaudit-tmp-42-") {
		t.Errorf("short name: %q", got)
	}
	var s Set
	if err := s.Add(filepath.Join(dir, long), []byte("data")); err != nil {
		t.Fatal(err)
	}
	if err := s.Commit(); err != nil {
		t.Fatal(err)
	}
	if b, err := os.ReadFile(filepath.Join(dir, long)); err != nil || string(b) != "data" {
		t.Errorf("the long-named file: %q, %v", b, err)
	}
}
