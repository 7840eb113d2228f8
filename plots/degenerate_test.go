package plots

import (
	"math"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/trend"
	"github.com/riskaudit/riskaudit/validate"
)

// checkSVG fails when a figure shows a number that does not exist.
func checkSVG(t *testing.T, name string, svg []byte) {
	t.Helper()
	for _, bad := range []string{"NaN", "Inf", "9223372036854775808"} {
		if strings.Contains(string(svg), bad) {
			t.Errorf("%s shows %q", name, bad)
		}
	}
}

// TestDegenerateFigures draws every figure of cohorts whose intervals or
// curves degenerate — every risk tied, one event, a separating risk —
// and subgroup and trend charts holding measures that are NaN (before,
// the ROC legend read "95% CI NaN–NaN" and a NaN interval or point made
// gonum/plot refuse the whole figure).
func TestDegenerateFigures(t *testing.T) {
	tied := make([]float64, 200)
	ytied := make([]float64, 200)
	for i := range tied {
		tied[i] = 0.2
		if i < 57 {
			ytied[i] = 1
		}
	}
	cohorts := map[string][2][]float64{
		"every risk tied": {ytied, tied},
		"one event":       {{0, 0, 0, 0, 0, 0, 0, 1, 0, 0}, {0.05, 0.08, 0.11, 0.14, 0.17, 0.2, 0.23, 0.26, 0.29, 0.32}},
		"AUC 1":           {{0, 0, 0, 1, 1}, {0.1, 0.2, 0.3, 0.6, 0.7}},
		"two rows":        {{1, 0}, {0.3, 0.2}},
		"risks 0 and 1":   {{0, 0, 1, 1, 0, 1}, {0, 0, 1, 1, 0, 1}},
	}
	for name, c := range cohorts {
		perf, err := validate.Assess(c[0], c[1], validate.Options{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		figs, err := All(perf, name)
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		for _, f := range figs {
			checkSVG(t, name+": "+f.Name, f.SVG)
		}
		if name == "every risk tied" && !strings.Contains(string(figs[1].SVG), "AUC 0.500 (95% CI not estimable)") {
			t.Errorf("%s: the ROC legend does not say the interval is not estimable", name)
		}
	}
	nan := math.NaN()
	auc, ci, oe, oeci := 0.7, [2]float64{nan, nan}, 1.1, [2]float64{0.9, 1.3}
	groups := []validate.Subgroup{
		{Column: "sex", Level: "F", N: 100, Events: 30, AUC: &auc, AUCCI: &ci, OE: &oe, OECI: &oeci},
		{Column: "sex", Level: "M", N: 10, Events: 2, TooSmall: true},
	}
	whole, err := validate.Assess(ytied, tied, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	f, err := Forest(groups, whole)
	if err != nil {
		t.Fatalf("subgroups with an AUC interval that is NaN: %v", err)
	}
	checkSVG(t, "subgroups.svg", f.SVG)
	if !strings.Contains(string(f.SVG), "hollow square: interval not estimable") {
		t.Error("the subgroup chart does not say which interval is not estimable")
	}
	rec := func(date string, slope [3]float64) history.Record {
		return history.Record{AuditDate: date, Used: 500, Events: 60, Expected: 55, AUC: [3]float64{0.72, 0.66, 0.78},
			OE: [3]float64{1.09, 0.85, 1.4}, Slope: slope, CITL: [3]float64{0.1, -0.15, 0.35}}
	}
	tr, err := trend.Build([]history.Record{rec("2026-01-31", [3]float64{1, 0.8, 1.2}), rec("2026-02-28", [3]float64{nan, nan, nan}),
		rec("2026-03-31", [3]float64{0.9, nan, nan})})
	if err != nil {
		t.Fatal(err)
	}
	figs, err := Trend(tr)
	if err != nil {
		t.Fatalf("a trend with NaN measures: %v", err)
	}
	for _, f := range figs {
		checkSVG(t, f.Name, f.SVG)
		if f.Name == "trend_slope.svg" && !strings.Contains(string(f.SVG), "1 audit not estimable") {
			t.Error("the slope trend does not say that an audit has no point")
		}
	}
}

// TestCaseMixWithoutDifferences: a predictor whose standardised
// difference does not exist (constant at different values in the two
// cohorts) is drawn without a bar, marked, and does not fail the figure.
func TestCaseMixWithoutDifferences(t *testing.T) {
	nan := math.NaN()
	cm := &validate.CaseMix{LPEdges: []float64{-3, -2, -1}, LPDev: []float64{0.5, 0.5}, LPNew: []float64{0.4, 0.6},
		Predictors: []validate.PredictorMix{
			{Column: "age", Kind: "numeric", StdDiff: []float64{0.2}},
			{Column: "site", Kind: "numeric", StdDiff: []float64{nan}},
		}}
	figs, err := CaseMix(cm)
	if err != nil {
		t.Fatal(err)
	}
	svg := string(figs[1].SVG)
	if strings.Contains(svg, "NaN") || !strings.Contains(svg, "site (none)") {
		t.Errorf("the figure draws NaN or does not mark the predictor without a difference")
	}
}
