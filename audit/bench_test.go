package audit_test

import (
	"context"
	"os"
	"path/filepath"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/scenario"
	"github.com/riskaudit/riskaudit/validate"
)

// benchAudit runs the whole audit of cohort with the demo's frozen model
// (7 predictors, 9 terms): reading, scoring, every measure, the figures,
// the report and the JSON, written to disk; no bootstrap.
func benchAudit(b *testing.B, d fixture.Demo, cohortFile string) {
	cfg := audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: cohortFile}, Measures: validate.Options{Delta: validate.AutoDelta},
		GCPercent: 25}
	out := filepath.Join(b.TempDir(), "audit")
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		res, err := audit.Run(context.Background(), cfg)
		if err != nil {
			b.Fatal(err)
		}
		if _, err := audit.Write(out, res, audit.WriteOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkAudit1M is the audit of a 1M-row CSV cohort.
func BenchmarkAudit1M(b *testing.B) {
	d := fixture.WriteDemo(b, b.TempDir())
	big := scenario.Later
	big.Rows = 1_000_000
	cohortFile := filepath.Join(d.Dir, "big.csv")
	if err := os.WriteFile(cohortFile, big.CSV(), 0o644); err != nil {
		b.Fatal(err)
	}
	benchAudit(b, d, cohortFile)
}

// BenchmarkAuditParquet10M audits a 10M-row Parquet cohort (the file is
// written once, outside the timing).
func BenchmarkAuditParquet10M(b *testing.B) {
	d := fixture.WriteDemo(b, b.TempDir())
	big := scenario.Later
	big.Rows = 10_000_000
	csv := filepath.Join(d.Dir, "big.csv")
	if err := os.WriteFile(csv, big.CSV(), 0o644); err != nil {
		b.Fatal(err)
	}
	pq := filepath.Join(d.Dir, "big.parquet")
	fixture.ToParquet(b, csv, pq, 1<<20)
	os.Remove(csv)
	benchAudit(b, d, pq)
}
