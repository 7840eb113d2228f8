package validate

import (
	"math"
	"strings"
	"testing"
)

// TestJudgePooled is a table of single criteria on the pooled measures
// of a hand-made analysis across clusters: as for the overall measures
// every bound is inclusive, so a value exactly on its bound meets it and
// the smallest step past it does not; a prediction interval or a
// probability of acceptable performance from fewer than 3 clusters, and
// a measure not pooled at all, do not meet any bound and say why.
func TestJudgePooled(t *testing.T) {
	f := func(v float64) *float64 { return &v }
	nan := math.NaN()
	chanceAUC, chanceOE := 0.8, 0.625
	perf := &Performance{Pooled: &PooledMeasures{
		AUC: PooledMeasure{K: 5, Estimate: 0.75, CI: [2]float64{0.7, 0.8}, PredictionInterval: [2]float64{0.65, 0.85}, ProbAcceptable: &chanceAUC},
		OE:  PooledMeasure{K: 5, Estimate: 1.1, CI: [2]float64{1, 1.25}, PredictionInterval: [2]float64{0.8, 1.5}, ProbAcceptable: &chanceOE},
		// Two clusters: pooled, but no prediction interval (meta.Pool
		// gives it NaN below 3) and no probability.
		Slope: PooledMeasure{K: 2, Estimate: 0.9, CI: [2]float64{0.5, 1.3}, PredictionInterval: [2]float64{nan, nan},
			Note: "no prediction interval: it needs at least 3 clusters (a t distribution on k − 2 degrees of freedom)"},
		// One cluster: not pooled.
		CITL: PooledMeasure{K: 1, Estimate: nan, CI: [2]float64{nan, nan}, PredictionInterval: [2]float64{nan, nan},
			Note: "not pooled: 1 cluster(s) with this measure, at least 2 needed"},
	}}
	for _, c := range []struct {
		name   string
		crit   Criterion
		passed bool
		status string
		note   string
	}{
		{"pooled.auc on its bound", Criterion{Measure: "pooled.auc", AtLeast: f(0.75)}, true, "pass", ""},
		{"pooled.auc just below", Criterion{Measure: "pooled.auc", AtLeast: f(0.7500001)}, false, "fail", ""},
		{"pooled.auc_ci.lower on its bound", Criterion{Measure: "pooled.auc_ci.lower", AtLeast: f(0.7)}, true, "pass", ""},
		{"pooled.auc_pi.lower on its bound", Criterion{Measure: "pooled.auc_pi.lower", AtLeast: f(0.65)}, true, "pass", ""},
		{"pooled.auc_pi.lower just below, review", Criterion{Measure: "pooled.auc_pi.lower", AtLeast: f(0.6500001), Severity: "review"}, false, "review", ""},
		{"pooled.auc_pi.upper at most, on its bound", Criterion{Measure: "pooled.auc_pi.upper", AtMost: f(0.85)}, true, "pass", ""},
		{"pooled.oe_pi contains its lower end", Criterion{Measure: "pooled.oe_pi", Contains: f(0.8)}, true, "pass", ""},
		{"pooled.oe_pi contains its upper end", Criterion{Measure: "pooled.oe_pi", Contains: f(1.5)}, true, "pass", ""},
		{"pooled.oe_pi does not contain 1.5000001", Criterion{Measure: "pooled.oe_pi", Contains: f(1.5000001)}, false, "fail", ""},
		{"pooled.oe_ci touching 1", Criterion{Measure: "pooled.oe_ci", Contains: f(1)}, true, "pass", ""},
		{"pooled.oe on the upper end of between", Criterion{Measure: "pooled.oe", Between: &[2]float64{0.9, 1.1}}, true, "pass", ""},
		{"pooled.oe_pi.lower between, on its lower end", Criterion{Measure: "pooled.oe_pi.lower", Between: &[2]float64{0.8, 1}}, true, "pass", ""},
		{"pooled.auc_chance on its bound", Criterion{Measure: "pooled.auc_chance", AtLeast: f(0.8)}, true, "pass", ""},
		{"pooled.auc_chance just below", Criterion{Measure: "pooled.auc_chance", AtLeast: f(0.8000001)}, false, "fail", ""},
		{"pooled.oe_chance below 0.8, review", Criterion{Measure: "pooled.oe_chance", AtLeast: f(0.8), Severity: "review"}, false, "review", ""},
		{"pooled.oe_chance on a bound of 0.625", Criterion{Measure: "pooled.oe_chance", AtLeast: f(0.625)}, true, "pass", ""},
		{"pooled.slope from 2 clusters", Criterion{Measure: "pooled.slope", Between: &[2]float64{0.9, 1.1}}, true, "pass", ""},
		{"pooled.slope_ci from 2 clusters contains 1", Criterion{Measure: "pooled.slope_ci", Contains: f(1)}, true, "pass", ""},
		{"pooled.slope_pi from 2 clusters", Criterion{Measure: "pooled.slope_pi", Contains: f(1)}, false, "fail", "2 clusters with this measure, at least 3 needed for a prediction interval"},
		{"pooled.slope_pi.lower from 2 clusters", Criterion{Measure: "pooled.slope_pi.lower", AtLeast: f(0), Severity: "review"}, false, "review", "2 clusters with this measure, at least 3 needed"},
		{"pooled.slope_chance from 2 clusters", Criterion{Measure: "pooled.slope_chance", AtLeast: f(0)}, false, "fail", "2 clusters with this measure, at least 3 needed for a prediction interval"},
		{"pooled.citl not pooled", Criterion{Measure: "pooled.citl", Between: &[2]float64{-1, 1}}, false, "fail", "at least 2 needed to pool it"},
	} {
		t.Run(c.name, func(t *testing.T) {
			v, err := Judge(perf, []Criterion{c.crit})
			if err != nil {
				t.Fatal(err)
			}
			r := v.Criteria[0]
			if r.Passed != c.passed || v.Status != c.status {
				t.Errorf("passed %v, status %q; want %v, %q (value %g, interval %v)", r.Passed, v.Status, c.passed, c.status, r.Value, r.Interval)
			}
			if c.note == "" && r.Note != "" || !strings.Contains(r.Note, c.note) {
				t.Errorf("note %q; want one containing %q", r.Note, c.note)
			}
		})
	}
	// Without an analysis across clusters a pooled criterion is not met.
	v, err := Judge(&Performance{}, []Criterion{{Measure: "pooled.auc_chance", AtLeast: f(0.8)}})
	if err != nil {
		t.Fatal(err)
	}
	if r := v.Criteria[0]; r.Passed || r.Note != NoClusters || v.Status != "fail" {
		t.Errorf("without clusters: %+v, status %s; want not met with note %q", r, v.Status, NoClusters)
	}
}

// TestPooledCriterionForms: every listed pooled measure takes its kind
// of bound, and names that are not pooled measures, or bounds that do
// not fit, are refused.
func TestPooledCriterionForms(t *testing.T) {
	one := 1.0
	for _, name := range PooledMeasureNames() {
		c := Criterion{Measure: name, AtLeast: &one}
		if strings.HasSuffix(name, "_ci") || strings.HasSuffix(name, "_pi") {
			c = Criterion{Measure: name, Contains: &one}
		}
		if err := c.Check(); err != nil {
			t.Errorf("%s: %v", name, err)
		}
	}
	for _, c := range []Criterion{
		{Measure: "pooled.citl_chance", AtLeast: &one},
		{Measure: "pooled.brier", AtMost: &one},
		{Measure: "pooled.auc.lower", AtLeast: &one},
		{Measure: "pooled.auc_chance.lower", AtLeast: &one},
		{Measure: "pooled.auc_pi", AtLeast: &one},
		{Measure: "pooled.auc_pi.middle", AtLeast: &one},
		{Measure: "pooled.auc", Contains: &one},
		{Measure: "pooled.auc_x", AtLeast: &one},
	} {
		if err := c.Check(); err == nil {
			t.Errorf("%s with %s: accepted", c.Measure, c.Bound())
		}
	}
}

// TestPooledCriteriaNotInSubgroups: a subgroup has no analysis across
// clusters, so no pooled criterion is checked in it, while the overall
// criterion on the same measure is.
func TestPooledCriteriaNotInSubgroups(t *testing.T) {
	one := 0.5
	got := subgroupCriteria([]Criterion{{Measure: "pooled.auc", AtLeast: &one}, {Measure: "auc", AtLeast: &one}, {Measure: "pooled.oe_ci", Contains: &one}})
	if len(got) != 1 || got[0].Measure != "auc" {
		t.Errorf("subgroup criteria %+v; want auc alone", got)
	}
}
