package validate

import (
	"math"
	"slices"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/metrics"
)

// judgePerf is a performance with the measures the Judge tests bound.
func judgePerf() *Performance {
	p := &Performance{}
	p.Discrimination.AUC = 0.75
	p.Discrimination.CI = [2]float64{0.70, 0.80}
	p.Calibration.Slope = 0.8
	p.Calibration.CITL = -0.2
	p.Calibration.OECI = [2]float64{0.9, 1}
	p.Calibration.ICI = 0.03
	return p
}

func ptr(v float64) *float64 { return &v }

// TestJudgeBoundaries: a measure exactly on its bound meets it (every
// bound is inclusive), the next float beyond does not, and a measure
// that is NaN is not met with the note NotEstimable. Each measure on a
// bound is set to the same float64 literal as the bound, so "exactly on"
// is exact.
func TestJudgeBoundaries(t *testing.T) {
	up, down := math.Inf(1), math.Inf(-1)
	for _, c := range []struct {
		name   string
		set    func(p *Performance)
		crit   Criterion
		passed bool
		note   string
	}{
		{"auc on at_least", nil, Criterion{Measure: "auc", AtLeast: ptr(0.75)}, true, ""},
		{"auc a float below at_least", func(p *Performance) { p.Discrimination.AUC = math.Nextafter(0.75, down) },
			Criterion{Measure: "auc", AtLeast: ptr(0.75)}, false, ""},
		{"auc_ci.lower on at_least", nil, Criterion{Measure: "auc_ci.lower", AtLeast: ptr(0.70)}, true, ""},
		{"ici on at_most", nil, Criterion{Measure: "ici", AtMost: ptr(0.03)}, true, ""},
		{"ici a float above at_most", func(p *Performance) { p.Calibration.ICI = math.Nextafter(0.03, up) },
			Criterion{Measure: "ici", AtMost: ptr(0.03)}, false, ""},
		{"slope on the lower end of between", nil, Criterion{Measure: "slope", Between: &[2]float64{0.8, 1.2}}, true, ""},
		{"slope a float below between", func(p *Performance) { p.Calibration.Slope = math.Nextafter(0.8, down) },
			Criterion{Measure: "slope", Between: &[2]float64{0.8, 1.2}}, false, ""},
		{"citl on the lower end of between", nil, Criterion{Measure: "citl", Between: &[2]float64{-0.2, 0.2}}, true, ""},
		{"slope on the upper end of between", func(p *Performance) { p.Calibration.Slope = 1.2 },
			Criterion{Measure: "slope", Between: &[2]float64{0.8, 1.2}}, true, ""},
		{"slope a float above between", func(p *Performance) { p.Calibration.Slope = math.Nextafter(1.2, up) },
			Criterion{Measure: "slope", Between: &[2]float64{0.8, 1.2}}, false, ""},
		{"oe_ci whose upper end is 1", nil, Criterion{Measure: "oe_ci", Contains: ptr(1)}, true, ""},
		{"oe_ci ending a float below 1", func(p *Performance) { p.Calibration.OECI[1] = math.Nextafter(1, down) },
			Criterion{Measure: "oe_ci", Contains: ptr(1)}, false, ""},
		{"NaN slope", func(p *Performance) { p.Calibration.Slope = math.NaN() },
			Criterion{Measure: "slope", Between: &[2]float64{0.8, 1.2}}, false, NotEstimable},
		{"infinite end of oe_ci", func(p *Performance) { p.Calibration.OECI[1] = up },
			Criterion{Measure: "oe_ci", Contains: ptr(1)}, false, NotEstimable},
	} {
		p := judgePerf()
		if c.set != nil {
			c.set(p)
		}
		v, err := Judge(p, []Criterion{c.crit})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		r := v.Criteria[0]
		want := "pass"
		if !c.passed {
			want = "fail" // severity "" is fail
		}
		if r.Passed != c.passed || r.Note != c.note || v.Status != want {
			t.Errorf("%s: passed %v note %q status %s, want %v %q %s", c.name, r.Passed, r.Note, v.Status, c.passed, c.note, want)
		}
	}
}

// TestJudgeStatus: review criteria missed give review, a fail criterion
// missed gives fail whatever else; the order does not matter.
func TestJudgeStatus(t *testing.T) {
	miss := func(sev string) Criterion { return Criterion{Measure: "auc", AtLeast: ptr(0.9), Severity: sev} }
	meet := Criterion{Measure: "auc", AtLeast: ptr(0.5)}
	for _, c := range []struct {
		crits []Criterion
		want  string
	}{
		{[]Criterion{meet}, "pass"},
		{[]Criterion{meet, miss("review")}, "review"},
		{[]Criterion{miss("review"), miss("fail")}, "fail"},
		{[]Criterion{miss("fail"), miss("review")}, "fail"},
		{nil, "pass"},
	} {
		v, err := Judge(judgePerf(), c.crits)
		if err != nil || v.Status != c.want {
			t.Errorf("%d criteria: status %v (%v), want %s", len(c.crits), v, err, c.want)
		}
	}
}

// TestJudgeNetBenefitGain: the criterion's value is the smallest gain of
// the model over the better default strategy, NB_model − max(NB_all, 0),
// at the decision-curve thresholds inside [from, to] (both ends
// included), and at_least holds when every one of them reaches it.
// Net benefits are dyadic (exact in float64) so that the bounds are met
// exactly.
func TestJudgeNetBenefitGain(t *testing.T) {
	nb := func(t, model, all float64) metrics.NetBenefit {
		return metrics.NetBenefit{Threshold: t, Model: model, TreatAll: all}
	}
	curve := []metrics.NetBenefit{
		nb(0.05, 0.25, 0.1875),  // gain over treat all 0.0625
		nb(0.10, 0.25, 0.125),   // 0.125
		nb(0.15, 0.125, -0.25),  // treat none is better: 0.125
		nb(0.20, 0.0625, -0.5),  // 0.0625
		nb(0.25, -0.0625, -0.5), // −0.0625, outside [0.05, 0.2]
	}
	for _, c := range []struct {
		name     string
		over     [2]float64
		least    float64
		value    float64
		at       float64
		ts       []float64
		passed   bool
		noThresh bool
	}{
		{"range of four thresholds, least on the bound", [2]float64{0.05, 0.2}, 0.0625, 0.0625, 0.05, []float64{0.05, 0.1, 0.15, 0.2}, true, false},
		{"least a float above the smallest gain", [2]float64{0.05, 0.2}, math.Nextafter(0.0625, 1), 0.0625, 0.05, []float64{0.05, 0.1, 0.15, 0.2}, false, false},
		{"against treat none", [2]float64{0.15, 0.15}, 0.125, 0.125, 0.15, []float64{0.15}, true, false},
		{"range into the loss", [2]float64{0.2, 0.3}, 0, -0.0625, 0.25, []float64{0.2, 0.25}, false, false},
		{"range between thresholds", [2]float64{0.11, 0.14}, 0.001, math.NaN(), 0, nil, false, true},
		// A grid threshold 1e-12 off its decimal (rounding of FROM:TO:STEP)
		// still counts as inside.
		{"end off by rounding", [2]float64{0.1 + 1e-12, 0.1 + 1e-12}, 0.125, 0.125, 0.1, []float64{0.1}, true, false},
	} {
		p := &Performance{NetBenefit: curve}
		crit := Criterion{Measure: NetBenefitGainName, AtLeast: ptr(c.least), Over: &c.over, Severity: "review"}
		v, err := Judge(p, []Criterion{crit})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		r := v.Criteria[0]
		if r.Passed != c.passed || !slices.Equal(r.Thresholds, c.ts) {
			t.Errorf("%s: passed %v at %v, want %v at %v", c.name, r.Passed, r.Thresholds, c.passed, c.ts)
		}
		if c.noThresh {
			if r.Note != NoThresholdInRange || !math.IsNaN(r.Value) || r.AtThreshold != nil {
				t.Errorf("%s: note %q value %g at %v, want the no-threshold note", c.name, r.Note, r.Value, r.AtThreshold)
			}
			continue
		}
		if r.Value != c.value || r.AtThreshold == nil || *r.AtThreshold != c.at || r.Note != "" {
			t.Errorf("%s: value %g at %v (note %q), want %g at %g", c.name, r.Value, r.AtThreshold, r.Note, c.value, c.at)
		}
		if !c.passed && v.Status != "review" {
			t.Errorf("%s: status %s, want review", c.name, v.Status)
		}
		if !strings.Contains(r.Bound, "at every decision-curve threshold in [") {
			t.Errorf("%s: bound %q does not state the range", c.name, r.Bound)
		}
	}
}

// TestNetBenefitGainRiskOnThreshold: a patient whose risk equals the
// threshold is treated, as the decision curve treats them. Hand count
// (Vickers & Elkin 2006: NB = TP/n − FP/n · t/(1 − t)) on ten patients
// at t = 0.2 (odds 1/4): risks ≥ 0.2 are rows 4 … 9, holding the 3
// events and 3 non-events, so NB = 3/10 − 3/10 · 1/4 = 0.225; treating
// all gives 3/10 − 7/10 · 1/4 = 0.125; the gain is 0.1. Were the two
// risks of exactly 0.2 (an event and a non-event) left untreated, NB
// would be 2/10 − 2/10 · 1/4 = 0.15 and the gain 0.025.
func TestNetBenefitGainRiskOnThreshold(t *testing.T) {
	y := []float64{0, 0, 0, 0, 1, 0, 1, 0, 1, 0}
	p := []float64{0.01, 0.05, 0.1, 0.15, 0.2, 0.2, 0.4, 0.5, 0.6, 0.7}
	perf, err := Assess(y, p, Options{Thresholds: []float64{0.2}})
	if err != nil {
		t.Fatal(err)
	}
	v, err := Judge(perf, []Criterion{{Measure: NetBenefitGainName, AtLeast: ptr(0.1), Over: &[2]float64{0.2, 0.2}}})
	if err != nil {
		t.Fatal(err)
	}
	r := v.Criteria[0]
	if math.Abs(r.Value-0.1) > 1e-15 || math.Abs(perf.NetBenefit[0].Model-0.225) > 1e-15 {
		t.Errorf("gain %.17g (model NB %.17g), want 0.1 (0.225)", r.Value, perf.NetBenefit[0].Model)
	}
}

// TestNetBenefitCriterionChecked: the form of a net-benefit criterion.
func TestNetBenefitCriterionChecked(t *testing.T) {
	over := &[2]float64{0.05, 0.2}
	for _, c := range []struct {
		crit Criterion
		want string
	}{
		{Criterion{Measure: NetBenefitGainName, AtLeast: ptr(0.001), Over: over}, ""},
		{Criterion{Measure: NetBenefitGainName, AtLeast: ptr(0.001)}, "needs over"},
		{Criterion{Measure: NetBenefitGainName, AtMost: ptr(0.001), Over: over}, "takes at_least"},
		{Criterion{Measure: NetBenefitGainName, AtLeast: ptr(0.001), Over: &[2]float64{0.2, 0.05}}, "lower threshold first"},
		{Criterion{Measure: NetBenefitGainName, AtLeast: ptr(0.001), Over: &[2]float64{0.05, 1}}, "strictly between 0 and 1"},
		{Criterion{Measure: "auc", AtLeast: ptr(0.7), Over: over}, "over goes only with net_benefit_gain"},
	} {
		err := c.crit.Check()
		if (c.want == "") != (err == nil) || (err != nil && !strings.Contains(err.Error(), c.want)) {
			t.Errorf("%+v: %v, want %q", c.crit, err, c.want)
		}
	}
	if _, err := Judge(&Performance{}, []Criterion{{Measure: NetBenefitGainName, AtLeast: ptr(0.001)}}); err == nil {
		t.Error("Judge accepted a net-benefit criterion without a range")
	}
}

// subgroupCohort is 600 invented patients in three sites: A (300, risks
// as observed), B (280, risks that under-predict: O/E near 2) and C (20
// patients, 4 events: too small to judge).
func subgroupCohort() (y, p []float64, col GroupColumn) {
	col = GroupColumn{Name: "site", Levels: []string{"A", "B", "C"}}
	add := func(code int32, n int, risk func(i int) float64, event func(i int) bool) {
		for i := 0; i < n; i++ {
			r := risk(i)
			p = append(p, r)
			if event(i) {
				y = append(y, 1)
			} else {
				y = append(y, 0)
			}
			col.Codes = append(col.Codes, code)
		}
	}
	// Site A: risks 0.05 … 0.95 in steps; an event exactly in the share
	// the risk says, by a deterministic stride.
	add(0, 300, func(i int) float64 { return 0.05 + 0.9*float64(i%10)/9 },
		func(i int) bool { return float64((i/10)%10) < 10*(0.05+0.9*float64(i%10)/9) })
	// Site B: the same risks halved, the same events.
	add(1, 280, func(i int) float64 { return (0.05 + 0.9*float64(i%10)/9) / 2 },
		func(i int) bool { return float64((i/10)%10) < 10*(0.05+0.9*float64(i%10)/9) })
	add(2, 20, func(i int) float64 { return 0.2 }, func(i int) bool { return i < 4 })
	return y, p, col
}

// TestSubgroupCriteriaModes: the subgroup checks count in the verdict as
// the mode says. Site B misses the O/E criterion (fail severity) and the
// CITL one (review severity); site C is too small and is listed as not
// judged, neither passed nor counted.
func TestSubgroupCriteriaModes(t *testing.T) {
	y, p, col := subgroupCohort()
	crits := []Criterion{
		{Measure: "oe_ci", Contains: ptr(1), Severity: "fail"},
		{Measure: "citl", Between: &[2]float64{-0.5, 0.5}, Severity: "review"},
		{Measure: "ici", AtMost: ptr(0.5), Severity: "fail"}, // not checked in subgroups
	}
	groups := Subgroups(y, p, nil, []GroupColumn{col}, 20, crits, DefaultEpsilon)
	if len(groups) != 3 || groups[0].TooSmall || groups[1].TooSmall || !groups[2].TooSmall {
		t.Fatalf("subgroups %+v", groups)
	}
	if len(groups[0].Failed) != 0 || len(groups[1].Failed) != 2 {
		t.Fatalf("site A misses %v, site B %v; want none and both", groups[0].Failed, groups[1].Failed)
	}
	for _, c := range []struct {
		mode, start, want string
		counts            []string // counts_as of B's oe_ci and citl checks
	}{
		{"", "pass", "review", []string{"review", "review"}},
		{SubgroupReview, "pass", "review", []string{"review", "review"}},
		{SubgroupReview, "fail", "fail", []string{"review", "review"}},
		{SubgroupFail, "pass", "fail", []string{"fail", "review"}},
		{SubgroupFail, "review", "fail", []string{"fail", "review"}},
		{SubgroupIgnore, "pass", "pass", []string{"none", "none"}},
		{SubgroupIgnore, "review", "review", []string{"none", "none"}},
	} {
		v := &Verdict{Status: c.start}
		if err := v.AddSubgroups(groups, c.mode); err != nil {
			t.Fatal(err)
		}
		if v.Status != c.want {
			t.Errorf("mode %q from %s: status %s, want %s", c.mode, c.start, v.Status, c.want)
		}
		// Two checks (oe_ci, citl) for each of the three sites.
		if len(v.SubgroupChecks) != 6 {
			t.Fatalf("mode %q: %d checks, want 6: %+v", c.mode, len(v.SubgroupChecks), v.SubgroupChecks)
		}
		var bCounts []string
		for _, k := range v.SubgroupChecks {
			switch k.Level {
			case "A":
				if !k.Judged || !k.Passed || k.CountsAs != "none" {
					t.Errorf("mode %q: site A check %+v", c.mode, k)
				}
			case "B":
				if !k.Judged || k.Passed {
					t.Errorf("mode %q: site B check %+v", c.mode, k)
				}
				bCounts = append(bCounts, k.CountsAs)
			case "C":
				if k.Judged || k.Passed || k.CountsAs != "none" || !math.IsNaN(k.Value) || !strings.Contains(k.Note, "not judged: 4 events") {
					t.Errorf("mode %q: site C (too small) check %+v", c.mode, k)
				}
			}
		}
		if !slices.Equal(bCounts, c.counts) {
			t.Errorf("mode %q: site B counts as %v, want %v", c.mode, bCounts, c.counts)
		}
		n := v.CountSubgroups()
		if n != (SubgroupCounts{Checks: 6, Judged: 4, Failed: 2, NotJudged: 1}) {
			t.Errorf("mode %q: counts %+v", c.mode, n)
		}
		f, ok := v.SubgroupFinding()
		if !ok || !strings.Contains(f.Text, "2 of 4 subgroup checks are not met, in 1 subgroup") || !strings.Contains(f.Text, "1 subgroup had too few events") {
			t.Errorf("mode %q: finding %q", c.mode, f.Text)
		}
	}
	if err := (&Verdict{Status: "pass"}).AddSubgroups(groups, "warn"); err == nil {
		t.Error("mode warn accepted")
	}
	// Without criteria on subgroup measures there are no checks, and a
	// pass stays a pass.
	v := &Verdict{Status: "pass"}
	if err := v.AddSubgroups(Subgroups(y, p, nil, []GroupColumn{col}, 20, crits[2:], DefaultEpsilon), ""); err != nil || v.Status != "pass" || len(v.SubgroupChecks) != 0 {
		t.Errorf("no subgroup criteria: %v %+v", err, v)
	}
	if _, ok := v.SubgroupFinding(); ok {
		t.Error("a finding without subgroup checks")
	}
}
