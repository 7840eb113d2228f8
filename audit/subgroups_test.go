package audit_test

import (
	"context"
	"errors"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/validate"
)

// TestRunBandsAndSubgroupCriteria: a Go caller bands a numeric column
// through Config.Bands, and Config.SubgroupCriteria decides how the
// subgroup checks count. On the demo's later extract AUC ≥ 0.72 holds
// for the whole cohort (0.746) and fails in each of the three age bands
// (the same facts verdicts.txtar checks through the command line).
func TestRunBandsAndSubgroupCriteria(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	crit := []validate.Criterion{{Measure: "auc", AtLeast: ptr(0.72)}}
	for _, c := range []struct{ mode, want string }{
		{"", "review"}, {validate.SubgroupReview, "review"}, {validate.SubgroupFail, "fail"}, {validate.SubgroupIgnore, "pass"},
	} {
		res, err := audit.Run(context.Background(), audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: d.Later},
			Criteria: crit, Bands: []validate.Banding{{Column: "age", Cuts: []float64{65, 75}}}, SubgroupCriteria: c.mode, Tool: "riskaudit test"})
		if err != nil {
			t.Fatal(err)
		}
		a := res.Audit
		if a.Verdict.Status != c.want || a.Verdict.Criteria[0].Passed != true {
			t.Errorf("mode %q: verdict %s, want %s", c.mode, a.Verdict.Status, c.want)
		}
		if n := a.Verdict.CountSubgroups(); n != (validate.SubgroupCounts{Checks: 3, Judged: 3, Failed: 3}) {
			t.Errorf("mode %q: %+v", c.mode, n)
		}
		if len(a.Subgroups) != 3 || a.Subgroups[1].Level != "65-<75" || a.Subgroups[1].Band == nil || *a.Subgroups[1].Band != (validate.Band{Lower: 65, Upper: 75}) {
			t.Errorf("mode %q: subgroups %+v", c.mode, a.Subgroups)
		}
		if len(a.SubgroupBands) != 1 || a.SubgroupBands[0].Column != "age" {
			t.Errorf("mode %q: bands %+v", c.mode, a.SubgroupBands)
		}
		found := false
		for _, f := range a.Summary {
			found = found || (f.Area == "subgroups" && strings.Contains(f.Text, "3 of 3 subgroup checks are not met"))
		}
		if !found {
			t.Errorf("mode %q: no subgroup finding in %+v", c.mode, a.Summary)
		}
	}
	// A categorical predictor cannot be banded, and a mode must be known.
	for _, cfg := range []audit.Config{
		{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, Bands: []validate.Banding{{Column: "sex", Cuts: []float64{1}}}},
		{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, Subgroups: []string{"sex"}, SubgroupCriteria: "warn"},
		{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, Bands: []validate.Banding{{Column: "age", Cuts: []float64{75, 65}}}},
	} {
		var ce *audit.ConfigError
		if _, err := audit.Run(context.Background(), cfg); !errors.As(err, &ce) {
			t.Errorf("%+v: %v, want a *ConfigError", cfg.Bands, err)
		}
	}
}

func ptr(v float64) *float64 { return &v }
