//go:build unix

package audit_test

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
	"syscall"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/fixture"
)

// pipeOf makes a named pipe that serves the bytes of the file at src
// once, as a shell's process substitution (<(cat model.yaml)) does.
func pipeOf(t *testing.T, src string) string {
	t.Helper()
	data, err := os.ReadFile(src)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), filepath.Base(src))
	if err := syscall.Mkfifo(path, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	go func() {
		f, err := os.OpenFile(path, os.O_WRONLY, 0)
		if err != nil {
			return
		}
		defer f.Close()
		_, _ = f.Write(data)
	}()
	return path
}

// TestModelAndCohortFromPipes: a frozen model and a cohort given as
// pipes are each read once, and the provenance records the SHA-256 of
// the bytes read, the same as for the files (sha256sum of the file is
// the outside reference; before, the model was opened twice and the
// second open waited for a writer that had gone).
func TestModelAndCohortFromPipes(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	sum := func(path string) string {
		data, err := os.ReadFile(path)
		if err != nil {
			t.Fatal(err)
		}
		s := sha256.Sum256(data)
		return hex.EncodeToString(s[:])
	}
	cfg := audit.Config{Model: pipeOf(t, d.Frozen), Cohort: audit.Input{Path: pipeOf(t, d.Later)}, Clock: fixedClock}
	res, err := audit.Run(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{"model": sum(d.Frozen), "cohort": sum(d.Later)}
	for _, in := range res.Audit.Provenance.Inputs {
		if w, ok := want[in.Role]; ok {
			if in.SHA256 != w {
				t.Errorf("%s: SHA-256 %s, want %s", in.Role, in.SHA256, w)
			}
			delete(want, in.Role)
		}
	}
	if len(want) > 0 {
		t.Errorf("provenance lacks %v", want)
	}
}
