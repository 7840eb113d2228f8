package validate

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/meta"
	"github.com/riskaudit/riskaudit/metrics"
)

// ImputedData is one completed dataset of a multiply imputed cohort: the
// outcomes y, the risks p and their logits lp (nil: taken from p) in the
// same row order in every imputation, and the measures taken on it
// (AssessLogits).
type ImputedData struct {
	Y, P, LP []float64
	Perf     *Performance
}

// ImputationOptions describe the imputations for the record and for the
// pooling.
type ImputationOptions struct {
	// Column is the stacked file's imputation column, or "" when the
	// imputations came as Files.
	Column string
	Files  []string
	// Labels name the imputations (the column's values, or 1…m).
	Labels []string
	// Imputed marks the rows (by position within an imputation) in which
	// some predictor value differs between imputations; nil when unknown.
	Imputed []bool
	// Level of the intervals (0: 0.95).
	Level float64
	// Epsilon clamps risks for the logits of the complete-case measures
	// (0: DefaultEpsilon).
	Epsilon float64
}

// ImputedMeasure is one measure pooled across imputations by Rubin's
// rules (meta.Rubin) on the scale Scale: "logit" for the AUC, "log" for
// O/E, "identity" for calibration-in-the-large, the slope and the Brier
// score. Estimate and CI are back-transformed to the measure's own
// scale; ScaleEstimate, ScaleCI and the variances are on Scale. DF is
// the Barnard–Rubin degrees of freedom with DFComplete the
// complete-data degrees of freedom (n − 1; n − 2 for the slope), FMI the
// fraction of missing information and Lambda the share of the total
// variance due to the missing data.
type ImputedMeasure struct {
	Estimate        float64    `json:"estimate"`
	CI              [2]float64 `json:"ci"`
	WithinVariance  float64    `json:"within_variance"`
	BetweenVariance float64    `json:"between_variance"`
	TotalVariance   float64    `json:"total_variance"`
	DF              float64    `json:"df"`
	DFComplete      float64    `json:"df_complete"`
	FMI             float64    `json:"fmi"`
	Lambda          float64    `json:"lambda"`
	Scale           string     `json:"scale"`
	ScaleEstimate   float64    `json:"scale_estimate"`
	ScaleCI         [2]float64 `json:"scale_ci"`
	// PerImputation is the measure in each imputation, on its own scale.
	PerImputation []float64 `json:"per_imputation"`
	// Note says why the measure was not pooled.
	Note string `json:"note,omitempty"`
}

// ImputedMeasures are the five measures pooled by Rubin's rules.
type ImputedMeasures struct {
	AUC   ImputedMeasure `json:"auc"`
	OE    ImputedMeasure `json:"oe"`
	CITL  ImputedMeasure `json:"citl"`
	Slope ImputedMeasure `json:"slope"`
	Brier ImputedMeasure `json:"brier"`
}

// AveragedMeasure is a measure without a usable variance, averaged
// across the imputations, with its smallest and largest value.
type AveragedMeasure struct {
	Average float64 `json:"average"`
	Min     float64 `json:"min"`
	Max     float64 `json:"max"`
}

// ImputedAverages are the measures averaged across imputations: ICI,
// E50, E90 and Emax of the calibration curve, the scaled Brier score and
// the model's net benefit at every threshold (treating all and none
// depend on the outcomes only, which every imputation shares).
type ImputedAverages struct {
	ICI         AveragedMeasure      `json:"ici"`
	E50         AveragedMeasure      `json:"e50"`
	E90         AveragedMeasure      `json:"e90"`
	Emax        AveragedMeasure      `json:"emax"`
	ScaledBrier AveragedMeasure      `json:"scaled_brier"`
	NetBenefit  []metrics.NetBenefit `json:"net_benefit"`
}

// CompleteCase are the measures on the rows without any imputed
// predictor value: the analysis that drops every patient with a missing
// value, beside the pooled one.
type CompleteCase struct {
	N      int     `json:"n"`
	Events int     `json:"events"`
	AUC    float64 `json:"auc"`
	OE     float64 `json:"oe"`
	CITL   float64 `json:"citl"`
	Slope  float64 `json:"slope"`
	Brier  float64 `json:"brier"`
	// Note says why a measure is missing.
	Note string `json:"note,omitempty"`
}

// ImputedRule says how the imputed patients are counted.
const ImputedRule = "a patient counts as imputed when any of the model's predictor values differs between the imputations in the patient's row (a value imputed identically in every imputation is not seen)"

// FromFirstImputation are the parts of the top-level measures that an
// imputed audit takes from the first imputation, since no pooling of
// them is defined here: the Hosmer–Lemeshow test, the risk groups, the
// ROC curve, the classification table and the risk histogram.
var FromFirstImputation = []string{"hosmer_lemeshow", "risk_groups", "roc", "classification", "risk_histogram"}

// Imputation is an audit of a multiply imputed cohort.
type Imputation struct {
	Column string   `json:"column"`
	Files  []string `json:"files,omitempty"`
	M      int      `json:"m"`
	// Labels name the imputations in the order of the per-imputation
	// values.
	Labels []string `json:"labels"`
	// Rows is the number of patients in every imputation.
	Rows int `json:"rows"`
	// PatientsImputed counts the patients with any predictor imputed, by
	// ImputedRule (-1: unknown).
	PatientsImputed int             `json:"patients_imputed"`
	ImputedRule     string          `json:"patients_imputed_rule"`
	Pooled          ImputedMeasures `json:"pooled"`
	Averaged        ImputedAverages `json:"averaged"`
	// CompleteCase is nil when every patient had a predictor imputed, or
	// when the imputed patients are unknown.
	CompleteCase *CompleteCase `json:"complete_case,omitempty"`
	// FromFirst lists the top-level parts taken from the first imputation.
	FromFirst []string `json:"from_first_imputation"`
	// CurvePoints is the number of points of the averaged calibration
	// curve (the top-level calibration_curve).
	CurvePoints int `json:"curve_points"`
}

// ErrImputations is wrapped by PoolImputations' refusals of imputations
// that do not describe the same patients.
var ErrImputations = errors.New("the imputations do not describe the same patients")

// PoolImputations pools the measures of m ≥ 2 completed datasets: the
// AUC (logit scale, variance (SE/(AUC(1 − AUC)))² from DeLong's SE), O/E
// (log scale, variance (1 − O/n)/O), calibration-in-the-large and slope
// (their fits' variances) and the Brier score (variance BrierVariance) by
// Rubin's rules (meta.Rubin; Marshall et al. 2009, BMC Medical Research
// Methodology 9:57; Wood, Royston & White 2015, Biometrical Journal
// 57:614–632), and averages the measures without a usable variance
// (ICI, E50, E90, Emax, the scaled Brier score, net benefit) and the
// calibration curves, on a common grid. It returns the record and the
// top-level performance of the audit: the first imputation's, with every
// pooled and averaged measure in place of its own and the averaged
// curve; the parts listed in FromFirstImputation stay the first
// imputation's, and a calibration note says so.
func PoolImputations(sets []ImputedData, opt ImputationOptions) (*Imputation, *Performance, error) {
	m := len(sets)
	if m < 2 {
		return nil, nil, fmt.Errorf("validate: %d imputation(s): pooling needs at least 2", m)
	}
	n := len(sets[0].Y)
	for j, s := range sets {
		if len(s.Y) != n || len(s.P) != n || s.Perf == nil {
			return nil, nil, fmt.Errorf("validate: imputation %d has %d rows, imputation 1 has %d: %w", j+1, len(s.Y), n, ErrImputations)
		}
		for i, v := range s.Y {
			if v != sets[0].Y[i] {
				return nil, nil, fmt.Errorf("validate: row %d has outcome %g in imputation %d but %g in imputation 1: %w", i+1, v, j+1, sets[0].Y[i], ErrImputations)
			}
		}
	}
	if opt.Epsilon == 0 {
		opt.Epsilon = DefaultEpsilon
	}
	labels := opt.Labels
	if len(labels) != m {
		labels = make([]string, m)
		for j := range labels {
			labels[j] = fmt.Sprint(j + 1)
		}
	}
	im := &Imputation{Column: opt.Column, Files: opt.Files, M: m, Labels: labels, Rows: n, PatientsImputed: -1,
		ImputedRule: ImputedRule, FromFirst: FromFirstImputation}
	fn := float64(n)
	var err error
	q, u := make([]float64, m), make([]float64, m)
	collect := func(f func(s ImputedData) (est, v float64, ok bool)) bool {
		for j, s := range sets {
			var ok bool
			q[j], u[j], ok = f(s)
			if !ok {
				return false
			}
		}
		return true
	}
	own := func(f func(p *Performance) float64) []float64 {
		out := make([]float64, m)
		for j, s := range sets {
			out[j] = f(s.Perf)
		}
		return out
	}
	// The AUC on the logit scale.
	okAUC := collect(func(s ImputedData) (float64, float64, bool) {
		d := s.Perf.Discrimination
		if !(d.SE > 0) || !(d.AUC > 0 && d.AUC < 1) {
			return 0, 0, false
		}
		v := d.SE / (d.AUC * (1 - d.AUC))
		return logistic.Logit(d.AUC), v * v, true
	})
	if im.Pooled.AUC, err = rubinMeasure(q, u, okAUC, fn-1, opt.Level, "logit", logistic.Expit,
		own(func(p *Performance) float64 { return p.Discrimination.AUC }), "DeLong's standard error is not estimable in every imputation"); err != nil {
		return nil, nil, fmt.Errorf("pooling the AUC: %w", err)
	}
	okOE := collect(func(s ImputedData) (float64, float64, bool) {
		c := s.Perf.Calibration
		o := c.Observed
		if !(c.OE > 0) || !(o > 0) || o >= fn {
			return 0, 0, false
		}
		return math.Log(c.OE), (1 - o/fn) / o, true
	})
	if im.Pooled.OE, err = rubinMeasure(q, u, okOE, fn-1, opt.Level, "log", math.Exp,
		own(func(p *Performance) float64 { return p.Calibration.OE }), "the variance of ln(O/E) needs events and non-events"); err != nil {
		return nil, nil, fmt.Errorf("pooling O/E: %w", err)
	}
	okCITL := collect(func(s ImputedData) (float64, float64, bool) {
		c := s.Perf.Calibration
		return c.CITL, c.CITLSE * c.CITLSE, finite(c.CITL) && c.CITLSE > 0 && finite(c.CITLSE)
	})
	if im.Pooled.CITL, err = rubinMeasure(q, u, okCITL, fn-1, opt.Level, "identity", nil,
		own(func(p *Performance) float64 { return p.Calibration.CITL }), "calibration-in-the-large could not be estimated in every imputation"); err != nil {
		return nil, nil, fmt.Errorf("pooling calibration-in-the-large: %w", err)
	}
	okSlope := collect(func(s ImputedData) (float64, float64, bool) {
		c := s.Perf.Calibration
		return c.Slope, c.SlopeSE * c.SlopeSE, finite(c.Slope) && c.SlopeSE > 0 && finite(c.SlopeSE)
	})
	if im.Pooled.Slope, err = rubinMeasure(q, u, okSlope, fn-2, opt.Level, "identity", nil,
		own(func(p *Performance) float64 { return p.Calibration.Slope }), "the calibration slope could not be estimated in every imputation"); err != nil {
		return nil, nil, fmt.Errorf("pooling the calibration slope: %w", err)
	}
	okBrier := collect(func(s ImputedData) (float64, float64, bool) {
		return s.Perf.Overall.Brier, BrierVariance(s.Y, s.P), finite(s.Perf.Overall.Brier)
	})
	if im.Pooled.Brier, err = rubinMeasure(q, u, okBrier, fn-1, opt.Level, "identity", nil,
		own(func(p *Performance) float64 { return p.Overall.Brier }), "the Brier score is not finite in every imputation"); err != nil {
		return nil, nil, fmt.Errorf("pooling the Brier score: %w", err)
	}
	av := &im.Averaged
	av.ICI = average(own(func(p *Performance) float64 { return p.Calibration.ICI }))
	av.E50 = average(own(func(p *Performance) float64 { return p.Calibration.E50 }))
	av.E90 = average(own(func(p *Performance) float64 { return p.Calibration.E90 }))
	av.Emax = average(own(func(p *Performance) float64 { return p.Calibration.Emax }))
	av.ScaledBrier = average(own(func(p *Performance) float64 { return p.Overall.ScaledBrier }))
	av.NetBenefit = slices.Clone(sets[0].Perf.NetBenefit)
	for k := range av.NetBenefit {
		var s float64
		for _, d := range sets {
			s += d.Perf.NetBenefit[k].Model
		}
		av.NetBenefit[k].Model = s / float64(m)
	}
	if opt.Imputed != nil {
		im.PatientsImputed = 0
		for _, b := range opt.Imputed {
			if b {
				im.PatientsImputed++
			}
		}
		im.CompleteCase = completeCase(sets[0], opt.Imputed, opt.Epsilon)
	}
	perf := combined(sets, im)
	im.CurvePoints = len(perf.Curves.Flexible)
	return im, perf, nil
}

// rubinMeasure pools q, u (when ok) by meta.Rubin and back-transforms by
// back (nil: identity).
func rubinMeasure(q, u []float64, ok bool, dfCom, level float64, scale string, back func(float64) float64, per []float64, why string) (ImputedMeasure, error) {
	nan := math.NaN()
	nan2 := [2]float64{nan, nan}
	out := ImputedMeasure{Estimate: nan, CI: nan2, WithinVariance: nan, BetweenVariance: nan, TotalVariance: nan, DF: nan, FMI: nan, Lambda: nan,
		Scale: scale, ScaleEstimate: nan, ScaleCI: nan2, DFComplete: dfCom, PerImputation: per}
	if !ok {
		out.Note = "not pooled: " + why
		return out, nil
	}
	if !(dfCom > 0) {
		out.Note = "not pooled: too few patients"
		return out, nil
	}
	c, err := meta.Rubin(q, u, dfCom, level)
	if err != nil {
		return out, err
	}
	if back == nil {
		back = func(x float64) float64 { return x }
	}
	out.WithinVariance, out.BetweenVariance, out.TotalVariance = c.Within, c.Between, c.Total
	out.DF, out.FMI, out.Lambda = c.DF, c.FMI, c.Lambda
	out.ScaleEstimate, out.ScaleCI = c.Estimate, c.CI
	out.Estimate = back(c.Estimate)
	out.CI = [2]float64{back(c.CI[0]), back(c.CI[1])}
	return out, nil
}

// average is the mean, smallest and largest of x (NaN where any is NaN).
func average(x []float64) AveragedMeasure {
	a := AveragedMeasure{Min: math.Inf(1), Max: math.Inf(-1)}
	for _, v := range x {
		a.Average += v
		if math.IsNaN(v) {
			return AveragedMeasure{Average: math.NaN(), Min: math.NaN(), Max: math.NaN()}
		}
		a.Min, a.Max = math.Min(a.Min, v), math.Max(a.Max, v)
	}
	a.Average /= float64(len(x))
	return a
}

// BrierVariance is the variance of the Brier score as the mean of the n
// squared errors d_i = (p_i − y_i)²: s²/n with s² = Σ (d_i − d̄)²/(n − 1),
// the sample variance of the squared errors (the variance of a mean of
// independent terms; Bradley, Schwartz & Hashino 2008, Weather and
// Forecasting 23:992–1006, give the same estimator with n in place of
// n − 1 — from memory). NaN with fewer than 2 rows.
func BrierVariance(y, p []float64) float64 {
	n := len(y)
	if n < 2 {
		return math.NaN()
	}
	var mean float64
	for i := range y {
		d := p[i] - y[i]
		mean += d * d
	}
	mean /= float64(n)
	var ss float64
	for i := range y {
		d := p[i] - y[i]
		e := d*d - mean
		ss += e * e
	}
	return ss / float64(n-1) / float64(n)
}

// completeCase measures the first imputation's rows without any imputed
// value (they are the same in every imputation).
func completeCase(s ImputedData, imputed []bool, eps float64) *CompleteCase {
	var ys, ps, ls []float64
	for i, b := range imputed {
		if i < len(s.Y) && !b {
			ys, ps = append(ys, s.Y[i]), append(ps, s.P[i])
			if s.LP != nil {
				ls = append(ls, s.LP[i])
			}
		}
	}
	if len(ys) == 0 {
		return nil
	}
	nan := math.NaN()
	cc := &CompleteCase{N: len(ys), AUC: nan, OE: nan, CITL: nan, Slope: nan, Brier: nan}
	for _, v := range ys {
		if v == 1 {
			cc.Events++
		}
	}
	if cc.Events == 0 || cc.Events == cc.N {
		cc.Note = "the patients without an imputed value have outcomes of one kind only"
		return cc
	}
	if ls == nil {
		ls, _ = metrics.ClampedLogits(ps, eps)
	} else {
		ls, _ = clampLogits(ls, eps)
	}
	a, _ := metrics.AUC(metrics.SortByRisk(ys, ps))
	cc.AUC = a.AUC
	cc.OE, _, _, _ = metrics.OE(ys, ps)
	if c, err := metrics.CalibrationInTheLarge(ys, ls); err == nil {
		cc.CITL = c.Value
	}
	if sl, _, err := metrics.CalibrationSlope(ys, ls); err == nil {
		cc.Slope = sl.Value
	}
	cc.Brier, _ = metrics.Brier(ys, ps)
	return cc
}

// ImputationNote is the calibration note of an imputed audit.
const ImputationNote = "multiply imputed cohort: the AUC, O/E, calibration-in-the-large, slope and Brier score are pooled across the imputations by Rubin's rules; ICI, E50, E90, Emax, the scaled Brier score, net benefit and the calibration curve are averages across them; the Hosmer–Lemeshow test, the risk groups, the ROC curve, the classification table and the risk histogram are the first imputation's"

// combined is the first imputation's performance with the pooled and
// averaged measures in place of its own.
func combined(sets []ImputedData, im *Imputation) *Performance {
	first := sets[0].Perf
	perf := *first
	m := float64(len(sets))
	pm := im.Pooled
	d := &perf.Discrimination
	d.AUC = pm.AUC.Estimate
	d.SE = math.Sqrt(pm.AUC.TotalVariance) * d.AUC * (1 - d.AUC)
	d.CI, d.LogitCI = pm.AUC.CI, pm.AUC.CI
	d.Notes = slices.Clone(first.Discrimination.Notes)
	c := &perf.Calibration
	c.Notes = append(slices.Clone(first.Calibration.Notes), ImputationNote)
	c.CITL, c.CITLSE, c.CITLCI = pm.CITL.Estimate, math.Sqrt(pm.CITL.TotalVariance), pm.CITL.CI
	c.Slope, c.SlopeSE, c.SlopeCI = pm.Slope.Estimate, math.Sqrt(pm.Slope.TotalVariance), pm.Slope.CI
	c.OE, c.OECI = pm.OE.Estimate, pm.OE.CI
	var exp, icpt, mean float64
	for _, s := range sets {
		exp += s.Perf.Calibration.Expected
		icpt += s.Perf.Calibration.SlopeIntercept
		mean += s.Perf.Cohort.MeanRisk
	}
	c.Expected, c.SlopeIntercept, perf.Cohort.MeanRisk = exp/m, icpt/m, mean/m
	av := im.Averaged
	c.ICI, c.E50, c.E90, c.Emax = av.ICI.Average, av.E50.Average, av.E90.Average, av.Emax.Average
	perf.Overall.Brier, perf.Overall.ScaledBrier = pm.Brier.Estimate, av.ScaledBrier.Average
	perf.NetBenefit = av.NetBenefit
	curves := make([][]CurvePoint, len(sets))
	for j, s := range sets {
		curves[j] = s.Perf.Curves.Flexible
	}
	perf.Curves.Flexible = AverageCurves(curves)
	perf.Curves.AveragedOver = len(curves)
	return &perf
}

// AverageCurves averages calibration curves (each sorted by predicted
// risk) on a common grid: the first curve's predicted risks within the
// range every curve covers, with that range's ends; each curve is read
// at a grid point by linear interpolation between its neighbouring
// points, and the observed risk and both band ends are averaged. The
// averaged band is the average of the per-imputation bands, not an
// interval of the averaged curve.
func AverageCurves(curves [][]CurvePoint) []CurvePoint {
	if len(curves) == 0 {
		return nil
	}
	lo, hi := math.Inf(-1), math.Inf(1)
	for _, c := range curves {
		if len(c) == 0 {
			return nil
		}
		lo, hi = math.Max(lo, c[0].Predicted), math.Min(hi, c[len(c)-1].Predicted)
	}
	if !(lo <= hi) {
		return nil
	}
	grid := []float64{lo}
	for _, pt := range curves[0] {
		if pt.Predicted > lo && pt.Predicted < hi {
			grid = append(grid, pt.Predicted)
		}
	}
	if hi > lo {
		grid = append(grid, hi)
	}
	out := make([]CurvePoint, len(grid))
	for g, x := range grid {
		out[g].Predicted = x
		for _, c := range curves {
			o, l, u := interpolate(c, x)
			out[g].Observed += o
			out[g].Lower += l
			out[g].Upper += u
		}
		k := float64(len(curves))
		out[g].Observed /= k
		out[g].Lower /= k
		out[g].Upper /= k
	}
	return out
}

// interpolate reads a sorted curve at x, linearly between the points
// around it (the end point's values outside the curve).
func interpolate(c []CurvePoint, x float64) (obs, lower, upper float64) {
	i := sort.Search(len(c), func(i int) bool { return c[i].Predicted >= x })
	switch {
	case i == 0:
		return c[0].Observed, c[0].Lower, c[0].Upper
	case i == len(c):
		e := c[len(c)-1]
		return e.Observed, e.Lower, e.Upper
	case c[i].Predicted == x:
		return c[i].Observed, c[i].Lower, c[i].Upper
	}
	a, b := c[i-1], c[i]
	t := (x - a.Predicted) / (b.Predicted - a.Predicted)
	mix := func(u, v float64) float64 { return u + t*(v-u) }
	return mix(a.Observed, b.Observed), mix(a.Lower, b.Lower), mix(a.Upper, b.Upper)
}

// ImputationFinding is the summary's finding on the imputations: how
// many there were, how many patients had a predictor imputed, and the
// largest fraction of missing information among the pooled measures.
func ImputationFinding(im *Imputation) Finding {
	text := fmt.Sprintf("The cohort came as %d completed datasets of %d patients each", im.M, im.Rows)
	if im.PatientsImputed >= 0 {
		text += fmt.Sprintf(", in which %d patients had at least one predictor imputed", im.PatientsImputed)
	}
	text += "; the AUC, O/E, calibration-in-the-large, slope and Brier score are pooled across them by Rubin's rules, the other measures averaged."
	name, worst := "", -1.0
	for _, x := range []struct {
		name string
		m    ImputedMeasure
	}{{"AUC", im.Pooled.AUC}, {"O/E", im.Pooled.OE}, {"calibration-in-the-large", im.Pooled.CITL}, {"calibration slope", im.Pooled.Slope}, {"Brier score", im.Pooled.Brier}} {
		if finite(x.m.FMI) && x.m.FMI > worst {
			name, worst = x.name, x.m.FMI
		}
	}
	if worst >= 0 {
		text += fmt.Sprintf(" The largest fraction of missing information is %.2f (%s): ", worst, name)
		if worst < 0.3 {
			text += "the missing values add little uncertainty"
		} else {
			text += "the missing values add much uncertainty"
		}
		// White, Royston & Wood (2011, Statistics in Medicine 30:377–399,
		// section 7): at least 100 × FMI imputations.
		need := int(math.Ceil(100 * worst))
		switch {
		case im.M >= need:
			text += fmt.Sprintf("; White, Royston & Wood (2011) suggest at least %d imputations for it, and there are %d.", need, im.M)
		default:
			text += fmt.Sprintf("; White, Royston & Wood (2011) suggest at least %d imputations for it, and there are only %d: more would steady the pooled figures.", need, im.M)
		}
	}
	return Finding{"imputation", text}
}
