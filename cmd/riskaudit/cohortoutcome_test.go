package main

import (
	"bytes"
	"context"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestCohortOutcomeFlags: --outcome, --event and --non-event with
// --model, typed or from the plan, audit the model on a cohort in its own
// codes; the printed summary names the coding, stderr each out-of-range
// predictor (quiet or not), and without the flags the outcome error
// hints at them. Each case gives its reason.
func TestCohortOutcomeFlags(t *testing.T) {
	dir := t.TempDir()
	demo := filepath.Join(dir, "demo")
	if err := runDemo(context.Background(), demo, &streams{out: io.Discard, err: io.Discard}); err != nil {
		t.Fatal(err)
	}
	recoded := filepath.Join(dir, "recoded.csv")
	writeRecoded(t, filepath.Join(demo, "later.csv"), recoded)
	frozen := filepath.Join(demo, "frozen.yaml")
	plan := filepath.Join(dir, "plan.yaml")
	planText := "model: demo/frozen.yaml\ncohort: recoded.csv\nout: planned\noutcome: complication\nevent: 1\nnon_event: 0\n"
	if err := os.WriteFile(plan, []byte(planText), 0o644); err != nil {
		t.Fatal(err)
	}
	// 60 rows hold 999, 58 of them complete cases (counted with Python's
	// csv module: rows k%50 == 7 with every model column present).
	const warn = "riskaudit: warning: age: 58 rows above the development maximum 97, e.g. 999 on line 9 of "
	for _, tc := range []struct {
		name     string
		args     []string
		code     int
		out, err string // in stdout, in stderr
		notInOut string
	}{
		{"flags: the summary names the coding", []string{"audit", "--model", frozen, "--cohort", recoded, "--outcome", "complication", "--event", "1", "--non-event", "0", "--out", filepath.Join(dir, "a")},
			exitCriterion, "  outcome     read from column complication, event 1 (the model's: ppc_30d = yes)\n", warn, ""},
		{"quiet: the warning still goes to stderr", []string{"audit", "--model", frozen, "--cohort", recoded, "--outcome", "complication", "--event", "1", "--out", filepath.Join(dir, "b"), "-q"},
			exitCriterion, "", warn, "outcome"},
		{"the plan's keys do the same", []string{"audit", "--plan", plan},
			exitCriterion, "  outcome     read from column complication, event 1 (the model's: ppc_30d = yes)\n", warn, ""},
		{"no flags: the absent column hints at them", []string{"audit", "--model", frozen, "--cohort", recoded, "--out", filepath.Join(dir, "c")},
			exitBadInput, "", `asked for as the model's outcome (a cohort that names or codes it otherwise can say so with --outcome, --event and --non-event)`, ""},
		{"no cohort: refused, the development data keep the model's codes", []string{"audit", "--model", frozen, "--dev", filepath.Join(demo, "development.csv"), "--event", "1", "--out", filepath.Join(dir, "d")},
			exitUsage, "", "the development data (--dev) are read with the model's own codes", ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var stdout, stderr bytes.Buffer
			code := run(context.Background(), tc.args, &streams{out: &stdout, err: &stderr})
			if code != tc.code {
				t.Fatalf("exit status %d, want %d; stderr:\n%s", code, tc.code, stderr.String())
			}
			if !strings.Contains(stdout.String(), tc.out) {
				t.Errorf("stdout lacks %q:\n%s", tc.out, stdout.String())
			}
			if !strings.Contains(stderr.String(), tc.err) {
				t.Errorf("stderr lacks %q:\n%s", tc.err, stderr.String())
			}
			if tc.notInOut != "" && strings.Contains(stdout.String(), tc.notInOut) {
				t.Errorf("stdout holds %q:\n%s", tc.notInOut, stdout.String())
			}
		})
	}
}
