package metrics_test

import (
	"fmt"

	"github.com/riskaudit/riskaudit/metrics"
)

// The examples share one tiny invented cohort: 20 patients, the risk a
// model predicted for each and whether the event happened (1) or not (0).
// Their outputs are this package's own results on these rows, shown to
// illustrate the calls; the checks against outside references are in
// reference_test.go.
var (
	outcomes = []float64{0, 0, 1, 0, 0, 0, 1, 0, 1, 0, 0, 1, 0, 0, 1, 1, 0, 1, 0, 1}
	risks    = []float64{0.05, 0.10, 0.15, 0.10, 0.20, 0.25, 0.30, 0.15, 0.45, 0.30,
		0.35, 0.60, 0.40, 0.20, 0.55, 0.70, 0.50, 0.80, 0.25, 0.65}
)

// Sort the cohort by risk once, then pass the same Sorted to every
// measure that walks the rows in risk order.
func ExampleSortByRisk() {
	s := metrics.SortByRisk(outcomes, risks)
	auc, _ := metrics.AUC(s)
	hl := metrics.HosmerLemeshow(s, 4, false)
	fmt.Printf("%d rows, lowest risk %.2f, highest %.2f\n", s.Len(), s.P()[0], s.P()[s.Len()-1])
	fmt.Printf("AUC %.3f; Hosmer–Lemeshow %.2f on %d df\n", auc.AUC, hl.Statistic, hl.DF)
	// Output:
	// 20 rows, lowest risk 0.05, highest 0.80
	// AUC 0.865; Hosmer–Lemeshow 3.71 on 4 df
}

func ExampleAUC() {
	r, _ := metrics.AUC(metrics.SortByRisk(outcomes, risks))
	fmt.Printf("%d events, %d non-events\n", r.Events, r.NonEvents)
	fmt.Printf("AUC %.3f, DeLong SE %.3f\n", r.AUC, r.SE)
	fmt.Printf("95%% CI %.3f to %.3f; on the logit scale %.3f to %.3f\n", r.CI[0], r.CI[1], r.LogitCI[0], r.LogitCI[1])
	// Output:
	// 8 events, 12 non-events
	// AUC 0.865, DeLong SE 0.095
	// 95% CI 0.678 to 1.000; on the logit scale 0.564 to 0.969
}

func ExampleCalibrationInTheLarge() {
	lp, _ := metrics.ClampedLogits(risks, 1e-9)
	citl, err := metrics.CalibrationInTheLarge(outcomes, lp)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("calibration-in-the-large %.3f (95%% CI %.3f to %.3f)\n", citl.Value, citl.CI[0], citl.CI[1])
	// Output:
	// calibration-in-the-large 0.255 (95% CI -0.750 to 1.259)
}

func ExampleCalibrationSlope() {
	lp, _ := metrics.ClampedLogits(risks, 1e-9)
	slope, intercept, err := metrics.CalibrationSlope(outcomes, lp)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("slope %.3f (95%% CI %.3f to %.3f), intercept %.3f\n", slope.Value, slope.CI[0], slope.CI[1], intercept.Value)
	// Output:
	// slope 1.802 (95% CI 0.252 to 3.352), intercept 0.704
}

func ExampleOE() {
	oe, ci, observed, expected := metrics.OE(outcomes, risks)
	fmt.Printf("observed %.0f, expected %.2f: O/E %.3f (95%% CI %.3f to %.3f)\n", observed, expected, oe, ci[0], ci[1])
	// Output:
	// observed 8, expected 7.05: O/E 1.135 (95% CI 0.663 to 1.941)
}

func ExampleBrier() {
	brier, scaled := metrics.Brier(outcomes, risks)
	fmt.Printf("Brier %.4f, scaled %.4f\n", brier, scaled)
	// Output:
	// Brier 0.1501, scaled 0.3745
}

func ExampleNetBenefits() {
	s := metrics.SortByRisk(outcomes, risks)
	for _, nb := range metrics.NetBenefits(s, []float64{0.1, 0.2, 0.3}) {
		fmt.Printf("threshold %.2f: model %.4f, treat all %.4f\n", nb.Threshold, nb.Model, nb.TreatAll)
	}
	// Output:
	// threshold 0.10: model 0.3389, treat all 0.3333
	// threshold 0.20: model 0.2500, treat all 0.2500
	// threshold 0.30: model 0.2643, treat all 0.1429
}

func ExampleFlexibleCalibration() {
	s := metrics.SortByRisk(outcomes, risks)
	cc := metrics.FlexibleCalibration(s, metrics.LowessOptions{Span: 0.75})
	fmt.Printf("ICI %.4f, E50 %.4f, E90 %.4f, Emax %.4f (%d local fits)\n", cc.ICI, cc.E50, cc.E90, cc.Emax, cc.Curve.FitPoints)
	// Output:
	// ICI 0.0888, E50 0.0561, E90 0.2114, Emax 0.2936 (15 local fits)
}

func ExampleAUCValue() {
	// Rows a caller has already put in risk order (a bootstrap sample,
	// say) are wrapped without copying.
	s := metrics.AsSorted([]float64{0, 0, 1, 0, 1, 1}, []float64{0.1, 0.2, 0.2, 0.4, 0.5, 0.9})
	fmt.Printf("%.4f\n", metrics.AUCValue(s))
	// Output:
	// 0.8333
}
