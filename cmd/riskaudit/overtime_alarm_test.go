package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestAlarmCriterionExitStatus: a plan that makes a CUSUM alarm a
// criterion shows it in the exit status. On a dated cohort whose events
// are far rarer than its risks say (one in 50 rows against risks of
// 10–28%), the improvement chart signals: with the criterion at review
// the exit status is 1 (criterion missed) and audit.json's verdict names
// the measure; the same plan with an alarm the cohort does not raise
// passes that criterion; and an alarm criterion without a date column is
// refused with status 2 before anything is written.
func TestAlarmCriterionExitStatus(t *testing.T) {
	dir := t.TempDir()
	cohort := filepath.Join(dir, "dated.csv")
	var b strings.Builder
	b.WriteString("day,risk,event\n")
	for i := range 600 {
		ev := 0
		if i%50 == 0 {
			ev = 1
		}
		fmt.Fprintf(&b, "2026-%02d-%02d,%.2f,%d\n", 1+i/60, 1+i%28, 0.1+0.02*float64(i%10), ev)
	}
	if err := os.WriteFile(cohort, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	plan := func(name, dateColumn, measure string) string {
		p := filepath.Join(dir, name+".yaml")
		text := "criteria:\n  - {measure: " + measure + ", at_most: 0, severity: review, source: \"a signal asks for a look\"}\n"
		if dateColumn != "" {
			text = "date_column: " + dateColumn + "\n" + text
		}
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	base := []string{"audit", "--predicted", "risk", "--outcome", "event", "--event", "1", "--cohort", cohort, "--cusum-arl", "100", "-q"}
	verdict := func(out string) map[string]string {
		raw, err := os.ReadFile(filepath.Join(out, "audit.json"))
		if err != nil {
			t.Fatal(err)
		}
		var doc struct {
			OverTime struct {
				CUSUM []struct {
					Name    string `json:"name"`
					Signals int    `json:"signals"`
				} `json:"cusum"`
			} `json:"over_time"`
			Verdict struct {
				Criteria []struct{ Measure, Result string } `json:"criteria"`
			} `json:"verdict"`
		}
		if err := json.Unmarshal(raw, &doc); err != nil {
			t.Fatal(err)
		}
		if len(doc.OverTime.CUSUM) != 2 || doc.OverTime.CUSUM[1].Signals == 0 {
			t.Fatalf("the improvement chart did not signal (%+v): the test's cohort no longer raises the alarm", doc.OverTime.CUSUM)
		}
		res := map[string]string{}
		for _, c := range doc.Verdict.Criteria {
			res[c.Measure] = c.Result
		}
		return res
	}
	for _, tt := range []struct {
		measure string
		code    int
	}{
		{"cusum_improvement_signals", exitCriterion},
		{"ewma_above", exitOK},
	} {
		out := filepath.Join(dir, tt.measure)
		var so, se bytes.Buffer
		code := run(context.Background(), append(append([]string{}, base...), "--plan", plan(tt.measure, "day", tt.measure), "--out", out), &streams{out: &so, err: &se})
		if code != tt.code {
			t.Errorf("%s: exit status %d, want %d (%s)", tt.measure, code, tt.code, se.String())
			continue
		}
		v := verdict(out)
		if _, ok := v[tt.measure]; !ok {
			t.Errorf("%s: audit.json's verdict does not judge it: %v", tt.measure, v)
		}
	}
	var so, se bytes.Buffer
	out := filepath.Join(dir, "undated")
	code := run(context.Background(), append(append([]string{}, base...), "--plan", plan("undated", "", "cusum_improvement_signals"), "--out", out), &streams{out: &so, err: &se})
	if code != exitUsage || !strings.Contains(se.String(), "--date-column") {
		t.Errorf("alarm criterion without a date column: exit %d, stderr %q; want %d naming --date-column", code, se.String(), exitUsage)
	}
	if _, err := os.Stat(out); err == nil {
		t.Error("the refused audit wrote its folder")
	}
}
