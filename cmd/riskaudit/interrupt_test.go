package main

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// TestInterrupt: SIGINT during a long bootstrap stops the audit with
// exit status 130, one line on stderr, and no output folder or file.
func TestInterrupt(t *testing.T) {
	dir := t.TempDir()
	demo := filepath.Join(dir, "d")
	quiet := &streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}}
	if err := runDemo(context.Background(), demo, quiet); err != nil {
		t.Fatal(err)
	}
	ctx, stop := interruptible(context.Background())
	defer stop()
	time.AfterFunc(300*time.Millisecond, func() { syscall.Kill(os.Getpid(), syscall.SIGINT) })
	var stderr bytes.Buffer
	s := &streams{out: &bytes.Buffer{}, err: &stderr}
	out := filepath.Join(dir, "audit")
	start := time.Now()
	code := run(ctx, []string{"audit", "--model", filepath.Join(demo, "frozen.yaml"), "--dev", filepath.Join(demo, "development.csv"),
		"--cohort", filepath.Join(demo, "later.csv"), "--bootstrap", "100000", "--shrunken", filepath.Join(dir, "shrunk.yaml"), "--out", out}, s)
	if code != 130 {
		t.Errorf("exit status %d, want 130", code)
	}
	if el := time.Since(start); el > 10*time.Second {
		t.Errorf("stopped %v after the signal", el)
	}
	if got := stderr.String(); got != "riskaudit: interrupted by SIGINT: stopped, nothing was written\n" {
		t.Errorf("stderr %q", got)
	}
	for _, p := range []string{out, filepath.Join(dir, "shrunk.yaml")} {
		if _, err := os.Stat(p); !errors.Is(err, os.ErrNotExist) {
			t.Errorf("%s exists after the interruption", p)
		}
	}
	if !strings.Contains((&interrupted{syscall.SIGTERM}).Error(), "SIGTERM") || exitCode(&interrupted{syscall.SIGTERM}) != 143 {
		t.Error("SIGTERM is not exit status 143")
	}
}
