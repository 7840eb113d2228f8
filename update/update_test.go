package update

import (
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/reftest"
	"github.com/riskaudit/riskaudit/model"
)

type ref struct {
	Beta   []float64 `json:"beta"`
	Neg2LL []float64 `json:"neg2ll"`
	Tests  []struct {
		LR float64 `json:"lr_chi2"`
		DF int     `json:"df"`
		P  float64 `json:"p"`
	} `json:"tests"`
	InTheLarge    float64   `json:"in_the_large"`
	Recalibration []float64 `json:"recalibration"`
	Revision      []float64 `json:"revision"`
}

// TestClosedTestMatchesStatsmodels: the four deviances, the updating
// coefficients and the likelihood-ratio tests against testdata/reference/
// update.json (statsmodels' binomial GLM with offset, scipy's chi-square
// tail), for an invented, miscalibrated model of the Wisconsin data.
func TestClosedTestMatchesStatsmodels(t *testing.T) {
	var r ref
	reftest.JSON(t, "update.json", &r)
	spec, err := model.LoadSpec("../testdata/reference/recipes/wdbc_linear.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, _, m, err := model.Load(spec, "../testdata/open/wdbc.csv", cohort.Options{}, model.Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	res, err := ClosedTest(m.X, m.N, m.P, m.Y, r.Beta, 0.05)
	if err != nil {
		t.Fatal(err)
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-6*math.Max(1, math.Abs(want)) {
			t.Errorf("%s = %.10g, reference %.10g", what, got, want)
		}
	}
	for i, s := range res.Steps {
		near(s.Method+" −2LL", s.Neg2LL, r.Neg2LL[i])
	}
	for i, tt := range res.Tests {
		near(tt.Simpler+" LR", tt.LRChi2, r.Tests[i].LR)
		near(tt.Simpler+" p", tt.P, r.Tests[i].P)
		if tt.DF != r.Tests[i].DF {
			t.Errorf("%s df %d, reference %d", tt.Simpler, tt.DF, r.Tests[i].DF)
		}
	}
	// The original model and recalibration in the large are rejected
	// against the revision, logistic recalibration is not (p ≈ 0.057):
	// it is kept, and the coefficients become a + b·β₀ and b·βⱼ.
	if res.Chosen != Recalibration {
		t.Fatalf("chose %s", res.Chosen)
	}
	a, bb := r.Recalibration[0], r.Recalibration[1]
	for j, beta := range r.Beta {
		want := bb * beta
		if j == 0 {
			want += a
		}
		near("recalibrated coefficient", res.Coef[j], want)
	}
}

// TestClosedTestKeepsSimplestAdequate: outcomes drawn from the model
// itself shifted in the large lead to recalibration in the large.
func TestClosedTestKeepsSimplestAdequate(t *testing.T) {
	spec, _ := model.LoadSpec("../testdata/reference/recipes/wdbc_linear.yaml")
	_, d, m, err := model.Load(spec, "../testdata/open/wdbc.csv", cohort.Options{}, model.Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	f, err := model.Fit(d, m, model.FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	beta := append([]float64(nil), f.Result.Coef...)
	beta[0] -= 1.0 // a model that is right but for its intercept
	res, err := ClosedTest(m.X, m.N, m.P, m.Y, beta, 0.05)
	if err != nil {
		t.Fatal(err)
	}
	if res.Chosen != InTheLarge {
		t.Fatalf("chose %s, want %s (tests %+v)", res.Chosen, InTheLarge, res.Tests)
	}
	if math.Abs(res.Coef[0]-f.Result.Coef[0]) > 1e-6 {
		t.Errorf("updated intercept %v, the fit's %v", res.Coef[0], f.Result.Coef[0])
	}
}
