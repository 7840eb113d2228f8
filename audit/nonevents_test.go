package audit_test

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
)

// TestNonEventsNamed: an outcome read without a stated non-event value
// whose rows hold more than one value besides the event gets a summary
// finding and a warning naming each value with its rows (the counts are
// those written here); an outcome of two values gets none, and a stated
// non-event refuses the third value instead.
func TestNonEventsNamed(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, third string) string {
		var b strings.Builder
		b.WriteString("risk,died\n")
		for i := range 300 {
			v := "no"
			switch {
			case i%5 == 0:
				v = "yes"
			case third != "" && i%50 == 1:
				v = third // rows 1, 51, …, 251: 6 rows
			}
			fmt.Fprintf(&b, "%.3f,%s\n", 0.05+0.6*float64(i%17)/17, v)
		}
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(b.String()), 0o600); err != nil {
			t.Fatal(err)
		}
		return path
	}
	run := func(path, nonEvent string) (*audit.Result, error) {
		return audit.Run(context.Background(), audit.Config{Predicted: &audit.Predicted{Column: "risk", Outcome: "died", Event: "yes", NonEvent: nonEvent},
			Cohort: audit.Input{Path: path}, Clock: fixedClock})
	}
	res, err := run(write("three.csv", "unknown"), "")
	if err != nil {
		t.Fatal(err)
	}
	want := `every value other than the event "yes" was counted as a non-event: "unknown" (6 rows), "no" (234 rows)` // in order of first appearance
	if len(res.Warnings) != 1 || !strings.Contains(res.Warnings[0], want) {
		t.Errorf("warnings %q, want one containing %q", res.Warnings, want)
	}
	found := false
	for _, f := range res.Audit.Summary {
		found = found || f.Area == "outcome" && strings.Contains(f.Text, want)
	}
	if !found {
		t.Error("no outcome finding in the summary")
	}
	res, err = run(write("two.csv", ""), "")
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range res.Audit.Summary {
		if f.Area == "outcome" {
			t.Errorf("two values: finding %q", f.Text)
		}
	}
	if _, err := run(filepath.Join(dir, "three.csv"), "no"); err == nil || !strings.Contains(err.Error(), `value "unknown"`) {
		t.Errorf("a stated non-event: %v, want the third value refused", err)
	}
}
