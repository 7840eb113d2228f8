package main

import (
	"fmt"
	"math"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/model"
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
	if size.LPSD > 0 {
		ant.CalIntercept, ant.CalSlope = 0, 1 // unless the plan says otherwise
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

// sizeReport is the samplesize command's JSON: the anticipated values,
// then the result's fields.
type sizeReport struct {
	Schema          string  `json:"schema"`
	LinearPredictor string  `json:"linear_predictor"`
	CalIntercept    float64 `json:"calibration_intercept"`
	CalSlope        float64 `json:"calibration_slope"`
	Threshold       float64 `json:"threshold,omitempty"`
	*samplesize.Result
	Tool        string `json:"tool"`
	CommandLine string `json:"command_line"`
}

// sizeOptions are the samplesize command's flags.
type sizeOptions struct {
	phi, c, mu, sd, thr, calA, calB float64
	widths                          samplesize.Targets
	model, dataFile, jsonOut        string
	data                            dataFlags
}

func newSampleSizeCmd(s *streams) *cobra.Command {
	o := &sizeOptions{}
	cmd := &cobra.Command{
		Use:   "samplesize (--event-rate P --c-statistic C | --lp-mean M --lp-sd S | --model M --data FILE)",
		Short: "Plan an external validation: the minimum sample size for precise estimates",
		Long: `Compute the minimum sample size of an external validation study of a
binary-outcome model, criterion by criterion (after Riley et al. 2021):
precise O/E, calibration slope, C-statistic and, with --threshold,
standardised net benefit, each from a target 95% CI width.

The anticipated distribution of the model's linear predictor comes from
one of: its normal mean and SD (--lp-mean, --lp-sd); the anticipated
event proportion and C-statistic (--event-rate, --c-statistic), from which
the normal distribution of a calibrated model's linear predictor is
found; or a frozen model scored on existing data without outcomes, such
as a pilot extract of the target population (--model, --data), whose
linear predictors are taken as they are. An anticipated miscalibration
(--calibration-intercept a, --calibration-slope b) makes the true risks
expit(a + b·LP); --c-statistic otherwise replaces the C-statistic the
distribution implies. The recommended size is the largest requirement.`,
		Example: `  riskaudit samplesize --event-rate 0.1 --c-statistic 0.75 --threshold 0.1
  riskaudit samplesize --lp-mean -2.5 --lp-sd 1.2 --slope-width 0.3 --json size.json
  riskaudit samplesize --lp-mean -3 --lp-sd 1 --calibration-intercept 0.3 --calibration-slope 0.8
  riskaudit samplesize --model frozen.yaml --data pilot-extract.csv --calibration-intercept 0.2`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return runSampleSize(cmd, o, s)
		},
	}
	f := cmd.Flags()
	f.Float64Var(&o.phi, "event-rate", 0, "anticipated event proportion")
	f.Float64Var(&o.c, "c-statistic", 0, "anticipated C-statistic")
	f.Float64Var(&o.mu, "lp-mean", 0, "mean of the linear predictor")
	f.Float64Var(&o.sd, "lp-sd", 0, "standard deviation of the linear predictor")
	f.StringVar(&o.model, "model", "", "a frozen model whose linear predictor --data gives")
	f.StringVar(&o.dataFile, "data", "", "data to score with --model (outcomes not needed): CSV or TSV with a header row, Parquet, or Arrow IPC")
	f.Float64Var(&o.calA, "calibration-intercept", 0, "anticipated calibration intercept a (true risks expit(a + b·LP))")
	f.Float64Var(&o.calB, "calibration-slope", 1, "anticipated calibration slope b")
	f.Float64Var(&o.thr, "threshold", 0, "risk threshold for the net-benefit criterion (0: none)")
	widthFlags(f, "", &o.widths.OEWidth, &o.widths.SlopeWidth, &o.widths.CWidth, &o.widths.NBWidth)
	f.StringVar(&o.jsonOut, "json", "", "also write the result as JSON")
	o.data.register(f)
	_ = cmd.MarkFlagFilename("model", "yaml", "yml")
	_ = cmd.MarkFlagFilename("data", "csv", "tsv", "txt", "parquet", "arrow", "feather")
	return cmd
}

// widthFlags registers the target 95% CI widths of the sample-size
// criteria, with their defaults; what prefixes each flag's help.
func widthFlags(f *pflag.FlagSet, what string, oe, slope, c, nb *float64) {
	def := samplesize.DefaultTargets()
	f.Float64Var(oe, "oe-width", def.OEWidth, what+"target 95% CI width of O/E")
	f.Float64Var(slope, "slope-width", def.SlopeWidth, what+"target 95% CI width of the calibration slope")
	f.Float64Var(c, "c-width", def.CWidth, what+"target 95% CI width of the C-statistic")
	f.Float64Var(nb, "nb-width", def.NBWidth, what+"target 95% CI width of the standardised net benefit")
}

func runSampleSize(cmd *cobra.Command, o *sizeOptions, s *streams) error {
	fl := cmd.Flags()
	byLP, byRate, byData := fl.Changed("lp-mean") || fl.Changed("lp-sd"), fl.Changed("event-rate"), o.model != "" || o.dataFile != ""
	switch {
	case fl.Changed("lp-mean") != fl.Changed("lp-sd"):
		return usagef("give --lp-mean and --lp-sd together")
	case (o.model == "") != (o.dataFile == ""):
		return usagef("give --model and --data together")
	case byLP && byRate || byLP && byData || byRate && byData:
		return usagef("give the linear predictor one way: --lp-mean and --lp-sd, --event-rate and --c-statistic, or --model and --data")
	case byRate && !fl.Changed("c-statistic"):
		return usagef("give --event-rate and --c-statistic, or --lp-mean and --lp-sd")
	case !byLP && !byRate && !byData:
		return usagef("give --event-rate and --c-statistic, --lp-mean and --lp-sd, or --model and --data")
	case byLP && !(o.sd > 0):
		return usagef("--lp-sd must be positive")
	case !(o.calB > 0):
		return usagef("--calibration-slope %g: give a positive slope", o.calB)
	}
	if fl.Changed("c-statistic") && !(o.c > 0.5 && o.c < 1) {
		return usagef("--c-statistic %g: give a C-statistic in (0.5, 1)", o.c)
	}
	var lp []float64
	var about string
	c := o.c
	switch {
	case byData:
		var err error
		if lp, about, err = scoredLP(o); err != nil {
			return err
		}
	case byRate:
		var err error
		if o.mu, o.sd, err = samplesize.NormalFor(o.phi, o.c); err != nil {
			return usagef("%v", err)
		}
		c = 0
		fallthrough
	default:
		lp = samplesize.Normal(o.mu, o.sd, 20000)
		about = fmt.Sprintf("Linear predictor Normal(mean %.3f, SD %.3f)", o.mu, o.sd)
	}
	res, err := samplesize.Compute(samplesize.Anticipated{LP: lp, C: c, Threshold: o.thr, CalIntercept: o.calA, CalSlope: o.calB}, o.widths)
	if err != nil {
		return usagef("%v", err)
	}
	w := s.out
	fmt.Fprintf(w, "%s: event proportion %.4f, C-statistic %.3f, O/E %.3f\n", about, res.EventRate, res.C, res.OE)
	for _, cr := range res.Criteria {
		fmt.Fprintf(w, "  %-36s %-20s n %7d (%d events)\n", cr.Measure, cr.Target, cr.N, cr.Events)
	}
	fmt.Fprintf(w, "Minimum sample size %d (%d events), driven by the %s criterion\n", res.N, res.Events, res.Driver)
	if o.jsonOut != "" {
		b, err := jsonout.Marshal(sizeReport{Schema: "riskaudit.samplesize/1", LinearPredictor: about,
			CalIntercept: o.calA, CalSlope: o.calB, Threshold: o.thr, Result: res,
			Tool: "riskaudit " + toolVersion(), CommandLine: s.commandLine()})
		if err != nil {
			return err
		}
		return atomicfile.WriteFile(o.jsonOut, b)
	}
	return nil
}

// scoredLP scores --data with the frozen --model and returns the linear
// predictors of its complete rows, and a line describing them.
func scoredLP(o *sizeOptions) ([]float64, string, error) {
	copt, fail, err := o.data.options()
	if err != nil {
		return nil, "", err
	}
	spec, err := loadFrozen(o.model)
	if err != nil {
		return nil, "", err
	}
	fr, err := cohort.Load(o.dataFile, spec.Columns(false), copt)
	if err != nil {
		return nil, "", err
	}
	d, m, err := model.Build(spec, fr, model.Options{FailOnMissing: fail, NoMatrix: true})
	if err != nil {
		return nil, "", err
	}
	lp, err := d.FrozenLinearPredictors(m)
	if err != nil {
		return nil, "", err
	}
	if len(lp) < 10 {
		return nil, "", &cohort.Error{File: o.dataFile, Msg: fmt.Sprintf("only %d complete rows: the linear predictor's distribution needs at least 10", len(lp))}
	}
	var mean, ss float64
	for _, v := range lp {
		mean += v
	}
	mean /= float64(len(lp))
	for _, v := range lp {
		ss += (v - mean) * (v - mean)
	}
	about := fmt.Sprintf("Linear predictor of %s on %d rows of %s (mean %.3f, SD %.3f)", o.model, len(lp), o.dataFile, mean, math.Sqrt(ss/float64(len(lp)-1)))
	return lp, about, nil
}
