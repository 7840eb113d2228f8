package audit_test

import (
	"context"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/fixture"
)

// TestLimitationsWithoutSubgroups: the summary names the sample-size
// shortfall and the complete-case loss of the demo's later extract
// (2772 of 3000 rows analysed, 7.6% left out, short of the slope
// criterion's 5578) with and without subgroups; they were once added
// only when subgroups were measured.
func TestLimitationsWithoutSubgroups(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	for _, sub := range [][]string{nil, {"hospital"}} {
		cfg := audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, Subgroups: sub, Clock: fixedClock}
		res, err := audit.Run(context.Background(), cfg)
		if err != nil {
			t.Fatal(err)
		}
		areas := map[string]int{}
		for _, f := range res.Audit.Summary {
			areas[f.Area]++
		}
		if areas["sample size"] != 1 || areas["missing data"] != 1 {
			t.Errorf("subgroups %v: summary areas %v, want one sample size and one missing data finding", sub, areas)
		}
	}
}
