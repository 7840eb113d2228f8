package validate

import (
	"math"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/metrics"
)

// TestNetBenefitGainNeedsTheMinimum: a gain is claimed only at the
// thresholds where the model beats both default strategies by at least
// the stated minimum; a gain of +0.0000 or +0.0001 (the case of the
// issue) is not a gain.
func TestNetBenefitGainNeedsTheMinimum(t *testing.T) {
	nb := []metrics.NetBenefit{
		{Threshold: 0.05, Model: 0.1000, TreatAll: 0.0999},    // gain 0.0001
		{Threshold: 0.10, Model: 0.0800, TreatAll: 0.0700},    // gain 0.0100
		{Threshold: 0.20, Model: 0.0010, TreatAll: -0.0500},   // gain 0.0010, exactly the minimum
		{Threshold: 0.30, Model: 0.000999, TreatAll: -0.1000}, // just below
	}
	for _, tc := range []struct {
		min  float64
		want string
		not  []string
	}{
		{0.001, "at the thresholds 10%, 20% ", []string{"5%", "30%"}},
		{0.01, "at the thresholds 10% ", []string{"20%"}},
		{0.05, "At none of the risk thresholds", nil},
		{0, "At every risk threshold examined (5% to 30%)", nil},
	} {
		p := &Performance{NetBenefit: nb, NetBenefitMinGain: tc.min}
		got := netBenefitSentence(p)
		if !strings.Contains(got, tc.want) {
			t.Errorf("min %g: %q lacks %q", tc.min, got, tc.want)
		}
		for _, n := range tc.not {
			if strings.Contains(got, n) {
				t.Errorf("min %g: %q claims %s", tc.min, got, n)
			}
		}
	}
	if g := (metrics.NetBenefit{Model: 0.02, TreatAll: 0.03}).Gain(); math.Abs(g-(-0.01)) > 1e-15 {
		t.Errorf("gain against a positive treat-all %v", g)
	}
	if g := (metrics.NetBenefit{Model: 0.02, TreatAll: -0.4}).Gain(); g != 0.02 {
		t.Errorf("gain against a negative treat-all (treat none is better) %v", g)
	}
}

func TestOptionsMinGain(t *testing.T) {
	for _, tc := range []struct{ in, want float64 }{{0, DefaultMinGain}, {-1, 0}, {0.005, 0.005}} {
		o := Options{MinGain: tc.in}
		o.defaults()
		if o.MinGain != tc.want {
			t.Errorf("MinGain %g became %g, want %g", tc.in, o.MinGain, tc.want)
		}
	}
}

// TestLimitationsInTheSummary: a sample-size shortfall and rows dropped
// for missing values reach the summary, with the caution above the
// stated share.
func TestLimitationsInTheSummary(t *testing.T) {
	n, met, short := 5980, false, true
	n2, met2 := 600, true
	size := &SampleSize{Have: 2772, Short: &short, Required: &n, Driver: "calibration slope", Criteria: []SizeCriterion{
		{Measure: "calibration slope", Target: "95% CI width 0.2", N: &n, Met: &met},
		{Measure: "C-statistic", Target: "95% CI width 0.1", N: &n2, Met: &met2},
	}}
	for _, tc := range []struct {
		name     string
		size     *SampleSize
		cohort   CohortSummary
		want     []string
		not      []string
		findings int
	}{
		{"short and 7.6% missing", size, CohortSummary{Rows: 3000, Used: 2772, Excluded: 228, ExcludedByColumn: []ColumnCount{{"bmi", 94}, {"albumin", 137}}},
			[]string{"calibration slope criterion (95% CI width 0.2) needs 5980 patients", "2772 were analysed", "228 of 3000 rows (7.6%)", "bmi 94, albumin 137", "more than 5% of the rows", "Multiple imputation"},
			[]string{"C-statistic criterion"}, 2},
		{"4% missing: no caution", nil, CohortSummary{Rows: 1000, Used: 960, Excluded: 40},
			[]string{"40 of 1000 rows (4.0%)"}, []string{"Multiple imputation", "smaller than"}, 1},
		{"exactly 5% missing: no caution", nil, CohortSummary{Rows: 1000, Used: 950, Excluded: 50},
			[]string{"50 of 1000 rows (5.0%)"}, []string{"Multiple imputation"}, 1},
		{"complete and large enough", &SampleSize{Have: 700, Short: &met}, CohortSummary{Rows: 700, Used: 700}, nil, nil, 0},
	} {
		a := &Audit{Performance: Performance{Cohort: tc.cohort}, SampleSize: tc.size}
		a.AddLimitations(0)
		if len(a.Summary) != tc.findings {
			t.Errorf("%s: %d findings, want %d: %v", tc.name, len(a.Summary), tc.findings, a.Summary)
		}
		var text string
		for _, f := range a.Summary {
			text += f.Text + "\n"
		}
		for _, w := range tc.want {
			if !strings.Contains(text, w) {
				t.Errorf("%s: summary lacks %q:\n%s", tc.name, w, text)
			}
		}
		for _, w := range tc.not {
			if strings.Contains(text, w) {
				t.Errorf("%s: summary has %q:\n%s", tc.name, w, text)
			}
		}
	}
}

// TestOneUnitPerMeasure: a measure and its interval read the same
// wherever riskaudit writes them.
func TestOneUnitPerMeasure(t *testing.T) {
	for _, tc := range []struct {
		name string
		v    float64
		want string
	}{
		{"ici", 0.046464, "0.0465"}, {"e90", 0.11532, "0.1153"}, {"emax", 0.2, "0.2000"},
		{"auc", 0.74567, "0.746"}, {"auc_ci.lower", 0.7215, "0.722"}, {"oe_ci", 1.2853, "1.285"},
		{"slope", 1.1757, "1.176"}, {"brier", 0.12381, "0.1238"}, {"scaled_brier", 0.0832, "0.083"},
		{"event_rate", 0.16089, "16.1%"}, {"hosmer_lemeshow.statistic", 12.1409, "12.14"},
		{"citl_se", 0.05401, "0.0540"},
	} {
		if got := FormatMeasure(tc.name, tc.v); got != tc.want {
			t.Errorf("%s %v: %q, want %q", tc.name, tc.v, got, tc.want)
		}
	}
	for _, tc := range []struct {
		c    Criterion
		want string
	}{
		{Criterion{Measure: "ici", AtMost: f(0.03)}, "≤ 0.03"},
		{Criterion{Measure: "event_rate", AtLeast: f(0.1)}, "≥ 10%"},
		{Criterion{Measure: "slope", Between: &[2]float64{0.8, 1.2}}, "between 0.8 and 1.2"},
		{Criterion{Measure: "auc", AtLeast: f(0.7255)}, "≥ 0.7255"},
	} {
		if got := tc.c.Bound(); got != tc.want {
			t.Errorf("%s bound %q, want %q", tc.c.Measure, got, tc.want)
		}
	}
}

// TestCalibrationCurveStaysInside: on risks that crowd at both ends the
// local linear fit leaves [0, 1]; the reported curve, its band and Emax
// stay inside (the clipping itself is checked against numpy.clip of
// statsmodels' lowess in metrics).
func TestCalibrationCurveStaysInside(t *testing.T) {
	n := 2000
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = 0.001 + 0.998*float64(i)/float64(n-1)
		p[i] = p[i] * p[i] * p[i] // most risks near 0
		if float64((i*7919)%1000)/1000 < math.Sqrt(p[i]) {
			y[i] = 1
		}
	}
	perf, err := Assess(y, p, Options{Delta: ExactDelta})
	if err != nil {
		t.Fatal(err)
	}
	c := perf.Calibration
	if c.Clipped == 0 {
		t.Fatalf("the fit never left [0, 1]: the case does not test the clipping")
	}
	for _, pt := range perf.Curves.Flexible {
		if pt.Observed < 0 || pt.Observed > 1 || pt.Lower > pt.Observed || pt.Upper < pt.Observed || pt.Lower < 0 || pt.Upper > 1 {
			t.Fatalf("curve point %+v leaves [0, 1] or its band", pt)
		}
	}
	if c.Emax > 1 || c.ICI > c.Emax {
		t.Errorf("Emax %v, ICI %v", c.Emax, c.ICI)
	}
}

// TestGainUncertainty: with bootstrap intervals, the summary says at
// which of the thresholds where it claims a gain the gain's interval
// reaches zero or below (the claim is then uncertain), and says nothing
// of thresholds where no gain is claimed.
func TestGainUncertainty(t *testing.T) {
	nb := []metrics.NetBenefit{
		{Threshold: 0.05, Model: 0.1000, TreatAll: 0.0900}, // gain 0.01, interval above 0
		{Threshold: 0.10, Model: 0.0800, TreatAll: 0.0700}, // gain 0.01, interval reaches 0
		{Threshold: 0.20, Model: 0.0005, TreatAll: -0.05},  // gain below the minimum: not claimed
	}
	mk := func(lows ...float64) *Audit {
		a := &Audit{Performance: Performance{NetBenefit: nb, NetBenefitMinGain: 0.001}}
		a.Summary = []Finding{{Area: "clinical usefulness", Text: netBenefitSentence(&a.Performance)}}
		a.BootstrapCI = &PercentileCIs{Replicates: 200}
		for i, lo := range lows {
			a.BootstrapCI.NetBenefitGain = append(a.BootstrapCI.NetBenefitGain, ThresholdCI{Threshold: nb[i].Threshold, CI: [2]float64{lo, 0.02}})
		}
		a.AddGainUncertainty()
		return a
	}
	for _, tc := range []struct {
		lows []float64
		want string
	}{
		{[]float64{0.002, 0, -0.01}, "lies above zero at 5%, but reaches zero or below at 10%, where the gain is uncertain"},
		{[]float64{0.002, 0.001, -0.01}, "lies above zero at each of those thresholds"},
		{[]float64{-0.001, -0.002, -0.01}, "reaches zero or below at each of those thresholds (5%, 10%)"},
	} {
		got := mk(tc.lows...).Summary[0].Text
		if !strings.Contains(got, tc.want) || strings.Contains(got, "20%, ") || strings.Count(got, "200 replicates") != 1 {
			t.Errorf("lows %v: %q lacks %q", tc.lows, got, tc.want)
		}
	}
	// Without bootstrap intervals the finding is left as it was.
	a := &Audit{Performance: Performance{NetBenefit: nb, NetBenefitMinGain: 0.001}}
	a.Summary = []Finding{{Area: "clinical usefulness", Text: "x"}}
	a.AddGainUncertainty()
	if a.Summary[0].Text != "x" {
		t.Errorf("changed without intervals: %q", a.Summary[0].Text)
	}
}
