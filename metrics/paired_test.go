package metrics

import (
	"encoding/json"
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/internal/reftest"
)

// TestPairedDeLongMatchesQuadratic compares the paired DeLong test with
// a direct O(n²) transcription of the 1988 covariance formulas in
// testdata/reference/make_reference.py (scipy for the normal tail), on two
// invented models of the Wisconsin data, with and without ties.
func TestPairedDeLongMatchesQuadratic(t *testing.T) {
	var ref map[string]PairedDeLong
	var raw map[string]json.RawMessage
	reftest.JSON(t, "audit.json", &raw)
	ref = map[string]PairedDeLong{}
	for _, k := range []string{"paired_delong", "paired_delong_rounded"} {
		var p PairedDeLong
		if err := json.Unmarshal(raw[k], &p); err != nil {
			t.Fatal(err)
		}
		ref[k] = p
	}
	y, cols := reftest.Predictions(t, "risk", "risk_b")
	pa, pb := cols["risk"], cols["risk_b"]
	ra, rb := make([]float64, len(pa)), make([]float64, len(pb))
	for i := range pa {
		ra[i], rb[i] = math.Round(pa[i]*10)/10, math.Round(pb[i]*10)/10
	}
	for name, in := range map[string][2][]float64{"paired_delong": {pa, pb}, "paired_delong_rounded": {ra, rb}} {
		got, want := DeLongPaired(y, in[0], in[1]), ref[name]
		near(t, name+" auc_a", got.AUCA, want.AUCA, 1e-9)
		near(t, name+" auc_b", got.AUCB, want.AUCB, 1e-9)
		near(t, name+" difference", got.Difference, want.Difference, 1e-9)
		near(t, name+" SE", got.DifferenceSE, want.DifferenceSE, 1e-8)
		near(t, name+" z", got.Z, want.Z, 1e-8)
		near(t, name+" p", got.P, want.P, 1e-6)
		near(t, name+" CI lower", got.DifferenceCI[0], want.DifferenceCI[0], 1e-8)
	}
	// A model compared with itself differs by nothing.
	same := DeLongPaired(y, pa, pa)
	if same.Difference != 0 || same.DifferenceSE > 1e-12 {
		t.Errorf("self-comparison %+v", same)
	}
}
