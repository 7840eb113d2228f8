package report

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/trend"
	"github.com/riskaudit/riskaudit/validate"
)

// noNonNumbers fails when text shows a number that does not exist.
func noNonNumbers(t *testing.T, what, text string) {
	t.Helper()
	for _, bad := range []string{"NaN", "Inf", "9223372036854775808"} {
		if i := strings.Index(text, bad); i >= 0 {
			t.Errorf("%s shows %q: …%s…", what, bad, text[max(0, i-100):min(len(text), i+40)])
		}
	}
}

// TestNoNonNumbersInText fills every number of an audit that the data
// can leave undefined with NaN or ±Inf — the measures, their intervals,
// the verdict, the development data, the fit, the internal validation,
// the bootstrap intervals, the updating and the subgroups — and checks
// that the report and the summary write them as words ("not estimable",
// ∞), never as "NaN" or "Inf"; likewise the comparison and the trend.
func TestNoNonNumbersInText(t *testing.T) {
	nan, inf := math.NaN(), math.Inf(1)
	nn := [2]float64{nan, nan}
	perf, err := validate.Assess([]float64{0, 1, 0, 1, 1, 0}, []float64{0.1, 0.8, 0.3, 0.6, 0.9, 0.2}, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	d, c, o := &perf.Discrimination, &perf.Calibration, &perf.Overall
	d.AUC, d.SE, d.CI, d.LogitCI = nan, nan, nn, nn
	c.CITL, c.CITLSE, c.CITLCI, c.Slope, c.SlopeSE, c.SlopeCI = nan, nan, nn, nan, nan, nn
	c.OE, c.OECI, c.ICI, c.E50, c.E90, c.Emax = inf, [2]float64{nan, inf}, nan, nan, nan, nan
	c.HL.Statistic, c.HL.P = inf, nan
	o.Brier, o.ScaledBrier = nan, math.Inf(-1)
	for i := range perf.NetBenefit {
		perf.NetBenefit[i].Model, perf.NetBenefit[i].TreatAll = nan, nan
	}
	a := validate.NewAudit(validate.ModelInfo{Name: "m"}, validate.Provenance{}, perf, perf, "dev.csv")
	v, err := validate.Judge(perf, validate.DefaultCriteria())
	if err != nil {
		t.Fatal(err)
	}
	a.Verdict = v
	a.Development.Fit = &model.FitReport{FitStats: model.FitStats{
		Terms:  []model.TermStat{{Term: "x", Coef: inf, SE: nan, Z: nan, P: nan, OddsRatio: inf, ORCI: [2]float64{nan, inf}}},
		Neg2LL: nan, NullNeg2LL: nan, LRChi2: nan, LRP: nan, AIC: nan, BIC: inf, NagelkerkeR2: nan,
		HL: metrics.HosmerLemeshowTest{Statistic: nan, P: nan, Groups: 1}}}
	corr := validate.Corrected{Apparent: nan, Optimism: nan, Corrected: nan}
	a.SetInternal(&validate.Internal{Bootstrap: 10, Failed: 10, Shrinkage: nan, Metrics: validate.InternalMetrics{AUC: corr, Slope: corr, CITL: corr, Brier: corr, ScaledBrier: corr, R2: corr, ICI: corr}})
	a.BootstrapCI = &validate.PercentileCIs{Replicates: 10, ICI: nn, E50: nn, E90: nn, ScaledBrier: nn}
	for _, nb := range perf.NetBenefit {
		a.BootstrapCI.NetBenefit = append(a.BootstrapCI.NetBenefit, validate.ThresholdCI{Threshold: nb.Threshold, CI: nn})
	}
	a.Update = &validate.Update{Steps: []validate.UpdateStep{{Method: "revision", Neg2LL: nan, AIC: inf}},
		Tests: []validate.UpdateTest{{Simpler: "recalibration", LRChi2: nan, P: nan}}, Chosen: "none",
		Expected: &validate.InternalMetrics{AUC: corr, Slope: corr, CITL: corr, Brier: corr}}
	auc := 0.7
	a.Subgroups = []validate.Subgroup{{Column: "site", Level: "a", N: 50, Events: 20, AUC: &auc, AUCCI: &nn, OE: &c.OE, OECI: &c.OECI}}
	var b bytes.Buffer
	if err := Write(&b, a, nil); err != nil {
		t.Fatal(err)
	}
	md := b.String()
	noNonNumbers(t, "report.md", md)
	for _, want := range []string{"not estimable", "∞", "cannot be judged: not estimable", "not computable (1 group"} {
		if !strings.Contains(md, want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	b.Reset()
	if err := WriteSummary(&b, a, "out", 4); err != nil {
		t.Fatal(err)
	}
	noNonNumbers(t, "the summary", b.String())
	if !strings.Contains(b.String(), "AUC         not estimable") {
		t.Errorf("summary:\n%s", b.String())
	}

	cmp := &validate.Comparison{ModelA: "a", ModelB: "b"}
	cmp.DeLong = metrics.PairedDeLong{AUCA: nan, AUCB: nan, Difference: nan, DifferenceSE: nan, DifferenceCI: nn, Z: nan, P: nan, Correlation: nan}
	cmp.Brier.A, cmp.Brier.B, cmp.Brier.Difference, cmp.Brier.DifferenceCI = nan, nan, nan, nn
	cmp.NetBenefit = []validate.NetBenefitPair{{Threshold: 0.1, A: nan, B: nan, TreatAll: nan}}
	b.Reset()
	if err := WriteComparison(&b, cmp, "d.svg"); err != nil {
		t.Fatal(err)
	}
	noNonNumbers(t, "compare.md", b.String())

	tr, err := trend.Build([]history.Record{{AuditDate: "2026-01-31", Expected: 50, AUC: [3]float64{nan, nan, nan}, OE: [3]float64{1, nan, nan},
		Slope: [3]float64{nan, nan, nan}, CITL: [3]float64{nan, nan, nan}}})
	if err != nil {
		t.Fatal(err)
	}
	b.Reset()
	if err := WriteTrend(&b, tr, "h.sqlite", nil); err != nil {
		t.Fatal(err)
	}
	noNonNumbers(t, "trend.md", b.String())
}
