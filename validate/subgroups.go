package validate

import (
	"fmt"
	"math"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/metrics"
)

// DefaultMinSubgroupEvents is the fewest events a subgroup needs for its
// measures to be reported (common practice: below about 20 events the
// calibration slope and O/E are too imprecise to act on).
const DefaultMinSubgroupEvents = 20

// GroupColumn is a column splitting the cohort's rows: a categorical
// column's levels, or the bands of a numeric column (BandColumn).
type GroupColumn struct {
	Name   string
	Levels []string
	// Codes index Levels for every row of the audit, −1 where missing.
	Codes []int32
	// Bands, for a banded numeric column, are the half-open intervals
	// [lower, upper) of the levels, in order; every band is reported,
	// an empty one as too small. Nil for a categorical column.
	Bands []Band
}

// Subgroup is the model's performance in one subgroup.
type Subgroup struct {
	Column string `json:"column"`
	Level  string `json:"level"`
	// Band is the interval of a banded numeric column's subgroup.
	Band     *Band `json:"band,omitempty"`
	N        int   `json:"n"`
	Events   int   `json:"events"`
	TooSmall bool  `json:"too_small"`
	// The measures, absent when the subgroup is too small.
	AUC     *float64    `json:"auc,omitempty"`
	AUCCI   *[2]float64 `json:"auc_ci,omitempty"`
	OE      *float64    `json:"oe,omitempty"`
	OECI    *[2]float64 `json:"oe_ci,omitempty"`
	CITL    *float64    `json:"citl,omitempty"`
	CITLCI  *[2]float64 `json:"citl_ci,omitempty"`
	Slope   *float64    `json:"slope,omitempty"`
	SlopeCI *[2]float64 `json:"slope_ci,omitempty"`
	// Failed lists the criteria the subgroup does not meet.
	Failed []string `json:"failed_criteria,omitempty"`

	// checks are the subgroup's criteria, judged or (too small) not, for
	// Verdict.AddSubgroups.
	checks []SubgroupCheck
}

// subgroupMeasures are the criteria measures a subgroup has.
var subgroupMeasures = []string{"auc", "auc_ci", "oe", "oe_ci", "citl", "citl_ci", "slope", "slope_ci"}

// Subgroups measures risks p (with logits lp) against y in every level
// of every column: AUC, O/E, calibration-in-the-large and slope, each
// with its 95% interval. A level with fewer than minEvents events (or
// non-events) is marked too small and given no measures. Each measured
// subgroup is checked against the criteria on those measures.
func Subgroups(y, p, lp []float64, cols []GroupColumn, minEvents int, criteria []Criterion, eps float64) []Subgroup {
	if minEvents <= 0 {
		minEvents = DefaultMinSubgroupEvents
	}
	if lp == nil {
		lp, _ = metrics.ClampedLogits(p, eps)
	} else {
		lp, _ = clampLogits(lp, eps)
	}
	var out []Subgroup
	for _, col := range cols {
		rows := map[int32][]int{}
		for i, c := range col.Codes {
			rows[c] = append(rows[c], i)
		}
		for code := int32(-1); code < int32(len(col.Levels)); code++ {
			idx, ok := rows[code]
			if !ok && (code < 0 || col.Bands == nil) {
				continue
			}
			level := MissingLevel
			if code >= 0 {
				level = col.Levels[code]
			}
			g := measureSubgroup(col.Name, level, idx, y, p, lp, minEvents, criteria)
			if code >= 0 && col.Bands != nil {
				b := col.Bands[code]
				g.Band = &b
			}
			out = append(out, g)
		}
	}
	return out
}

func measureSubgroup(col, level string, idx []int, y, p, lp []float64, minEvents int, criteria []Criterion) Subgroup {
	ys, ps, ls := make([]float64, len(idx)), make([]float64, len(idx)), make([]float64, len(idx))
	events := 0
	for k, i := range idx {
		ys[k], ps[k], ls[k] = y[i], p[i], lp[i]
		if y[i] == 1 {
			events++
		}
	}
	g := Subgroup{Column: col, Level: level, N: len(idx), Events: events}
	applicable := subgroupCriteria(criteria)
	if events < minEvents || len(idx)-events < minEvents {
		g.TooSmall = true
		note := fmt.Sprintf("not judged: %d events and %d non-events, fewer than the %d each a subgroup needs", events, len(idx)-events, minEvents)
		nan := math.NaN()
		for _, c := range applicable {
			sev := c.Severity
			if sev == "" {
				sev = "fail"
			}
			g.checks = append(g.checks, SubgroupCheck{Column: col, Level: level,
				CriterionResult: CriterionResult{Measure: c.Measure, Bound: c.Bound(), Value: nan, Severity: sev, Note: note}})
		}
		return g
	}
	auc, _ := metrics.AUC(metrics.SortByRisk(ys, ps))
	oe, oeci, _, _ := metrics.OE(ys, ps)
	perf := &Performance{Discrimination: Discrimination{AUCResult: auc}}
	perf.Calibration.OE, perf.Calibration.OECI = oe, oeci
	g.AUC, g.AUCCI, g.OE, g.OECI = &auc.AUC, &auc.CI, &perf.Calibration.OE, &perf.Calibration.OECI
	nan := math.NaN()
	perf.Calibration.CITL, perf.Calibration.Slope = nan, nan
	perf.Calibration.CITLCI, perf.Calibration.SlopeCI = [2]float64{nan, nan}, [2]float64{nan, nan}
	if citl, err := metrics.CalibrationInTheLarge(ys, ls); err == nil {
		perf.Calibration.CITL, perf.Calibration.CITLCI = citl.Value, citl.CI
		g.CITL, g.CITLCI = &perf.Calibration.CITL, &perf.Calibration.CITLCI
	}
	if slope, _, err := metrics.CalibrationSlope(ys, ls); err == nil {
		perf.Calibration.Slope, perf.Calibration.SlopeCI = slope.Value, slope.CI
		g.Slope, g.SlopeCI = &perf.Calibration.Slope, &perf.Calibration.SlopeCI
	}
	if v, err := Judge(perf, applicable); err == nil {
		for _, r := range v.Criteria {
			if !r.Passed {
				g.Failed = append(g.Failed, r.Measure+" "+r.Bound)
			}
			r.Source = ""
			g.checks = append(g.checks, SubgroupCheck{Column: col, Level: level, CriterionResult: r, Judged: true})
		}
	}
	return g
}

// subgroupCriteria are the criteria on the measures a subgroup has.
func subgroupCriteria(criteria []Criterion) []Criterion {
	var applicable []Criterion
	for _, c := range criteria {
		base, _, _ := strings.Cut(c.Measure, ".")
		for _, m := range subgroupMeasures {
			if base == m {
				applicable = append(applicable, c)
				break
			}
		}
	}
	return applicable
}

// MissingLevel is the level of the rows without a value in a subgroup
// column.
const MissingLevel = "(missing)"

// How subgroup checks count in the verdict, the values of
// Verdict.SubgroupCriteria (the plan's subgroup_criteria and the flag
// --subgroup-criteria).
const (
	// SubgroupReview, the default, makes a subgroup that misses a
	// criterion turn a passing verdict into review, never into fail.
	SubgroupReview = "review"
	// SubgroupFail counts a subgroup's miss as the criterion's own
	// severity, as if the overall measure had missed it.
	SubgroupFail = "fail"
	// SubgroupIgnore lists the subgroup checks without counting them.
	SubgroupIgnore = "ignore"
)

// SubgroupModes lists the values of Verdict.SubgroupCriteria.
func SubgroupModes() []string { return []string{SubgroupReview, SubgroupFail, SubgroupIgnore} }

// CheckSubgroupMode refuses a mode that is not one of SubgroupModes ("" is
// SubgroupReview).
func CheckSubgroupMode(mode string) error {
	switch mode {
	case "", SubgroupReview, SubgroupFail, SubgroupIgnore:
		return nil
	}
	return fmt.Errorf("subgroup criteria %s: give review (the default), fail or ignore", cohort.Quote(mode))
}

// SubgroupCheck is one criterion checked in one subgroup.
type SubgroupCheck struct {
	Column string `json:"column"`
	Level  string `json:"level"`
	CriterionResult
	// Judged is false for a subgroup too small to measure: its check is
	// neither passed nor failed.
	Judged bool `json:"judged"`
	// CountsAs is what a miss does to the verdict: "fail", "review" or
	// "none" (not counted: the mode is ignore, or the check passed or was
	// not judged).
	CountsAs string `json:"counts_as"`
}

// AddSubgroups adds the criteria checked in every subgroup to the
// verdict and counts each check that was judged and failed as mode says
// (SubgroupReview when mode is ""): review makes a pass into review,
// fail counts the criterion's own severity, ignore counts nothing. A
// subgroup too small to measure is listed as not judged and never
// changes the status.
func (v *Verdict) AddSubgroups(groups []Subgroup, mode string) error {
	if err := CheckSubgroupMode(mode); err != nil {
		return err
	}
	if mode == "" {
		mode = SubgroupReview
	}
	v.SubgroupCriteria = mode
	for _, g := range groups {
		for _, c := range g.checks {
			c.CountsAs = "none"
			if c.Judged && !c.Passed {
				switch mode {
				case SubgroupReview:
					c.CountsAs = "review"
				case SubgroupFail:
					c.CountsAs = c.Severity
				}
			}
			switch {
			case c.CountsAs == "fail":
				v.Status = "fail"
			case c.CountsAs == "review" && v.Status == "pass":
				v.Status = "review"
			}
			v.SubgroupChecks = append(v.SubgroupChecks, c)
		}
	}
	return nil
}

// SubgroupCounts are the subgroup checks of a verdict by outcome.
type SubgroupCounts struct {
	// Checks are all the subgroup checks, Judged those of subgroups
	// large enough to measure, Failed those judged and not met;
	// NotJudged counts the subgroups (not checks) too small to judge.
	Checks, Judged, Failed, NotJudged int
}

// String says how many judged checks were not met and how many
// subgroups were not judged, such as "3 of 12 subgroup checks not met, 1
// subgroup not judged (too few events)".
func (n SubgroupCounts) String() string {
	var parts []string
	if n.Judged > 0 {
		parts = append(parts, fmt.Sprintf("%d of %d subgroup checks not met", n.Failed, n.Judged))
	}
	if n.NotJudged > 0 {
		parts = append(parts, plural(n.NotJudged, "subgroup")+" not judged (too few events)")
	}
	return strings.Join(parts, ", ")
}

// CountSubgroups counts the verdict's subgroup checks.
func (v *Verdict) CountSubgroups() SubgroupCounts {
	var n SubgroupCounts
	small := map[[2]string]bool{}
	for _, c := range v.SubgroupChecks {
		n.Checks++
		switch {
		case !c.Judged:
			small[[2]string{c.Column, c.Level}] = true
		case !c.Passed:
			n.Judged++
			n.Failed++
		default:
			n.Judged++
		}
	}
	n.NotJudged = len(small)
	return n
}

// SubgroupFinding is the summary's statement of the subgroup checks: how
// many failed, in how many subgroups, how they count, and how many
// subgroups were too small to judge; ok is false when no subgroup was
// checked. It names no column or level (user text): the verdict table
// lists them.
func (v *Verdict) SubgroupFinding() (f Finding, ok bool) {
	n := v.CountSubgroups()
	if n.Checks == 0 {
		return Finding{}, false
	}
	failedIn := map[[2]string]bool{}
	for _, c := range v.SubgroupChecks {
		if c.Judged && !c.Passed {
			failedIn[[2]string{c.Column, c.Level}] = true
		}
	}
	judged := n.Judged
	var text string
	switch {
	case judged == 0:
		text = "No subgroup had enough events to be judged against the criteria."
	case n.Failed == 0:
		text = fmt.Sprintf("Every subgroup judged meets the criteria checked in subgroups (%d checks).", judged)
	default:
		text = fmt.Sprintf("%d of %d subgroup checks are not met, in %s (see the verdict table)", n.Failed, judged, plural(len(failedIn), "subgroup"))
		switch v.SubgroupCriteria {
		case SubgroupIgnore:
			text += "; the plan does not count subgroup checks in the verdict (subgroup criteria: ignore)."
		case SubgroupFail:
			text += "; they count in the verdict with each criterion's own severity (subgroup criteria: fail)."
		default:
			text += "; they make the verdict at least review (subgroup criteria: review, the default)."
		}
	}
	if n.NotJudged > 0 && judged > 0 {
		text += fmt.Sprintf(" %s had too few events to judge, so neither met nor failed the criteria.", plural(n.NotJudged, "subgroup"))
	}
	return Finding{Area: "subgroups", Text: text}, true
}

// plural writes n and the noun, with an s unless n is 1.
func plural(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}
