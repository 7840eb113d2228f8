package main

import (
	"math"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/model"
)

// TestFitSummaryHasWordsForMissingValues: a Firth fit whose p-value was
// not computed, whose odds ratio overflows float64, whose interval ends
// were not found or are unbounded, and whose Hosmer–Lemeshow test has no
// statistic prints words and the notes, never NaN or Inf (issue 11: "p
// n/a" and "Hosmer–Lemeshow NaN").
func TestFitSummaryHasWordsForMissingValues(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	st := model.FitStats{
		Method: "Firth penalised likelihood", N: 40, Events: 20, Iterations: 9, PMethod: model.PPenalisedLR,
		CIMethod: model.CIProfilePenalised, Convergence: model.Convergence,
		Terms: []model.TermStat{
			{Term: "intercept", Coef: 0.1, SE: 1, Z: 0.1, P: nan, OddsRatio: math.Exp(0.1), CoefCI: [2]float64{nan, 2}, ORCI: [2]float64{nan, math.Exp(2)},
				Notes: []string{"p, plr_chi2: not computed: the refit failed", "coef_ci, or_ci: the lower end was not found: the refits failed"}},
			{Term: "x", Coef: 800, SE: 200, Z: 4, P: 1e-5, OddsRatio: inf, CoefCI: [2]float64{400, inf}, ORCI: [2]float64{math.Exp(400), inf},
				Notes: []string{"odds_ratio: exp(800) exceeds the largest float64"}},
		},
		HL:    metrics.HosmerLemeshowTest{Statistic: nan, DF: 2, P: nan, Groups: 4},
		Notes: []string{"hosmer_lemeshow: not computed: in 1 of the 4 risk groups every predicted risk is 0 or 1"},
	}
	spec, err := model.ParseSpec("r.yaml", []byte("outcome: {column: y, event: 1}\npredictors:\n  - column: x\n"))
	if err != nil {
		t.Fatal(err)
	}
	r := &audit.FitResult{Fitted: &model.Fitted{Design: &model.Design{Spec: spec}, Stats: st},
		Report: &model.FitReport{DataSHA256: strings.Repeat("ab", 32), FitStats: st}}
	var b strings.Builder
	writeFitSummary(&b, r, &fitOptions{model: "r.yaml", dataFile: "d.csv", out: "f.yaml"})
	out := b.String()
	for _, bad := range []string{"NaN", "Inf", "n/a"} {
		if strings.Contains(out, bad) {
			t.Errorf("the summary prints %q:\n%s", bad, out)
		}
	}
	for _, want := range []string{"not computed", "not found", "exp(800)", "5.221e+173 – unbounded", "Hosmer–Lemeshow     not computed (4 risk groups)",
		"note: intercept: p, plr_chi2: not computed", "note: x: odds_ratio", "note: hosmer_lemeshow: not computed", "converged   |ΔD|"} {
		if !strings.Contains(out, want) {
			t.Errorf("the summary lacks %q:\n%s", want, out)
		}
	}
}
