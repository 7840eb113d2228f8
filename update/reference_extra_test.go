package update

import (
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/reftest"
	"github.com/riskaudit/riskaudit/model"
)

// TestStepAICMatchesStatsmodels: the AIC of every updating step against
// statsmodels GLM(...).aic (testdata/reference/extra.json, the models of
// update.json); the original model estimates nothing, so its AIC is its
// −2 log-likelihood.
func TestStepAICMatchesStatsmodels(t *testing.T) {
	var r struct {
		AIC []float64 `json:"update_aic"`
	}
	reftest.JSON(t, "extra.json", &r)
	var u ref
	reftest.JSON(t, "update.json", &u)
	spec, err := model.LoadSpec("../testdata/reference/recipes/wdbc_linear.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, _, m, err := model.Load(spec, "../testdata/open/wdbc.csv", cohort.Options{}, model.Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	res, err := ClosedTest(m.X, m.N, m.P, m.Y, u.Beta, 0.05)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Steps) != len(r.AIC) {
		t.Fatalf("%d steps, reference %d", len(res.Steps), len(r.AIC))
	}
	for i, s := range res.Steps {
		if math.Abs(s.AIC-r.AIC[i]) > 1e-6*math.Max(1, r.AIC[i]) {
			t.Errorf("%s AIC = %.10g, statsmodels %.10g", s.Method, s.AIC, r.AIC[i])
		}
	}
}
