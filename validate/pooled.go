package validate

import (
	"fmt"
	"math"
	"strings"
)

// PooledPrefix begins the name of every criterion measure taken from the
// analysis across clusters (Clusters.Pooled), such as pooled.auc_pi.lower.
const PooledPrefix = "pooled."

// pooledBases are the pooled measures, in Clusters.Pooled's order, and
// whether each has a probability of acceptable performance (calibration-
// in-the-large has no acceptable range).
var pooledBases = []struct {
	name   string
	chance bool
}{{"auc", true}, {"oe", true}, {"citl", false}, {"slope", true}}

// PooledMeasureNames lists the criterion measures on the analysis across
// clusters, for each of auc, oe, citl and slope (PooledMeasure):
//
//   - pooled.M: the random-effects pooled estimate (Estimate);
//   - pooled.M_ci, with .lower and .upper: its confidence interval (CI);
//   - pooled.M_pi, with .lower and .upper: the prediction interval for the
//     true value in a new cluster (PredictionInterval), which needs at
//     least 3 clusters (Higgins, Thompson & Spiegelhalter 2009);
//   - pooled.M_chance, for auc, oe and slope: the probability that the
//     true value in a new cluster lies in the acceptable range of the
//     analysis (AcceptBounds; ProbAcceptable), which needs a prediction
//     interval too.
//
// An interval name goes with contains; the others take at_least, at_most
// or between. All are on the measure's own scale (AUC and O/E
// back-transformed), so a bound reads as it does on the overall measure.
func PooledMeasureNames() []string {
	var names []string
	for _, b := range pooledBases {
		m := PooledPrefix + b.name
		names = append(names, m)
		for _, iv := range []string{m + "_ci", m + "_pi"} {
			names = append(names, iv, iv+".lower", iv+".upper")
		}
		if b.chance {
			names = append(names, m+"_chance")
		}
	}
	return names
}

// unknownMeasure is the error for a criterion's measure that is none of
// MeasureNames: it lists them, the pooled ones in short (the full list
// would be three times as long).
func unknownMeasure(name string) error {
	var names []string
	for _, m := range MeasureNames() {
		if !IsPooledMeasure(m) {
			names = append(names, m)
		}
	}
	return fmt.Errorf("unknown measure %q (measures: %s; pooled.M, pooled.M_ci, pooled.M_pi (.lower, .upper), pooled.M_chance (not citl), M = auc, oe, citl, slope)",
		name, strings.Join(names, ", "))
}

// IsPooledMeasure reports whether a criterion's measure is taken from the
// analysis across clusters.
func IsPooledMeasure(name string) bool { return strings.HasPrefix(name, PooledPrefix) }

// HasPooledCriterion returns the first criterion on a pooled measure, and
// whether there is one: such a criterion needs an analysis across
// clusters.
func HasPooledCriterion(criteria []Criterion) (Criterion, int, bool) {
	for i, c := range criteria {
		if IsPooledMeasure(c.Measure) {
			return c, i, true
		}
	}
	return Criterion{}, -1, false
}

// pooledParts splits a pooled measure's name into the pooled measure,
// what of it is named ("", "ci", "pi" or "chance") and the end of an
// interval ("", "lower" or "upper"); ok is false for a name that is not
// one of PooledMeasureNames.
func pooledParts(name string) (base, what, end string, ok bool) {
	rest, found := strings.CutPrefix(name, PooledPrefix)
	if !found {
		return "", "", "", false
	}
	rest, end, _ = strings.Cut(rest, ".")
	base, what, _ = strings.Cut(rest, "_")
	known := false
	for _, b := range pooledBases {
		if b.name == base {
			known = true
			if what == "chance" && !b.chance {
				return "", "", "", false
			}
		}
	}
	switch {
	case !known:
		return "", "", "", false
	case end != "" && end != "lower" && end != "upper":
		return "", "", "", false
	case end != "" && what != "ci" && what != "pi":
		return "", "", "", false
	case what != "" && what != "ci" && what != "pi" && what != "chance":
		return "", "", "", false
	}
	return base, what, end, true
}

// pooledMeasure is the pooled measure named base of pm; nil when there
// was no analysis across clusters.
func pooledMeasure(pm *PooledMeasures, base string) *PooledMeasure {
	if pm == nil {
		return nil
	}
	return map[string]*PooledMeasure{"auc": &pm.AUC, "oe": &pm.OE, "citl": &pm.CITL, "slope": &pm.Slope}[base]
}

// pooledValue is measureValue for a pooled measure: NaN (with a NaN
// interval for an interval name) when it could not be estimated or there
// was no analysis across clusters.
func pooledValue(pm *PooledMeasures, name string) (float64, *[2]float64, error) {
	base, what, end, ok := pooledParts(name)
	if !ok {
		return 0, nil, unknownMeasure(name)
	}
	nan := math.NaN()
	m := pooledMeasure(pm, base)
	var iv [2]float64
	switch {
	case what == "chance":
		if m == nil || m.ProbAcceptable == nil {
			return nan, nil, nil
		}
		return *m.ProbAcceptable, nil, nil
	case what == "":
		if m == nil {
			return nan, nil, nil
		}
		return m.Estimate, nil, nil
	case m == nil:
		iv = [2]float64{nan, nan}
	case what == "ci":
		iv = m.CI
	default:
		iv = m.PredictionInterval
		if m.K < 3 {
			iv = [2]float64{nan, nan}
		}
	}
	switch end {
	case "lower":
		return iv[0], nil, nil
	case "upper":
		return iv[1], nil, nil
	}
	return nan, &iv, nil
}

// NoClusters is the Note of a pooled criterion judged without an
// analysis across clusters (an audit refuses such a criterion first).
const NoClusters = "there is no analysis across clusters, so the criterion cannot be shown to be met"

// pooledNote says why a pooled criterion's measure could not be
// estimated (PooledReason), as a criterion's Note.
func pooledNote(pm *PooledMeasures, name string) string {
	if pm == nil {
		return NoClusters
	}
	return "the pooled measure could not be estimated (" + PooledReason(pm, name) + "), so the criterion cannot be shown to be met"
}

// PooledReason says in a few words why the pooled measure named (one of
// PooledMeasureNames) could not be estimated: no analysis across
// clusters, fewer than 2 clusters with the measure to pool, or fewer than
// 3 for a prediction interval or a probability of acceptable performance
// (meta.Pool: a t distribution on k − 2 degrees of freedom).
func PooledReason(pm *PooledMeasures, name string) string {
	base, what, _, _ := pooledParts(name)
	m := pooledMeasure(pm, base)
	switch {
	case m == nil:
		return "no analysis across clusters"
	case m.K < 2:
		return fmt.Sprintf("%s with this measure, at least 2 needed to pool it", count(m.K, "cluster"))
	case (what == "pi" || what == "chance") && m.K < 3:
		return fmt.Sprintf("%s with this measure, at least 3 needed for a prediction interval", count(m.K, "cluster"))
	case m.Note != "":
		return m.Note
	}
	return "not estimable"
}
