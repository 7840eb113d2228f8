package metrics

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
)

// TestPairedDeLongMatchesQuadratic compares the paired DeLong test with
// a direct O(n²) transcription of the 1988 covariance formulas in
// testdata/reference/make_reference.py (scipy for the normal tail), on two
// invented models of the Wisconsin data, with and without ties.
func TestPairedDeLongMatchesQuadratic(t *testing.T) {
	b, err := os.ReadFile("../testdata/reference/audit.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref map[string]PairedDeLong
	var raw map[string]json.RawMessage
	if err := json.Unmarshal(b, &raw); err != nil {
		t.Fatal(err)
	}
	ref = map[string]PairedDeLong{}
	for _, k := range []string{"paired_delong", "paired_delong_rounded"} {
		var p PairedDeLong
		if err := json.Unmarshal(raw[k], &p); err != nil {
			t.Fatal(err)
		}
		ref[k] = p
	}
	fr, err := cohort.Load("../testdata/reference/audit_predictions.csv", []cohort.Request{
		{Name: "diagnosis", Kind: cohort.Categorical}, {Name: "risk", Kind: cohort.Numeric}, {Name: "risk_b", Kind: cohort.Numeric}}, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	d := fr.Column("diagnosis")
	y := make([]float64, fr.Rows)
	for i, c := range d.Codes {
		if d.Levels[c] == "M" {
			y[i] = 1
		}
	}
	pa, pb := fr.Column("risk").Num, fr.Column("risk_b").Num
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
