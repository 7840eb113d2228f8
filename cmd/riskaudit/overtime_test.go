package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestOverTimeFlags: each flag of the cohort in date order refuses a bad
// value with exit status 2 and one line naming the flag; a good run
// prints the charts' first signals.
func TestOverTimeFlags(t *testing.T) {
	dir := t.TempDir()
	cohort := filepath.Join(dir, "dated.csv")
	var b strings.Builder
	b.WriteString("day,risk,event\n")
	for i := range 600 {
		fmt.Fprintf(&b, "2026-%02d-%02d,%.2f,%d\n", 1+i/60, 1+i%28, 0.1+0.02*float64(i%10), (i*7)%10/9)
	}
	if err := os.WriteFile(cohort, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	base := []string{"audit", "--predicted", "risk", "--outcome", "event", "--event", "1", "--cohort", cohort, "--date-column", "day", "--cusum-arl", "100"}
	for _, tt := range []struct {
		args []string
		want string
	}{
		{[]string{"--period", "weekly"}, "--period weekly"},
		{[]string{"--period", "1"}, "--period 1"},
		{[]string{"--cusum-odds", "2"}, "--cusum-odds 2: give two odds ratios"},
		{[]string{"--cusum-odds", "0.5,2"}, "deterioration odds ratio must be a number above 1"},
		{[]string{"--cusum-arl", "5"}, "--cusum-arl 5"},
		{[]string{"--ewma-lambda", "0"}, "--ewma-lambda 0"},
		{[]string{"--ewma-width", "-1"}, "--ewma-width -1"},
	} {
		var out, errb bytes.Buffer
		args := append(append(append([]string{}, base...), tt.args...), "--out", filepath.Join(dir, "bad"))
		code := run(context.Background(), args, &streams{out: &out, err: &errb})
		if code != exitUsage || !strings.Contains(errb.String(), tt.want) {
			t.Errorf("%v: exit %d, stderr %q; want %d and %q", tt.args, code, errb.String(), exitUsage, tt.want)
		}
		if _, err := os.Stat(filepath.Join(dir, "bad")); err == nil {
			t.Errorf("%v: the output folder was written", tt.args)
		}
	}
	var out, errb bytes.Buffer
	code := run(context.Background(), append(base, "--period", "quarter", "--out", filepath.Join(dir, "good")), &streams{out: &out, err: &errb})
	if code != exitOK && code != exitCriterion {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	if !strings.Contains(out.String(), "over time   deterioration chart") {
		t.Errorf("summary lacks the over-time line:\n%s", out.String())
	}
	md, err := os.ReadFile(filepath.Join(dir, "good", "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"## Performance over time", "### Calibration by quarter", "| 2026-Q1 ", "over_time_cusum.svg"} {
		if !strings.Contains(string(md), want) {
			t.Errorf("report lacks %q", want)
		}
	}
}

// TestOverTimeNoReadableDate: a date column written day first, which no
// row reads as a date, is refused with exit status 3 and a line that
// shows the first such value and the forms that do read.
func TestOverTimeNoReadableDate(t *testing.T) {
	dir := t.TempDir()
	cohort := filepath.Join(dir, "dmy.csv")
	var b strings.Builder
	b.WriteString("day,risk,event\n")
	for i := range 200 {
		fmt.Fprintf(&b, "%02d/%02d/2026,%.2f,%d\n", 13+i%15, 1+i/20, 0.1+0.02*float64(i%10), (i*7)%10/9)
	}
	if err := os.WriteFile(cohort, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errb bytes.Buffer
	args := []string{"audit", "--predicted", "risk", "--outcome", "event", "--event", "1", "--cohort", cohort, "--date-column", "day", "--out", filepath.Join(dir, "out")}
	code := run(context.Background(), args, &streams{out: &out, err: &errb})
	want := `column "day": no audited row has a readable date, so nothing can be charted over time (the first, "13/01/2026", is not a date: give YYYY-MM-DD or an RFC 3339 time)`
	if code != exitBadInput || !strings.Contains(errb.String(), want) {
		t.Errorf("exit %d, stderr %q; want %d and %q", code, errb.String(), exitBadInput, want)
	}
	if _, err := os.Stat(filepath.Join(dir, "out")); err == nil {
		t.Error("the output folder was written")
	}
}
