package validate

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"
)

// Criterion is an acceptance criterion on one measure of an audit. Exactly
// one of AtLeast, AtMost, Between and Contains applies.
type Criterion struct {
	// Measure names the value: one of MeasureNames, where a name ending in
	// .lower or .upper is one end of an interval, and an interval name
	// (such as oe_ci) goes with Contains.
	Measure  string
	AtLeast  *float64
	AtMost   *float64
	Between  *[2]float64
	Contains *float64
	// Over is the range of risk thresholds [from, to] of a criterion on
	// net_benefit_gain, which it needs (and no other measure takes): the
	// gain is judged at every threshold of the decision curve that lies in
	// the range (see NetBenefitGainName).
	Over *[2]float64
	// Severity is "fail" (the default) or "review": a failed review
	// criterion makes the verdict review rather than fail.
	Severity string
	// Source says where the bound comes from.
	Source string
}

// Bound describes the criterion's bound in words, such as "≥ 0.7", in
// the measure's unit (a share of patients as a percentage) with every
// digit the bound was given.
func (c Criterion) Bound() string {
	b := func(v float64) string { return formatBound(c.Measure, v) }
	switch {
	case c.AtLeast != nil:
		return "≥ " + b(*c.AtLeast)
	case c.AtMost != nil:
		return "≤ " + b(*c.AtMost)
	case c.Between != nil:
		return "between " + b(c.Between[0]) + " and " + b(c.Between[1])
	case c.Contains != nil:
		return "interval contains " + b(*c.Contains)
	}
	return "?"
}

// CriterionResult is one criterion applied to an audit.
type CriterionResult struct {
	Measure  string      `json:"measure"`
	Bound    string      `json:"bound"`
	Value    float64     `json:"value"`
	Interval *[2]float64 `json:"interval,omitempty"`
	Passed   bool        `json:"passed"`
	Severity string      `json:"severity"`
	Source   string      `json:"source,omitempty"`
	// Note says why the criterion could not be judged: its measure was
	// not estimable (NaN), so it is not met.
	Note string `json:"note,omitempty"`
	// Thresholds are, for a criterion on net_benefit_gain, the
	// decision-curve thresholds it was judged at, and AtThreshold the one
	// of them with the smallest gain (the Value).
	Thresholds  []float64 `json:"thresholds,omitempty"`
	AtThreshold *float64  `json:"at_threshold,omitempty"`
}

// NotEstimable is the Note of a criterion whose measure could not be
// estimated.
const NotEstimable = "the measure could not be estimated on this cohort, so the criterion cannot be shown to be met"

// Verdict is the outcome of the criteria: pass when every criterion
// passes, review when only review criteria fail, fail otherwise; the
// subgroup checks count as AddSubgroups says.
type Verdict struct {
	Status   string            `json:"status"`
	Criteria []CriterionResult `json:"criteria"`
	// SubgroupCriteria says how the subgroup checks count (SubgroupReview,
	// SubgroupFail or SubgroupIgnore), and SubgroupChecks are every
	// criterion checked in every subgroup (AddSubgroups); both are empty
	// when no subgroups were measured.
	SubgroupCriteria string          `json:"subgroup_criteria,omitempty"`
	SubgroupChecks   []SubgroupCheck `json:"subgroup_checks,omitempty"`
}

// Passed reports whether every criterion passed.
func (v *Verdict) Passed() bool { return v.Status == "pass" }

func f(v float64) *float64 { return &v }

// DefaultCriteria are applied when no plan gives criteria. Each says
// where its bound comes from.
func DefaultCriteria() []Criterion {
	return []Criterion{
		{Measure: "auc_ci.lower", AtLeast: f(0.70), Severity: "fail",
			Source: "AUC of 0.7 or more is 'acceptable' discrimination (Hosmer, Lemeshow & Sturdivant 2013, §5.2.4; recalled from memory); requiring it of the lower 95% limit is our choice"},
		{Measure: "oe_ci", Contains: f(1), Severity: "fail",
			Source: "mean calibration, the first level of the calibration hierarchy (Van Calster et al. 2016, Journal of Clinical Epidemiology 74:167–176): no evidence that O/E differs from 1"},
		{Measure: "citl", Between: &[2]float64{-0.2, 0.2}, Severity: "fail",
			Source: "calibration-in-the-large near 0 (Van Calster et al. 2016); the ±0.2 band on the log-odds scale is common practice"},
		{Measure: "slope", Between: &[2]float64{0.8, 1.2}, Severity: "fail",
			Source: "weak calibration, slope near 1 (Van Calster et al. 2016); the 0.8–1.2 band is common practice"},
		{Measure: "ici", AtMost: f(0.03), Severity: "review",
			Source: "ICI (Austin & Steyerberg 2019) of at most 3 percentage points: common practice, no published threshold; a review rather than a failure"},
		{Measure: NetBenefitGainName, AtLeast: f(0.001), Over: &[2]float64{0.05, 0.20}, Severity: "review",
			Source: "clinical usefulness by decision curve (Vickers & Elkin 2006): acting on the model beats both treating everyone and treating no one at every threshold from 5% to 20%; the least gain of 0.001 (one net true positive per 1000 patients) and the range are common practice, no published threshold; a review rather than a failure, since the thresholds that matter are a local clinical choice"},
	}
}

// NetBenefitGainName is the measure of a net-benefit criterion: at a risk
// threshold t, the model's net benefit less that of the better default
// strategy, NB_model(t) − max(NB_treat all(t), 0), treating no one having
// net benefit 0 (Vickers & Elkin 2006, Medical Decision Making
// 26:565–574). The criterion's Over range [from, to] picks the thresholds
// of the decision curve (Options.Thresholds) with from − 1e-9 ≤ t ≤
// to + 1e-9 (the tolerance absorbs the rounding of a FROM:TO:STEP grid),
// and its value is the smallest gain among them, so that at_least g
// holds when the gain is at least g at every one of them. The net
// benefits are the decision curve's own (metrics.NetBenefits): a patient
// whose risk equals t exactly is treated. Only at_least goes with it.
const NetBenefitGainName = "net_benefit_gain"

// NoThresholdInRange is the Note of a net-benefit criterion whose range
// holds none of the decision curve's thresholds.
const NoThresholdInRange = "no decision-curve threshold lies in the range, so the criterion cannot be shown to be met; add thresholds inside it (--thresholds or the plan's thresholds)"

// overText describes a net-benefit criterion's range, such as " at
// every decision-curve threshold in [0.05, 0.2]"; "" for other criteria.
func (c Criterion) overText() string {
	if c.Over == nil {
		return ""
	}
	return fmt.Sprintf(" at every decision-curve threshold in [%g, %g]", c.Over[0], c.Over[1])
}

// netBenefitGain is the smallest gain over the better default strategy
// at the decision-curve thresholds of p within over, the threshold where
// it falls and every threshold judged; NaN and no thresholds when none
// lies in the range.
func netBenefitGain(p *Performance, over [2]float64) (float64, *float64, []float64) {
	const tol = 1e-9
	var ts []float64
	worst, at := math.NaN(), -1
	for _, nb := range p.NetBenefit {
		t := nb.Threshold
		if t < over[0]-tol || t > over[1]+tol {
			continue
		}
		ts = append(ts, t)
		gain := nb.Model - math.Max(nb.TreatAll, 0)
		if at < 0 || gain < worst || math.IsNaN(gain) {
			worst, at = gain, len(ts)-1
		}
	}
	if at < 0 {
		return math.NaN(), nil, nil
	}
	return worst, &ts[at], ts
}

// measureValue returns the named value of a performance and, for
// interval names, the interval.
func measureValue(p *Performance, name string) (float64, *[2]float64, error) {
	d, c, o := p.Discrimination, p.Calibration, p.Overall
	scalars := map[string]float64{
		"auc": d.AUC, "auc_se": d.SE, "citl": c.CITL, "citl_se": c.CITLSE, "slope": c.Slope, "slope_se": c.SlopeSE,
		"oe": c.OE, "ici": c.ICI, "e50": c.E50, "e90": c.E90, "emax": c.Emax,
		"brier": o.Brier, "scaled_brier": o.ScaledBrier, "hosmer_lemeshow.p": c.HL.P, "hosmer_lemeshow.statistic": c.HL.Statistic,
		"event_rate": p.Cohort.EventRate,
	}
	intervals := map[string][2]float64{
		"auc_ci": d.CI, "auc_logit_ci": d.LogitCI, "citl_ci": c.CITLCI, "slope_ci": c.SlopeCI, "oe_ci": c.OECI,
	}
	if v, ok := scalars[name]; ok {
		return v, nil, nil
	}
	if IsPooledMeasure(name) {
		return pooledValue(p.Pooled, name)
	}
	if slices.Contains(AlarmMeasures, name) {
		if v, ok := p.Alarms[name]; ok {
			return v, nil, nil
		}
		return math.NaN(), nil, nil // not charted: not estimable
	}
	if iv, ok := intervals[name]; ok {
		return math.NaN(), &iv, nil
	}
	base, end, ok := strings.Cut(name, ".")
	if iv, found := intervals[base]; ok && found {
		switch end {
		case "lower":
			return iv[0], nil, nil
		case "upper":
			return iv[1], nil, nil
		}
	}
	return 0, nil, unknownMeasure(name)
}

// AlarmMeasures are the criteria's names for the alarms of an audit
// charted in date order (audit --date-column): the number of signals of
// the deterioration and the improvement CUSUM (restarted after each),
// and 1 when the EWMA crossed its upper (more events than predicted) or
// lower limit, else 0. A plan makes an alarm a criterion with, for
// example, {measure: cusum_deterioration_signals, at_most: 0, severity:
// review}.
var AlarmMeasures = []string{"cusum_deterioration_signals", "cusum_improvement_signals", "ewma_above", "ewma_below"}

// MeasureNames lists the measures a criterion can name.
func MeasureNames() []string {
	names := []string{"auc", "auc_se", "citl", "citl_se", "slope", "slope_se", "oe", "ici", "e50", "e90", "emax",
		"brier", "scaled_brier", "hosmer_lemeshow.p", "hosmer_lemeshow.statistic", "event_rate", NetBenefitGainName}
	names = append(names, AlarmMeasures...)
	names = append(names, PooledMeasureNames()...)
	for _, iv := range []string{"auc_ci", "auc_logit_ci", "citl_ci", "slope_ci", "oe_ci"} {
		names = append(names, iv, iv+".lower", iv+".upper")
	}
	sort.Strings(names)
	return names
}

// Check validates a criterion's form: a known measure and exactly one
// kind of bound that fits it.
func (c Criterion) Check() error {
	n := 0
	for _, set := range []bool{c.AtLeast != nil, c.AtMost != nil, c.Between != nil, c.Contains != nil} {
		if set {
			n++
		}
	}
	if n != 1 {
		return fmt.Errorf("criterion on %q needs exactly one of at_least, at_most, between and contains", c.Measure)
	}
	if c.Severity != "" && c.Severity != "fail" && c.Severity != "review" {
		return fmt.Errorf("criterion on %q: severity must be fail or review, not %q", c.Measure, c.Severity)
	}
	if c.Between != nil && c.Between[0] > c.Between[1] {
		return fmt.Errorf("criterion on %q: between needs the lower bound first", c.Measure)
	}
	if c.Measure == NetBenefitGainName {
		switch {
		case c.Over == nil:
			return fmt.Errorf("criterion on %q needs over: [from, to], the range of risk thresholds where the gain is judged", c.Measure)
		case !(c.Over[0] > 0 && c.Over[1] < 1):
			return fmt.Errorf("criterion on %q: over needs risk thresholds strictly between 0 and 1, not [%g, %g]", c.Measure, c.Over[0], c.Over[1])
		case c.Over[0] > c.Over[1]:
			return fmt.Errorf("criterion on %q: over needs the lower threshold first, not [%g, %g]", c.Measure, c.Over[0], c.Over[1])
		case c.AtLeast == nil:
			return fmt.Errorf("criterion on %q takes at_least (the least gain at every threshold in the range)", c.Measure)
		}
		return nil
	}
	if c.Over != nil {
		return fmt.Errorf("criterion on %q: over goes only with %s", c.Measure, NetBenefitGainName)
	}
	_, iv, err := measureValue(&Performance{}, c.Measure)
	if err != nil {
		return err
	}
	if (iv != nil) != (c.Contains != nil) {
		if iv != nil {
			return fmt.Errorf("criterion on %q: an interval goes with contains (or name one end: %s.lower)", c.Measure, c.Measure)
		}
		return fmt.Errorf("criterion on %q: contains needs an interval, such as %s_ci", c.Measure, c.Measure)
	}
	return nil
}

// Judge applies the criteria to a performance. A criterion whose measure
// (or either end of its interval) is NaN or infinite is not met, with
// Note NotEstimable: what cannot be estimated cannot be shown to meet a
// bound.
func Judge(p *Performance, criteria []Criterion) (*Verdict, error) {
	v := &Verdict{Status: "pass"}
	for _, c := range criteria {
		if err := c.Check(); err != nil {
			return nil, err
		}
		var val float64
		var iv *[2]float64
		r := CriterionResult{Measure: c.Measure, Bound: c.Bound() + c.overText(), Severity: c.Severity, Source: c.Source}
		if c.Measure == NetBenefitGainName {
			val, r.AtThreshold, r.Thresholds = netBenefitGain(p, *c.Over)
		} else {
			val, iv, _ = measureValue(p, c.Measure)
		}
		r.Value, r.Interval = val, iv
		if r.Severity == "" {
			r.Severity = "fail"
		}
		switch {
		case c.Measure == NetBenefitGainName && len(r.Thresholds) == 0:
			r.Passed, r.Note = false, NoThresholdInRange
		case iv == nil && !finite(val), iv != nil && (!finite(iv[0]) || !finite(iv[1])):
			r.Passed, r.Note = false, NotEstimable
			if IsPooledMeasure(c.Measure) {
				r.Note = pooledNote(p.Pooled, c.Measure)
			}
		case c.AtLeast != nil:
			r.Passed = val >= *c.AtLeast
		case c.AtMost != nil:
			r.Passed = val <= *c.AtMost
		case c.Between != nil:
			r.Passed = val >= c.Between[0] && val <= c.Between[1]
		case c.Contains != nil:
			r.Passed = iv[0] <= *c.Contains && *c.Contains <= iv[1]
		}
		if !r.Passed {
			if r.Severity == "fail" {
				v.Status = "fail"
			} else if v.Status == "pass" {
				v.Status = "review"
			}
		}
		v.Criteria = append(v.Criteria, r)
	}
	return v, nil
}
