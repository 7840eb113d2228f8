package plan

import (
	"os"
	"path/filepath"
	"testing"
)

// TestDateColumnAndPeriods: the keys of the cohort in date order are read
// and marked as set (so a flag can override them).
func TestDateColumnAndPeriods(t *testing.T) {
	for _, tt := range []struct{ yaml, column, periods string }{
		{"date_column: admitted\n", "admitted", ""},
		{"date_column: admitted\nperiods: quarter\n", "admitted", "quarter"},
		{"date_column: op_date\nperiods: 500\n", "op_date", "500"},
	} {
		path := filepath.Join(t.TempDir(), "plan.yaml")
		if err := os.WriteFile(path, []byte(tt.yaml), 0o644); err != nil {
			t.Fatal(err)
		}
		pl, err := Load(path)
		if err != nil {
			t.Fatalf("%q: %v", tt.yaml, err)
		}
		if pl.DateColumn != tt.column || pl.Periods != tt.periods || !pl.Set["date_column"] || pl.Set["periods"] != (tt.periods != "") {
			t.Errorf("%q: date_column %q periods %q set %v; want %q %q", tt.yaml, pl.DateColumn, pl.Periods, pl.Set, tt.column, tt.periods)
		}
	}
}
