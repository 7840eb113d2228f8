package main

import (
	"fmt"
	"math"
	"strings"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/plan"
	"github.com/riskaudit/riskaudit/samplesize"
	"github.com/riskaudit/riskaudit/validate"
)

// sampleSizeOf checks the cohort's size against each criterion. The
// anticipated values (linear predictor, calibration, C-statistic) are the
// plan's where it gives them and the cohort's otherwise; the net-benefit
// criterion uses the plan's threshold or the first --classify-at.
func sampleSizeOf(sc *scored, perf *validate.Performance, classifyAt []float64, size plan.SampleSize) *validate.SampleSize {
	ant := samplesize.Anticipated{Threshold: size.Threshold}
	if ant.Threshold == 0 && len(classifyAt) > 0 {
		ant.Threshold = classifyAt[0]
	}
	var basis []string
	if size.LPSD > 0 {
		ant.LP = samplesize.Normal(size.LPMean, size.LPSD, 20000)
		ant.CalSlope = 1
		if size.FromEventRate {
			basis = append(basis, fmt.Sprintf("the plan: a normal linear predictor (mean %.3f, SD %.3f) giving event proportion %g and C-statistic %g", size.LPMean, size.LPSD, size.EventRate, size.CStatistic))
		} else {
			basis = append(basis, fmt.Sprintf("the plan: a normal linear predictor (mean %g, SD %g)", size.LPMean, size.LPSD))
		}
	} else {
		ant.LP = sc.lp
		if ant.LP == nil {
			ant.LP = make([]float64, len(sc.p))
			for i, v := range sc.p {
				v = math.Min(math.Max(v, 1e-9), 1-1e-9)
				ant.LP[i] = math.Log(v / (1 - v))
			}
		}
		ant.CalIntercept, ant.CalSlope = perf.Calibration.SlopeIntercept, perf.Calibration.Slope
		ant.C = perf.Discrimination.AUC
		basis = append(basis, "this cohort: its linear predictors")
	}
	switch {
	case size.CalIntercept != nil || size.CalSlope != nil:
		if size.CalIntercept != nil {
			ant.CalIntercept = *size.CalIntercept
		}
		if size.CalSlope != nil {
			ant.CalSlope = *size.CalSlope
		}
		basis = append(basis, fmt.Sprintf("calibration intercept %g and slope %g (from the plan)", ant.CalIntercept, ant.CalSlope))
	case size.LPSD > 0:
		ant.CalIntercept, ant.CalSlope = 0, 1
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
	res, err := samplesize.Compute(ant, samplesize.Targets{OEWidth: size.OEWidth, SlopeWidth: size.SlopeWidth, CWidth: size.CWidth, NBWidth: size.NBWidth})
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

func newSampleSizeCmd(s *streams) *cobra.Command {
	var phi, c, mu, sd, thr, oeW, slW, cW, nbW, calA, calB float64
	var jsonOut string
	cmd := &cobra.Command{
		Use:   "samplesize (--event-rate P --c-statistic C | --lp-mean M --lp-sd S)",
		Short: "Plan an external validation: the minimum sample size for precise estimates",
		Long: `Compute the minimum sample size of an external validation study of a
binary-outcome model, criterion by criterion (after Riley et al. 2021):
precise O/E, calibration slope, C-statistic and, with --threshold,
standardised net benefit, each from a target 95% CI width. The linear
predictor is taken as normal: give its mean and SD, or the anticipated
event proportion and C-statistic, from which the normal distribution of a
calibrated model's linear predictor is found. An anticipated miscalibration
(--calibration-intercept a, --calibration-slope b) makes the true risks
expit(a + b·LP). The recommended size is the largest requirement.`,
		Example: `  riskaudit samplesize --event-rate 0.1 --c-statistic 0.75 --threshold 0.1
  riskaudit samplesize --lp-mean -2.5 --lp-sd 1.2 --slope-width 0.3 --json size.json
  riskaudit samplesize --lp-mean -3 --lp-sd 1 --calibration-intercept 0.3 --calibration-slope 0.8`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			fl := cmd.Flags()
			if fl.Changed("lp-mean") != fl.Changed("lp-sd") {
				return usagef("give --lp-mean and --lp-sd together")
			}
			if !fl.Changed("lp-mean") {
				if !fl.Changed("event-rate") || !fl.Changed("c-statistic") {
					return usagef("give --event-rate and --c-statistic, or --lp-mean and --lp-sd")
				}
				var err error
				if mu, sd, err = samplesize.NormalFor(phi, c); err != nil {
					return usagef("%v", err)
				}
				c = 0
			} else if sd <= 0 {
				return usagef("--lp-sd must be positive")
			}
			if !(calB > 0) {
				return usagef("--calibration-slope %g: give a positive slope", calB)
			}
			res, err := samplesize.Compute(samplesize.Anticipated{LP: samplesize.Normal(mu, sd, 20000), C: c, Threshold: thr,
				CalIntercept: calA, CalSlope: calB},
				samplesize.Targets{OEWidth: oeW, SlopeWidth: slW, CWidth: cW, NBWidth: nbW})
			if err != nil {
				return usagef("%v", err)
			}
			w := s.out
			fmt.Fprintf(w, "Linear predictor Normal(mean %.3f, SD %.3f): event proportion %.4f, C-statistic %.3f, O/E %.3f\n", mu, sd, res.EventRate, res.C, res.OE)
			for _, cr := range res.Criteria {
				fmt.Fprintf(w, "  %-36s %-20s n %7d (%d events)\n", cr.Measure, cr.Target, cr.N, cr.Events)
			}
			fmt.Fprintf(w, "Minimum sample size %d (%d events), driven by the %s criterion\n", res.N, res.Events, res.Driver)
			if jsonOut != "" {
				b, err := jsonout.Marshal(res)
				if err != nil {
					return err
				}
				return atomicfile.WriteFile(jsonOut, b)
			}
			return nil
		},
	}
	f := cmd.Flags()
	f.Float64Var(&phi, "event-rate", 0, "anticipated event proportion")
	f.Float64Var(&c, "c-statistic", 0, "anticipated C-statistic")
	f.Float64Var(&mu, "lp-mean", 0, "mean of the linear predictor")
	f.Float64Var(&sd, "lp-sd", 0, "standard deviation of the linear predictor")
	f.Float64Var(&calA, "calibration-intercept", 0, "anticipated calibration intercept a (true risks expit(a + b·LP))")
	f.Float64Var(&calB, "calibration-slope", 1, "anticipated calibration slope b")
	f.Float64Var(&thr, "threshold", 0, "risk threshold for the net-benefit criterion (0: none)")
	f.Float64Var(&oeW, "oe-width", 0.2, "target 95% CI width of O/E")
	f.Float64Var(&slW, "slope-width", 0.2, "target 95% CI width of the calibration slope")
	f.Float64Var(&cW, "c-width", 0.1, "target 95% CI width of the C-statistic")
	f.Float64Var(&nbW, "nb-width", 0.2, "target 95% CI width of the standardised net benefit")
	f.StringVar(&jsonOut, "json", "", "also write the result as JSON")
	return cmd
}
