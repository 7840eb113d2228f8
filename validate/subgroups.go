package validate

import (
	"math"
	"strings"

	"github.com/riskaudit/riskaudit/metrics"
)

// DefaultMinSubgroupEvents is the fewest events a subgroup needs for its
// measures to be reported (common practice: below about 20 events the
// calibration slope and O/E are too imprecise to act on).
const DefaultMinSubgroupEvents = 20

// GroupColumn is a categorical column splitting the cohort's rows.
type GroupColumn struct {
	Name   string
	Levels []string
	// Codes index Levels for every row of the audit, −1 where missing.
	Codes []int32
}

// Subgroup is the model's performance in one subgroup.
type Subgroup struct {
	Column   string `json:"column"`
	Level    string `json:"level"`
	N        int    `json:"n"`
	Events   int    `json:"events"`
	TooSmall bool   `json:"too_small"`
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
			if !ok {
				continue
			}
			level := "(missing)"
			if code >= 0 {
				level = col.Levels[code]
			}
			out = append(out, measureSubgroup(col.Name, level, idx, y, p, lp, minEvents, criteria))
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
	if events < minEvents || len(idx)-events < minEvents {
		g.TooSmall = true
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
	if v, err := Judge(perf, applicable); err == nil {
		for _, r := range v.Criteria {
			if !r.Passed {
				g.Failed = append(g.Failed, r.Measure+" "+r.Bound)
			}
		}
	}
	return g
}
