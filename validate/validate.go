// Package validate measures how a model's predicted risks perform on a
// cohort with observed outcomes: discrimination, calibration, overall
// accuracy and clinical usefulness, gathered into one result that the
// report, the figures and the JSON are written from. The JSON key of
// every field, with its meaning, is listed in docs/json.md.
package validate

import (
	"errors"
	"fmt"
	"math"
	"sync"

	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/metrics"
)

// DefaultEpsilon clamps predicted risks of exactly 0 or 1 to
// [ε, 1 − ε] before taking their logit (our choice: small enough to leave
// every risk a model could usefully report unchanged, large enough that
// logit(ε) ≈ −20.7 stays well inside the range where the calibration
// fits behave).
const DefaultEpsilon = 1e-9

// Options control an assessment. The zero value gives the defaults.
type Options struct {
	// Thresholds are the risk thresholds of the decision curve (default
	// 0.05 to 0.50 by 0.05).
	Thresholds []float64
	// ClassifyAt are the thresholds at which sensitivity, specificity,
	// PPV and NPV are given (default 0.10 and 0.20).
	ClassifyAt []float64
	// Groups is the number of risk groups of the grouped calibration plot
	// (default 10: deciles of predicted risk).
	Groups int
	// HLGroups is the number of Hosmer–Lemeshow groups (default 10).
	HLGroups int
	// Span is the LOWESS span (default 0.75).
	Span float64
	// Delta is the LOWESS δ: zero (the default, AutoDelta) chooses
	// metrics.DefaultDelta for the cohort's size, a positive value is used
	// as it is, and a negative one (ExactDelta) asks for δ = 0, a local
	// fit at every distinct risk.
	Delta float64
	// Epsilon clamps risks of 0 or 1 for the logit (default
	// DefaultEpsilon).
	Epsilon float64
	// Development marks the rows the model was fitted to: the
	// Hosmer–Lemeshow df is then groups − 2.
	Development bool
	// Workers bounds the goroutines (default GOMAXPROCS).
	Workers int
	// MinGain is the smallest gain in net benefit over the better default
	// strategy that the summary calls a gain (default DefaultMinGain); a
	// negative value asks for any positive gain.
	MinGain float64
}

// DefaultMinGain is the smallest net-benefit gain over treating everyone
// or no one that the summary claims as a gain: 0.001, one net true
// positive per 1000 patients. A smaller gain is within the rounding of
// the table and of no clinical weight; the figure is common practice, not
// a published threshold.
const DefaultMinGain = 0.001

// AutoDelta asks for the default LOWESS δ (metrics.DefaultDelta); it is
// the zero value, so that options left unset never ask for an exact
// smooth of millions of rows.
const AutoDelta = 0

// ExactDelta asks for δ = 0: a local fit at every distinct risk.
const ExactDelta = -1

// DefaultThresholds returns 0.05, 0.10, …, 0.50.
func DefaultThresholds() []float64 {
	out := make([]float64, 10)
	for i := range out {
		out[i] = float64(i+1) * 0.05
	}
	return out
}

func (o *Options) defaults() {
	if o.Thresholds == nil {
		o.Thresholds = DefaultThresholds()
	}
	if o.ClassifyAt == nil {
		o.ClassifyAt = []float64{0.10, 0.20}
	}
	if o.Groups <= 0 {
		o.Groups = 10
	}
	if o.HLGroups <= 0 {
		o.HLGroups = 10
	}
	if o.Span <= 0 {
		o.Span = 0.75
	}
	if o.Epsilon <= 0 {
		o.Epsilon = DefaultEpsilon
	}
	switch {
	case o.MinGain == 0:
		o.MinGain = DefaultMinGain
	case o.MinGain < 0:
		o.MinGain = 0
	}
}

// Discrimination is the AUC with its DeLong SE and intervals.
type Discrimination struct {
	metrics.AUCResult
	// Notes say why the SE and intervals could not be estimated, when
	// they are NaN.
	Notes []string `json:"notes,omitempty"`
}

// CIReason says in a few words why the AUC's standard error and
// intervals are NaN ("1 event", "AUC 1: every event ranked above every
// non-event", …), or "" when they exist.
func (d Discrimination) CIReason() string {
	switch {
	case !math.IsNaN(d.SE):
		return ""
	case d.Events == 0 || d.NonEvents == 0:
		return "no events or no non-events"
	case d.Events == 1:
		return "1 event"
	case d.NonEvents == 1:
		return "1 non-event"
	case d.AUC == 1:
		return "AUC 1: every event ranked above every non-event"
	case d.AUC == 0:
		return "AUC 0: every event ranked below every non-event"
	}
	return "every event's risk tied with every non-event's"
}

// AUCCIReason is Discrimination.CIReason, except that it says "every
// predicted risk the same" when that is why.
func (p *Performance) AUCCIReason() string {
	why := p.Discrimination.CIReason()
	if why != "" && p.Cohort.Used > 0 && p.Cohort.MinRisk == p.Cohort.MaxRisk && p.Cohort.Events > 1 && p.Cohort.Used-p.Cohort.Events > 1 {
		return "every predicted risk the same"
	}
	return why
}

// ciNote is the note of an AUC whose intervals cannot be estimated.
func ciNote(p *Performance) string {
	d := p.Discrimination
	why := p.AUCCIReason()
	switch {
	case why == "":
		return ""
	case d.Events < 2 || d.NonEvents < 2:
		return "the AUC's standard error and intervals are not estimable (" + why + "): DeLong's variance needs at least two events and two non-events"
	}
	return "the AUC's standard error and intervals are not estimable (" + why + "): DeLong's variance is then 0, which is no measure of the AUC's uncertainty"
}

// Calibration holds every calibration measure. The JSON keys are a
// stable interface.
type Calibration struct {
	CITL    float64    `json:"citl"`
	CITLSE  float64    `json:"citl_se"`
	CITLCI  [2]float64 `json:"citl_ci"`
	Slope   float64    `json:"slope"`
	SlopeSE float64    `json:"slope_se"`
	SlopeCI [2]float64 `json:"slope_ci"`
	// Notes say which measures could not be estimated, and why.
	Notes []string `json:"notes,omitempty"`
	// SlopeIntercept is the intercept of the calibration-slope model.
	SlopeIntercept float64                    `json:"slope_intercept"`
	OE             float64                    `json:"oe"`
	OECI           [2]float64                 `json:"oe_ci"`
	Observed       float64                    `json:"observed_events"`
	Expected       float64                    `json:"expected_events"`
	HL             metrics.HosmerLemeshowTest `json:"hosmer_lemeshow"`
	ICI            float64                    `json:"ici"`
	E50            float64                    `json:"e50"`
	E90            float64                    `json:"e90"`
	Emax           float64                    `json:"emax"`
	Span           float64                    `json:"lowess_span"`
	Delta          float64                    `json:"lowess_delta"`
	FitPoints      int                        `json:"lowess_fit_points"`
	// Clipped counts the rows where the local linear fit left [0, 1] by
	// more than metrics.ClipTolerance (all are clipped to it).
	Clipped int    `json:"lowess_clipped_rows"`
	Band    string `json:"band_method"`
}

// Overall is the overall accuracy.
type Overall struct {
	Brier       float64 `json:"brier"`
	ScaledBrier float64 `json:"scaled_brier"`
}

// CohortSummary describes the rows assessed.
type CohortSummary struct {
	Rows      int     `json:"rows"`
	Used      int     `json:"used"`
	Excluded  int     `json:"excluded"`
	Events    int     `json:"events"`
	EventRate float64 `json:"event_rate"`
	MeanRisk  float64 `json:"mean_risk"`
	// MinRisk and MaxRisk are the lowest and highest predicted risk;
	// they are equal when every risk is the same.
	MinRisk float64 `json:"min_risk"`
	MaxRisk float64 `json:"max_risk"`
	// Clamped counts the risks outside [Epsilon, 1 − Epsilon] (such as
	// risks of exactly 0 or 1) clamped to that range for the logit.
	Clamped int     `json:"clamped"`
	Epsilon float64 `json:"epsilon"`
	// ExcludedByColumn counts the missing values behind the exclusions.
	ExcludedByColumn []ColumnCount `json:"excluded_by_column"`
}

// ColumnCount is a count of rows for one column.
type ColumnCount struct {
	Column string `json:"column"`
	Rows   int    `json:"rows"`
}

// CurvePoint is one point of the flexible calibration curve: the smoothed
// observed risk at a predicted risk, the local linear fit clipped to
// [0, 1] (metrics.ClipRisks), with its pointwise 95% band, the clipped
// fit ± 1.96·SE, each end clipped to [0, 1].
type CurvePoint struct {
	Predicted float64 `json:"predicted"`
	Observed  float64 `json:"observed"`
	Lower     float64 `json:"lower"`
	Upper     float64 `json:"upper"`
}

// Curves are the data behind the figures.
type Curves struct {
	ROC       []metrics.ROCPoint  `json:"roc"`
	Flexible  []CurvePoint        `json:"calibration_curve"`
	Groups    []metrics.RiskGroup `json:"risk_groups"`
	Histogram metrics.Histogram   `json:"risk_histogram"`
	// AveragedOver is the number of imputations whose calibration curves
	// Flexible averages (a multiply imputed audit); 0 for one cohort's
	// smooth. The figure's legend says which it is.
	AveragedOver int `json:"-"`
}

// Performance is everything measured on one cohort.
type Performance struct {
	// Alarms are the charts' alarm counts by criterion name
	// (AlarmMeasures), set by an audit that charted the cohort in date
	// order, so that a criterion can name them; nil otherwise.
	Alarms map[string]float64 `json:"-"`
	// Pooled are the measures pooled across clusters, set by an audit
	// with an analysis across clusters before its verdict, so that a
	// criterion can name them (PooledMeasureNames); nil otherwise.
	Pooled *PooledMeasures `json:"-"`

	Cohort         CohortSummary        `json:"cohort"`
	Discrimination Discrimination       `json:"discrimination"`
	Calibration    Calibration          `json:"calibration"`
	Overall        Overall              `json:"overall"`
	NetBenefit     []metrics.NetBenefit `json:"net_benefit"`
	// NetBenefitMinGain is the smallest gain over the better default
	// strategy (metrics.NetBenefit.Gain) that the summary claims.
	NetBenefitMinGain float64                  `json:"net_benefit_min_gain"`
	Classification    []metrics.Classification `json:"classification"`
	Curves            Curves                   `json:"curves"`
}

// RiskError reports a predicted risk that is not a probability.
type RiskError struct {
	Row   int
	Value float64
}

// Error says which row holds the bad risk and what it is.
func (e *RiskError) Error() string {
	return fmt.Sprintf("predicted risk %v of row %d is not in [0, 1]", e.Value, e.Row)
}

// BandMethod says how the calibration curve's band is made.
const BandMethod = "pointwise 95%: smoothed ± 1.96·√(ŝ(1 − ŝ)·Σl²), the variance of the local linear smoother with the binomial variance at the smoothed value (Cleveland & Devlin 1988)"

// Assess measures risks p against outcomes y (1 event, 0 non-event).
// A risk outside [0, 1] or NaN is a *RiskError naming its row; outcomes
// of one kind only are an *OutcomesError.
func Assess(y, p []float64, opt Options) (*Performance, error) {
	return AssessLogits(y, p, nil, opt)
}

// AssessLogits is Assess for risks that come with their linear
// predictors lp = logit(p) (as from a frozen model), which the
// calibration fits then use directly; risks of 0 or 1 are still clamped.
// lp may be nil.
func AssessLogits(y, p, lp []float64, opt Options) (*Performance, error) {
	opt.defaults()
	if len(y) != len(p) {
		return nil, fmt.Errorf("validate: %d outcomes but %d risks", len(y), len(p))
	}
	for i, v := range p {
		if !(v >= 0 && v <= 1) {
			return nil, &RiskError{Row: i, Value: v}
		}
	}
	perf := &Performance{}
	c := &perf.Cohort
	c.Used = len(y)
	for _, v := range y {
		if v == 1 {
			c.Events++
		}
	}
	if c.Events == 0 || c.Events == c.Used {
		return nil, &OutcomesError{Events: c.Events, Rows: c.Used}
	}
	c.EventRate = float64(c.Events) / float64(c.Used)
	c.Epsilon = opt.Epsilon
	if lp == nil {
		lp, c.Clamped = metrics.ClampedLogits(p, opt.Epsilon)
	} else {
		lp, c.Clamped = clampLogits(lp, opt.Epsilon)
	}
	// The calibration fits and the smooth are the slow parts: run them
	// beside each other. The fits read the rows in their own order, so
	// they start before the sort, whose recounts and gather run on one
	// core.
	var wg sync.WaitGroup
	var citl, slope, slopeIcpt metrics.Estimate
	var errCITL, errSlope error
	wg.Add(1)
	go func() {
		defer wg.Done()
		citl, errCITL = metrics.CalibrationInTheLarge(y, lp)
		slope, slopeIcpt, errSlope = metrics.CalibrationSlope(y, lp)
	}()
	// Sort once: the measures that walk the rows in risk order read
	// these contiguous sorted copies.
	sorted := metrics.SortByRisk(y, p)
	ps := sorted.P()
	lo, hi := ps[0], ps[len(ps)-1]
	delta := opt.Delta
	switch {
	case delta == AutoDelta:
		delta = metrics.DefaultDelta(lo, hi, len(p))
	case delta < 0:
		delta = 0
	}
	// The remaining measures are single passes over the rows, each
	// reading its inputs only: half of them beside the other half. That
	// half starts before the smooth, whose plan and interpolation run on
	// one core.
	var oe, obs, exp float64
	var oeci [2]float64
	var hl metrics.HosmerLemeshowTest
	var nb []metrics.NetBenefit
	wg.Add(1)
	go func() {
		defer wg.Done()
		oe, oeci, obs, exp = metrics.OE(y, p)
		perf.Overall.Brier, perf.Overall.ScaledBrier = metrics.Brier(y, p)
		hl = metrics.HosmerLemeshow(sorted, opt.HLGroups, opt.Development)
		nb = metrics.NetBenefits(sorted, opt.Thresholds)
	}()
	flex := metrics.FlexibleCalibration(sorted, metrics.LowessOptions{Span: opt.Span, Delta: delta, Workers: opt.Workers})
	auc, _ := metrics.AUC(sorted)
	perf.Classification = metrics.Classify(sorted, opt.ClassifyAt)
	perf.Curves = Curves{
		ROC:       metrics.ROC(sorted, 500),
		Flexible:  thinCurve(flex.Curve, 200),
		Groups:    metrics.RiskGroups(sorted, opt.Groups),
		Histogram: metrics.RiskHistogram(sorted.Y(), ps, 40),
	}
	perf.Discrimination = Discrimination{AUCResult: auc}
	c.MinRisk, c.MaxRisk = lo, hi
	if n := ciNote(perf); n != "" {
		perf.Discrimination.Notes = []string{n}
	}
	wg.Wait()
	if c.Clamped == c.Used {
		// Every logit is ±logit(1 − ε): the fits would measure ε, not
		// the data.
		errCITL, errSlope = errAllClamped, errAllClamped
	}
	// A calibration model that cannot be fitted (risks that are all the
	// same, separation in a tiny cohort) leaves its measure undefined, not
	// the audit impossible.
	var notes []string
	nan := math.NaN()
	if errCITL != nil {
		citl = metrics.Estimate{Value: nan, SE: nan, CI: [2]float64{nan, nan}}
		notes = append(notes, "calibration-in-the-large could not be estimated: "+fitFailure(errCITL, lo == hi))
	}
	if errSlope != nil {
		slope = metrics.Estimate{Value: nan, SE: nan, CI: [2]float64{nan, nan}}
		slopeIcpt = metrics.Estimate{Value: nan, SE: nan, CI: [2]float64{nan, nan}}
		notes = append(notes, "the calibration slope could not be estimated: "+fitFailure(errSlope, lo == hi))
	}
	if lo == hi {
		notes = append(notes, fmt.Sprintf("every predicted risk is the same (%s): the flexible calibration curve is then the observed event rate (%s), so ICI, E50, E90 and Emax are each the distance between the two",
			percent(lo), percent(c.EventRate)))
	}
	c.MeanRisk = exp / float64(len(p))
	cal := &perf.Calibration
	*cal = Calibration{
		CITL: citl.Value, CITLSE: citl.SE, CITLCI: citl.CI,
		Slope: slope.Value, SlopeSE: slope.SE, SlopeCI: slope.CI, SlopeIntercept: slopeIcpt.Value,
		OE: oe, OECI: oeci, Observed: obs, Expected: exp,
		HL:  hl,
		ICI: flex.ICI, E50: flex.E50, E90: flex.E90, Emax: flex.Emax,
		Span: opt.Span, Delta: delta, FitPoints: flex.Curve.FitPoints, Clipped: flex.Clipped, Band: BandMethod, Notes: notes,
	}
	if math.IsNaN(cal.HL.Statistic) && cal.HL.Groups > 0 {
		cal.Notes = append(cal.Notes, "the Hosmer–Lemeshow test could not be computed: a risk group's predicted risks are all 0 or all 1, so the group has no binomial variance to divide by")
	} else if note := hlSmallCounts(cal.HL); note != "" {
		cal.Notes = append(cal.Notes, note)
	}
	perf.NetBenefit = nb
	perf.NetBenefitMinGain = opt.MinGain
	return perf, nil
}

// hlSmallCounts says, when it is so, that the Hosmer–Lemeshow test's
// chi-squared approximation is doubtful because its expected counts are
// small: by Cochran's rule (common practice for chi-squared tests of
// counts; Cochran 1954, Biometrics 10:417–451), more than a fifth of the
// 2g expected counts (events E_k and non-events n_k − E_k of every
// group) below 5, or any below 1. It returns "" otherwise, and when the
// test was not computed.
func hlSmallCounts(hl metrics.HosmerLemeshowTest) string {
	if math.IsNaN(hl.Statistic) || len(hl.Table) == 0 {
		return ""
	}
	below5, below1 := 0, 0
	for _, g := range hl.Table {
		for _, e := range [2]float64{g.Expected, float64(g.N) - g.Expected} {
			if e < 5 {
				below5++
			}
			if e < 1 {
				below1++
			}
		}
	}
	cells := 2 * len(hl.Table)
	if 5*below5 <= cells && below1 == 0 {
		return ""
	}
	return fmt.Sprintf("the Hosmer–Lemeshow p-value is doubtful: %d of its %d expected counts (events and non-events of %d groups) are below 5 and %d below 1, where the chi-squared approximation asks for at most a fifth below 5 and none below 1 (Cochran 1954); fewer groups (--hl-groups) or a larger cohort give a test that can be read", below5, cells, len(hl.Table), below1)
}

// errAllClamped is why the calibration fits are not estimated when every
// risk had to be clamped for the logit.
var errAllClamped = errors.New("every predicted risk is 0 or 1 (within the clamping ε), so its value would depend on ε alone, not on the data")

// fitFailure says in plain words why a calibration model could not be
// fitted: risks that are all the same, separation, or the fit's error.
func fitFailure(err error, tied bool) string {
	switch {
	case err == errAllClamped:
		return err.Error()
	case tied:
		return "every predicted risk is the same, so there is no spread of risk to fit it to"
	case errors.Is(err, logistic.ErrSeparation):
		return "the predicted risks separate the events from the non-events completely, so its maximum-likelihood estimate is infinite (Albert & Anderson 1984)"
	}
	return err.Error()
}

// percent writes a share as a percentage with one decimal.
func percent(v float64) string { return fmt.Sprintf("%.1f%%", 100*v) }

// clampLogits bounds linear predictors to ±logit(1 − eps), the logits of
// the clamped risks, copying only when a value must change.
func clampLogits(lp []float64, eps float64) ([]float64, int) {
	bound := math.Log1p(-eps) - math.Log(eps)
	n := 0
	var out []float64
	for i, v := range lp {
		if v > bound || v < -bound {
			if out == nil {
				out = append([]float64(nil), lp...)
			}
			out[i] = math.Max(-bound, math.Min(bound, v))
			n++
		}
	}
	if out == nil {
		return lp, 0
	}
	return out, n
}

// thinCurve keeps about n points of the smooth, evenly spaced in rank,
// always the first and the last, with the band clipped to [0, 1].
func thinCurve(c metrics.LowessCurve, n int) []CurvePoint {
	m := len(c.X)
	if m == 0 {
		return nil
	}
	step := max(1, m/n)
	var out []CurvePoint
	for i := 0; i < m; i += step {
		out = append(out, curvePoint(c, i))
	}
	if (m-1)%step != 0 {
		out = append(out, curvePoint(c, m-1))
	}
	return out
}

// clamp01 keeps a band end within [0, 1].
func clamp01(v float64) float64 { return math.Min(1, math.Max(0, v)) }

func curvePoint(c metrics.LowessCurve, i int) CurvePoint {
	h := metrics.Z975 * c.SE[i]
	return CurvePoint{
		Predicted: c.X[i], Observed: c.Fit[i],
		Lower: clamp01(c.Fit[i] - h), Upper: clamp01(c.Fit[i] + h),
	}
}
