package main

import (
	"io"
	"os"
	"path/filepath"
	"testing"

	"github.com/riskaudit/riskaudit/scenario"
	"github.com/riskaudit/riskaudit/validate"
)

// BenchmarkAudit1M is the whole audit of a 1M-row cohort with the demo's
// frozen model (7 predictors, 9 terms): reading, scoring, every measure,
// the figures, the report and the JSON, written to disk; no bootstrap.
func BenchmarkAudit1M(b *testing.B) {
	dir := b.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	if err := runDemo(filepath.Join(dir, "demo"), s); err != nil {
		b.Fatal(err)
	}
	big := scenario.Later
	big.Rows = 1_000_000
	cohortFile := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(cohortFile, big.CSV(), 0o644); err != nil {
		b.Fatal(err)
	}
	o := &auditOptions{
		model: filepath.Join(dir, "demo", "frozen.yaml"), cohortFile: cohortFile, out: filepath.Join(dir, "audit"),
		thresholds: "0.05:0.50:0.05", classifyAt: []float64{0.1, 0.2}, groups: 10, hlGroups: 10, span: 0.75,
		delta: validate.AutoDelta, epsilon: validate.DefaultEpsilon, data: dataFlags{missing: "complete-case"}, quiet: true,
		size: defaultSize(),
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := runAudit(o, s); err != nil {
			if _, ok := err.(*criterionError); !ok {
				b.Fatal(err)
			}
		}
	}
}
