package atomicfile

import (
	"os"
	"path/filepath"
	"testing"
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
