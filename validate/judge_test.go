package validate

import (
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/metrics"
)

// TestJudge is a table of single criteria against a hand-made
// Performance: every bound is inclusive (DEVELOPERS.md, "Criteria"), a
// measure exactly on its bound meets it, a value that cannot be estimated
// does not, and the status follows the severity.
func TestJudge(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	perf := &Performance{}
	perf.Discrimination.AUC = 0.75
	perf.Discrimination.CI = [2]float64{0.7, 0.8}
	perf.Calibration.CITL = 0.2
	perf.Calibration.Slope = 0.8
	perf.Calibration.OE = 1.2
	perf.Calibration.OECI = [2]float64{1, 1.4}
	perf.Calibration.ICI = 0.03
	perf.Calibration.E90 = math.NaN()
	perf.NetBenefit = []metrics.NetBenefit{
		{Threshold: 0.1, Model: 0.05, TreatAll: 0.049}, // gain 0.001 exactly (up to rounding: 0.05 − 0.049)
		{Threshold: 0.2, Model: 0.02, TreatAll: -0.01}, // gain 0.02 over treat-none
		{Threshold: 0.3, Model: 0.001, TreatAll: -0.2}, // outside the range below
	}
	for _, c := range []struct {
		name   string
		crit   Criterion
		passed bool
		status string
	}{
		{"auc_ci.lower on its bound", Criterion{Measure: "auc_ci.lower", AtLeast: f(0.7)}, true, "pass"},
		{"auc_ci.lower just below", Criterion{Measure: "auc_ci.lower", AtLeast: f(0.7000001)}, false, "fail"},
		{"auc_ci.upper at most, on its bound", Criterion{Measure: "auc_ci.upper", AtMost: f(0.8)}, true, "pass"},
		{"citl on the upper end of between", Criterion{Measure: "citl", Between: &[2]float64{-0.2, 0.2}}, true, "pass"},
		{"slope on the lower end of between", Criterion{Measure: "slope", Between: &[2]float64{0.8, 1.2}}, true, "pass"},
		{"slope outside between", Criterion{Measure: "slope", Between: &[2]float64{0.9, 1.1}}, false, "fail"},
		{"oe_ci touching 1", Criterion{Measure: "oe_ci", Contains: f(1)}, true, "pass"},
		{"oe_ci not containing 0.99", Criterion{Measure: "oe_ci", Contains: f(0.99)}, false, "fail"},
		{"ici on its bound", Criterion{Measure: "ici", AtMost: f(0.03)}, true, "pass"},
		{"ici above, review", Criterion{Measure: "ici", AtMost: f(0.02), Severity: "review"}, false, "review"},
		{"e90 not estimable", Criterion{Measure: "e90", AtMost: f(1)}, false, "fail"},
		{"net benefit gain over the better default", Criterion{Measure: NetBenefitGainName, AtLeast: f(0.0009), Over: &[2]float64{0.1, 0.2}}, true, "pass"},
		{"net benefit gain: treat-all negative counts as 0", Criterion{Measure: NetBenefitGainName, AtLeast: f(0.015), Over: &[2]float64{0.2, 0.2}}, true, "pass"},
		{"net benefit gain too small", Criterion{Measure: NetBenefitGainName, AtLeast: f(0.0011), Over: &[2]float64{0.1, 0.2}}, false, "fail"},
		{"net benefit gain, no threshold in range", Criterion{Measure: NetBenefitGainName, AtLeast: f(0), Over: &[2]float64{0.4, 0.5}}, false, "fail"},
	} {
		t.Run(c.name, func(t *testing.T) {
			v, err := Judge(perf, []Criterion{c.crit})
			if err != nil {
				t.Fatal(err)
			}
			if r := v.Criteria[0]; r.Passed != c.passed || v.Status != c.status {
				t.Errorf("passed %v, status %q; want %v, %q (value %g)", r.Passed, v.Status, c.passed, c.status, r.Value)
			}
		})
	}
	// The gain judged is the least over the range, at its threshold.
	v, err := Judge(perf, []Criterion{{Measure: NetBenefitGainName, AtLeast: f(0), Over: &[2]float64{0.1, 0.2}}})
	if err != nil {
		t.Fatal(err)
	}
	r := v.Criteria[0]
	if math.Abs(r.Value-0.001) > 1e-12 || r.AtThreshold == nil || *r.AtThreshold != 0.1 {
		t.Errorf("least gain %g at %v; by hand 0.05 − 0.049 = 0.001 at 0.1", r.Value, r.AtThreshold)
	}
}
