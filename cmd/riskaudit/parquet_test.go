package main

import (
	"context"
	"io"
	"math"
	"path/filepath"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/fixture"
)

// TestScoreParquetMatchesCSV scores the demo extract as CSV and as
// Parquet: the Parquet output holds the same linear predictors and risks,
// null where the CSV output has empty fields.
func TestScoreParquetMatchesCSV(t *testing.T) {
	dir := t.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	demo := filepath.Join(dir, "d")
	if err := runDemo(context.Background(), demo, s); err != nil {
		t.Fatal(err)
	}
	csv, pq := filepath.Join(demo, "later.csv"), filepath.Join(dir, "later.parquet")
	fixture.ToParquet(t, csv, pq, 1000)
	for _, args := range [][]string{
		{"score", "--model", filepath.Join(demo, "frozen.yaml"), "--data", csv, "--out", filepath.Join(dir, "scored.csv"), "-q"},
		{"score", "--model", filepath.Join(demo, "frozen.yaml"), "--data", pq, "--out", filepath.Join(dir, "scored.parquet"), "-q"},
	} {
		if code := run(context.Background(), args, s); code != 0 {
			t.Fatalf("%v: exit status %d", args, code)
		}
	}
	reqs := []cohort.Request{{Name: audit.LPColumn, Kind: cohort.Numeric}, {Name: audit.RiskColumn, Kind: cohort.Numeric}, {Name: "age", Kind: cohort.Numeric}}
	a, err := cohort.Load(filepath.Join(dir, "scored.csv"), reqs, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := cohort.Load(filepath.Join(dir, "scored.parquet"), reqs, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if a.Rows != b.Rows || a.Column(audit.LPColumn).Missing == 0 || a.Column(audit.LPColumn).Missing != b.Column(audit.LPColumn).Missing {
		t.Fatalf("rows %d/%d, unscored %d/%d", a.Rows, b.Rows, a.Column(audit.LPColumn).Missing, b.Column(audit.LPColumn).Missing)
	}
	for _, name := range []string{audit.LPColumn, audit.RiskColumn, "age"} {
		for i := 0; i < a.Rows; i++ {
			x, y := a.Column(name).Num[i], b.Column(name).Num[i]
			// The CSV holds the shortest text that reads back exactly.
			if !(x == y || math.IsNaN(x) && math.IsNaN(y)) {
				t.Fatalf("%s row %d: CSV %v, Parquet %v", name, i, x, y)
			}
		}
	}
}
