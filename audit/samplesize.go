package audit

import (
	"fmt"
	"strings"

	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/samplesize"
	"github.com/riskaudit/riskaudit/validate"
)

// sampleSizeOf checks the cohort's size against each criterion. The
// anticipated values (linear predictor, calibration, C-statistic) are the
// request's where it gives them and the cohort's otherwise; the
// net-benefit criterion uses the request's threshold or the first
// classification threshold.
func sampleSizeOf(sc *scored, perf *validate.Performance, classifyAt []float64, size samplesize.Request) *validate.SampleSize {
	ant := samplesize.Anticipated{Threshold: size.Threshold}
	if ant.Threshold == 0 && len(classifyAt) > 0 {
		ant.Threshold = classifyAt[0]
	}
	var basis []string
	if size.LPSD > 0 {
		ant.LP = samplesize.Normal(size.LPMean, size.LPSD, 20000)
		if size.FromEventRate {
			basis = append(basis, fmt.Sprintf("the plan: a normal linear predictor (mean %.3f, SD %.3f) giving event proportion %g and C-statistic %g", size.LPMean, size.LPSD, size.EventRate, size.CStatistic))
		} else {
			basis = append(basis, fmt.Sprintf("the plan: a normal linear predictor (mean %g, SD %g)", size.LPMean, size.LPSD))
		}
		ant.CalIntercept, ant.CalSlope = 0, 1 // unless the plan says otherwise
	} else {
		ant.LP = sc.lp
		if ant.LP == nil {
			ant.LP, _ = metrics.ClampedLogits(sc.p, validate.DefaultEpsilon)
		}
		ant.CalIntercept, ant.CalSlope = perf.Calibration.SlopeIntercept, perf.Calibration.Slope
		ant.C = perf.Discrimination.AUC
		basis = append(basis, "this cohort: its linear predictors")
	}
	switch {
	case size.CalIntercept != nil && size.CalSlope != nil:
		ant.CalIntercept, ant.CalSlope = *size.CalIntercept, *size.CalSlope
		basis = append(basis, fmt.Sprintf("calibration intercept %g and slope %g (from the plan)", ant.CalIntercept, ant.CalSlope))
	case size.CalIntercept != nil:
		ant.CalIntercept = *size.CalIntercept
		basis = append(basis, fmt.Sprintf("calibration intercept %g (from the plan) and slope %.3g", ant.CalIntercept, ant.CalSlope))
	case size.CalSlope != nil:
		ant.CalSlope = *size.CalSlope
		basis = append(basis, fmt.Sprintf("calibration intercept %.3g and slope %g (from the plan)", ant.CalIntercept, ant.CalSlope))
	case size.LPSD > 0:
		basis = append(basis, "a calibrated model")
	default:
		basis = append(basis, "its calibration intercept and slope")
	}
	switch {
	case size.CStatistic > 0 && !size.FromEventRate:
		ant.C = size.CStatistic
		basis = append(basis, fmt.Sprintf("C-statistic %g (from the plan)", size.CStatistic))
	case size.LPSD > 0:
		ant.C = 0 // implied by the distribution
	default:
		basis = append(basis, "its AUC")
	}
	res, err := samplesize.Compute(ant, size.Targets)
	if err != nil {
		return nil
	}
	out := &validate.SampleSize{Required: res.N, Driver: res.Driver, Have: perf.Cohort.Used,
		Basis: strings.Join(basis, ", ")}
	for _, c := range res.Criteria {
		out.Criteria = append(out.Criteria, validate.SizeCriterion{Measure: c.Measure, Target: c.Target, SE: c.SE, N: c.N, Events: c.Events, Met: perf.Cohort.Used >= c.N})
	}
	out.Short = perf.Cohort.Used < res.N
	return out
}
