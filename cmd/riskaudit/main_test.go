package main

import (
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"os"
	"os/exec"
	"strconv"
	"testing"

	"github.com/rogpeppe/go-internal/testscript"
)

func TestMain(m *testing.M) {
	testscript.Main(m, map[string]func(){
		"riskaudit": main,
	})
}

// TestScripts runs the end-to-end scripts in testdata/script: each calls
// the riskaudit binary as a user would and checks its output files,
// messages and exit status.
func TestScripts(t *testing.T) {
	testscript.Run(t, testscript.Params{
		Dir:                 "testdata/script",
		RequireExplicitExec: true,
		Setup: func(e *testscript.Env) error {
			e.Setenv("SOURCE_DATE_EPOCH", "1767225600")
			return nil
		},
		Cmds: map[string]func(ts *testscript.TestScript, neg bool, args []string){
			"exits":     exits,
			"sha256env": sha256env,
		},
	})
}

// exits N PROGRAM ARGS... runs the program and checks that it exits with
// status N; its output can then be matched with stdout and stderr.
func exits(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) < 2 {
		ts.Fatalf("usage: exits STATUS PROGRAM [ARGS...]")
	}
	want, err := strconv.Atoi(args[0])
	if err != nil {
		ts.Fatalf("exits: %q is not a status", args[0])
	}
	got := 0
	if err := ts.Exec(args[1], args[2:]...); err != nil {
		var ee *exec.ExitError
		if !errors.As(err, &ee) {
			ts.Fatalf("exits: %v", err)
		}
		got = ee.ExitCode()
	}
	if got != want {
		ts.Fatalf("exit status %d, want %d", got, want)
	}
}

// sha256env VAR FILE sets VAR to the first eight hex digits of FILE's
// SHA-256, as 'history list' shows a model.
func sha256env(ts *testscript.TestScript, neg bool, args []string) {
	if neg || len(args) != 2 {
		ts.Fatalf("usage: sha256env VAR FILE")
	}
	b, err := os.ReadFile(ts.MkAbs(args[1]))
	if err != nil {
		ts.Fatalf("sha256env: %v", err)
	}
	sum := sha256.Sum256(b)
	ts.Setenv(args[0], hex.EncodeToString(sum[:])[:8])
}
