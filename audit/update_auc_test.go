package audit_test

import (
	"context"
	"path/filepath"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/fixture"
)

// TestUpdateKeepingRankHasNoAUCOptimism: recalibration in the large (the
// demo's drifted extract chooses it) shifts every linear predictor by
// one constant, so no bootstrap refit can change the order of the
// patients: the expected AUC is the apparent one, which is the audit's
// own AUC of the model (the ranking is the model's), whatever the
// replicates' noise.
func TestUpdateKeepingRankHasNoAUCOptimism(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	res, err := audit.Run(context.Background(), audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: d.Later},
		Update: filepath.Join(t.TempDir(), "u.yaml"), UpdateBootstrap: 20, Seed: 4})
	if err != nil {
		t.Fatal(err)
	}
	u := res.Audit.Update
	if u == nil || u.Expected == nil {
		t.Fatal("no expected performance of the update")
	}
	if u.Chosen != "recalibration in the large" {
		t.Fatalf("the demo's extract chose %q; this test needs an update that keeps the ranking", u.Chosen)
	}
	a := u.Expected.AUC
	if a.Optimism != 0 || a.Corrected != a.Apparent || a.Apparent != res.Audit.Performance.Discrimination.AUC {
		t.Errorf("expected AUC %+v; want no optimism and the model's AUC %v", a, res.Audit.Performance.Discrimination.AUC)
	}
	// The other measures keep their bootstrap optimism.
	if u.Expected.Slope.Optimism == 0 {
		t.Error("the slope's optimism is 0 too: the rule must touch only the AUC")
	}
}
