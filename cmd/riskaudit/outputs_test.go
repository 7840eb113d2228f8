package main

import (
	"bytes"
	"context"
	"database/sql"
	"errors"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	_ "modernc.org/sqlite"
)

type fullWriter struct{}

func (fullWriter) Write([]byte) (int, error) { return 0, syscall.ENOSPC }

// TestSummaryWriteFailure: a summary that cannot be written to stdout
// (a full disk, a closed pipe) fails the command with exit status 5.
func TestSummaryWriteFailure(t *testing.T) {
	dir := t.TempDir()
	quiet := &streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}}
	if err := runDemo(context.Background(), filepath.Join(dir, "d"), quiet); err != nil {
		t.Fatal(err)
	}
	var stderr bytes.Buffer
	s := &streams{out: &checkedWriter{w: fullWriter{}}, err: &stderr}
	code := run(context.Background(), []string{"fit", "--model", filepath.Join(dir, "d", "recipe.yaml"), "--data",
		filepath.Join(dir, "d", "development.csv"), "--out", filepath.Join(dir, "f.yaml")}, s)
	if code != exitOtherFailed || !strings.Contains(stderr.String(), "writing to standard output: no space left on device") {
		t.Errorf("exit status %d, stderr %q", code, stderr.String())
	}
}

// TestKilledAuditsStayConsistent kills audits with SIGKILL at random
// moments while they write a folder, an updated model and a history
// record, and runs the next audit into the same place each time: after
// it, no temporary is left, and the folder's audit.json is the newest
// record's.
func TestKilledAuditsStayConsistent(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command and runs a dozen audits")
	}
	dir := t.TempDir()
	bin := filepath.Join(dir, "riskaudit")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	quiet := &streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}}
	d := filepath.Join(dir, "d")
	if err := runDemo(context.Background(), d, quiet); err != nil {
		t.Fatal(err)
	}
	store := filepath.Join(dir, "h.sqlite")
	args := []string{"audit", "--model", filepath.Join(d, "frozen.yaml"), "--dev", filepath.Join(d, "development.csv"),
		"--cohort", filepath.Join(d, "later.csv"), "--bootstrap", "20", "--update", filepath.Join(dir, "updated.yaml"),
		"--update-bootstrap", "10", "--out", filepath.Join(dir, "audit"), "--history", store, "--replace-record", "-q"}
	r := rand.New(rand.NewPCG(7, 11))
	start := time.Now()
	if err := exec.Command(bin, args...).Run(); err != nil && !isExit(err, 1) {
		t.Fatal(err)
	}
	full := time.Since(start)
	for i := 0; i < 12; i++ {
		cmd := exec.Command(bin, args...)
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(time.Duration(r.Float64() * float64(full)))
		cmd.Process.Signal(syscall.SIGKILL)
		cmd.Wait()
		if err := exec.Command(bin, args...).Run(); err != nil && !isExit(err, 1) {
			t.Fatalf("round %d: the audit after a killed one failed: %v", i, err)
		}
		for _, folder := range []string{dir, filepath.Join(dir, "audit")} {
			entries, _ := os.ReadDir(folder)
			for _, e := range entries {
				if strings.Contains(e.Name(), ".riskaudit-") {
					t.Errorf("round %d: %s left in %s", i, e.Name(), folder)
				}
			}
		}
		js, err := os.ReadFile(filepath.Join(dir, "audit", "audit.json"))
		if err != nil {
			t.Fatal(err)
		}
		if last := lastRecord(t, store); last != string(js) {
			t.Errorf("round %d: the folder's audit.json is not the newest history record", i)
		}
	}
}

func isExit(err error, code int) bool {
	var ee *exec.ExitError
	return errors.As(err, &ee) && ee.ExitCode() == code
}

func lastRecord(t *testing.T, store string) string {
	t.Helper()
	db, err := sql.Open("sqlite", store)
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	var js string
	if err := db.QueryRow(`SELECT audit_json FROM audits ORDER BY id DESC LIMIT 1`).Scan(&js); err != nil {
		t.Fatal(err)
	}
	return js
}
