package audit

import (
	"context"
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat"

	"github.com/riskaudit/riskaudit/cohort"
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
		ant.Normal = &samplesize.NormalLP{Mean: size.LPMean, SD: size.LPSD}
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
	if size.CalSlope == nil && size.LPSD == 0 && math.IsNaN(perf.Calibration.Slope) {
		for i, c := range res.Criteria {
			if c.NotComputable == samplesize.UnknownCalibration {
				res.Criteria[i].NotComputable = "this cohort's calibration slope could not be estimated, so its true risks cannot be anticipated (the plan's sample_size.anticipated can give them)"
			}
		}
	}
	out := sizeCheck(res, perf.Cohort.Used, strings.Join(basis, ", "))
	out.FromOutcomes = size.LPSD == 0 && (size.CalIntercept == nil || size.CalSlope == nil || size.CStatistic == 0)
	return out
}

// sizeCheck sets a cohort of have patients beside each criterion of res.
func sizeCheck(res *samplesize.Result, have int, basis string) *validate.SampleSize {
	out := &validate.SampleSize{Driver: res.Driver, Have: have, Basis: basis}
	short, judged := false, true
	for _, c := range res.Criteria {
		sc := validate.SizeCriterion{Measure: c.Measure, Target: c.Target, SE: c.SE, NotComputable: c.NotComputable}
		if c.Computable() {
			n, e, met := c.N, c.Events, have >= c.N
			sc.N, sc.Events, sc.Met = &n, &e, &met
			short = short || !met
		} else {
			judged = false
		}
		out.Criteria = append(out.Criteria, sc)
	}
	if res.Driver != "" {
		n := res.N
		out.Required = &n
	}
	if short || judged {
		out.Short = &short
	}
	return out
}

// SizeConfig plans an external validation: the anticipated linear
// predictor given one way, the anticipated calibration, the net-benefit
// threshold and the target widths.
type SizeConfig struct {
	// The linear predictor: a frozen Model scored on Data (rows complete
	// in the model's columns; outcomes not needed), or the normal
	// distribution of a calibrated model with event proportion EventRate
	// and C-statistic CStatistic (samplesize.NormalFor), or
	// Normal(LPMean, LPSD). Without EventRate, a CStatistic replaces the
	// one the distribution implies.
	Model                 string
	Data                  Input
	Read                  cohort.Options
	FailOnMissing         bool
	EventRate, CStatistic float64
	LPMean, LPSD          float64
	// CalIntercept and CalSlope make the true risks
	// expit(a + b·LP) (CalSlope 0: 1).
	CalIntercept, CalSlope float64
	// Threshold is the net-benefit criterion's risk threshold (0: none).
	Threshold float64
	// Targets are the target widths (zero: samplesize's defaults).
	Targets samplesize.Targets
	// Tool and CommandLine record how the plan was made.
	Tool, CommandLine string
}

// SizeSchema names the layout of SizePlan's JSON.
const SizeSchema = "riskaudit.samplesize/1"

// SizePlan is a sample-size plan: the anticipated values, then the
// result's fields; it is the JSON of 'riskaudit samplesize --json'.
type SizePlan struct {
	Schema          string `json:"schema"`
	LinearPredictor string `json:"linear_predictor"`
	// AnticipatedFrom says where the anticipated values came from: as
	// given, or from the model's predictions on data without outcomes
	// (so not the observed calibration and AUC an audit uses).
	AnticipatedFrom string  `json:"anticipated_from"`
	CalIntercept    float64 `json:"calibration_intercept"`
	CalSlope        float64 `json:"calibration_slope"`
	Threshold       float64 `json:"threshold,omitempty"`
	*samplesize.Result
	Tool        string `json:"tool"`
	CommandLine string `json:"command_line"`
}

// PlanSize computes the minimum sample size of cfg, criterion by
// criterion (samplesize.Compute). Values that samplesize cannot use, and
// a criterion whose size cannot be computed from them (such as the slope
// of a linear predictor that does not vary), are a *ConfigError: a plan
// is refused rather than given without one of its criteria.
func PlanSize(ctx context.Context, cfg SizeConfig) (*SizePlan, error) {
	if cfg.CalSlope == 0 {
		cfg.CalSlope = 1
	}
	t := withDefaultTargets(cfg.Targets)
	var lp []float64
	var normal *samplesize.NormalLP
	var about string
	c := cfg.CStatistic
	switch {
	case cfg.Model != "":
		var err error
		if lp, about, err = scoredLinearPredictors(ctx, cfg); err != nil {
			return nil, err
		}
	case cfg.EventRate > 0:
		var err error
		if cfg.LPMean, cfg.LPSD, err = samplesize.NormalFor(cfg.EventRate, cfg.CStatistic); err != nil {
			return nil, &ConfigError{Msg: strings.TrimPrefix(err.Error(), "samplesize: ")}
		}
		c = 0
		fallthrough
	default:
		normal = &samplesize.NormalLP{Mean: cfg.LPMean, SD: cfg.LPSD}
		about = fmt.Sprintf("Linear predictor Normal(mean %.3f, SD %.3f)", cfg.LPMean, cfg.LPSD)
	}
	res, err := samplesize.Compute(samplesize.Anticipated{LP: lp, Normal: normal, C: c, Threshold: cfg.Threshold, CalIntercept: cfg.CalIntercept, CalSlope: cfg.CalSlope}, t)
	if err != nil {
		return nil, &ConfigError{Msg: err.Error()}
	}
	for _, cr := range res.Criteria {
		if !cr.Computable() {
			return nil, &ConfigError{Msg: fmt.Sprintf("the %s criterion cannot be computed: %s", cr.Measure, cr.NotComputable)}
		}
	}
	return &SizePlan{Schema: SizeSchema, LinearPredictor: about, AnticipatedFrom: anticipatedFrom(cfg), CalIntercept: cfg.CalIntercept, CalSlope: cfg.CalSlope,
		Threshold: cfg.Threshold, Result: res, Tool: cfg.Tool, CommandLine: cfg.CommandLine}, nil
}

// anticipatedFrom says where a plan's anticipated values came from: the
// linear predictor, the calibration and the C-statistic, each as given
// or as the linear predictor implies. A model scored on data reads no
// outcomes, so its values are the model's predictions, not the observed
// calibration and AUC that an audit's sample-size check uses.
func anticipatedFrom(cfg SizeConfig) string {
	var lp, c string
	switch {
	case cfg.Model != "":
		lp = fmt.Sprintf("the model's predictions, not observed outcomes (which are not read): the linear predictors of %s on the complete rows of %s", cfg.Model, cfg.Data.Path)
		c = "the event proportion and C-statistic those risks imply"
	case cfg.EventRate > 0:
		lp = fmt.Sprintf("values given: event proportion %g and C-statistic %g, met by a calibrated model's normal linear predictor", cfg.EventRate, cfg.CStatistic)
	default:
		lp = fmt.Sprintf("values given: a normal linear predictor (mean %g, SD %g)", cfg.LPMean, cfg.LPSD)
		c = "the event proportion and C-statistic it implies"
	}
	cal := "its risks taken as calibrated (intercept 0, slope 1)"
	if cfg.CalIntercept != 0 || cfg.CalSlope != 1 {
		cal = fmt.Sprintf("true risks expit(%g + %g·LP) as given", cfg.CalIntercept, cfg.CalSlope)
	}
	parts := []string{lp, cal}
	switch {
	case cfg.EventRate > 0:
	case cfg.CStatistic > 0:
		parts = append(parts, fmt.Sprintf("C-statistic %g as given", cfg.CStatistic))
	default:
		parts = append(parts, c)
	}
	return strings.Join(parts, "; ")
}

// scoredLinearPredictors scores the data with the frozen model and
// returns the linear predictors of its complete rows, and a line
// describing them.
func scoredLinearPredictors(ctx context.Context, cfg SizeConfig) ([]float64, string, error) {
	sc, err := Score(ctx, ScoreConfig{Model: cfg.Model, Data: cfg.Data, Read: cfg.Read, FailOnMissing: cfg.FailOnMissing})
	if err != nil {
		return nil, "", err
	}
	lp := make([]float64, 0, sc.Scored)
	for _, v := range sc.LP {
		if !math.IsNaN(v) {
			lp = append(lp, v)
		}
	}
	if len(lp) < 10 {
		return nil, "", &cohort.Error{File: cfg.Data.Path, Msg: fmt.Sprintf("only %d complete rows: the linear predictor's distribution needs at least 10", len(lp)), Kind: cohort.ErrMissing}
	}
	mean, sd := stat.MeanStdDev(lp, nil)
	return lp, fmt.Sprintf("Linear predictor of %s on %d rows of %s (mean %.3f, SD %.3f)", cfg.Model, len(lp), cfg.Data.Path, mean, sd), nil
}
