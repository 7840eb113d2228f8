package monitor

import (
	"fmt"
	"math"
	"time"

	"github.com/riskaudit/riskaudit/metrics"
)

// Periods say how patients in date order are grouped for calibration by
// period.
type Periods struct {
	// Kind is "month", "quarter" or "block".
	Kind string
	// Block is the number of patients a block holds (Kind "block"); the
	// last block holds the rest and is merged into the one before when it
	// has fewer than half a block, so no period is a fragment.
	Block int
}

// Period is one period's calibration and discrimination.
type Period struct {
	Label string `json:"label"`
	// Start and End are the first and last dates in the period (empty
	// without dates); First and Last the 1-based positions of its first
	// and last patients in date order.
	Start    string  `json:"start,omitempty"`
	End      string  `json:"end,omitempty"`
	First    int     `json:"first_patient"`
	Last     int     `json:"last_patient"`
	N        int     `json:"n"`
	Events   int     `json:"events"`
	Expected float64 `json:"expected"`
	// OE and OECI are metrics.OE's: Σy/Σp with the delta-method 95%
	// interval of Debray et al. (2017).
	OE   float64    `json:"oe"`
	OECI [2]float64 `json:"oe_ci"`
	// CITL is the calibration-in-the-large with its Wald interval
	// (metrics.CalibrationInTheLarge); NaN when it cannot be estimated
	// (no events or no non-events in the period).
	CITL   float64    `json:"citl"`
	CITLCI [2]float64 `json:"citl_ci"`
	// AUC with DeLong's interval (metrics.AUC), NaN without both
	// outcomes.
	AUC   float64    `json:"auc"`
	AUCCI [2]float64 `json:"auc_ci"`
}

// ByPeriod splits the patients (y, p in date order, dates beside them or
// nil for blocks) into periods and measures each with the validate
// package's own estimators from metrics. Months and quarters are calendar
// ones in UTC, labelled 2026-08 and 2026-Q3; a period without patients is
// not listed. Blocks are labelled by their patients' positions
// ("1–500").
func ByPeriod(y, p []float64, dates Dates, per Periods) ([]Period, error) {
	if err := checkSeries(y, p); err != nil {
		return nil, err
	}
	if dates != nil && len(dates) != len(y) {
		return nil, fmt.Errorf("monitor: %d dates for %d patients", len(dates), len(y))
	}
	var cuts []int // start of each period
	var labels []string
	switch per.Kind {
	case "month", "quarter":
		if dates == nil {
			return nil, fmt.Errorf("monitor: periods by %s need dates", per.Kind)
		}
		// A period's number: months or quarters since year 0, in UTC.
		key := func(t time.Time) int {
			if per.Kind == "month" {
				return t.Year()*12 + int(t.Month()) - 1
			}
			return t.Year()*4 + (int(t.Month())-1)/3
		}
		label := func(k int) string {
			if per.Kind == "month" {
				return fmt.Sprintf("%04d-%02d", k/12, k%12+1)
			}
			return fmt.Sprintf("%04d-Q%d", k/4, k%4+1)
		}
		last := 0
		for i, d := range dates {
			if i > 0 && d == dates[i-1] {
				continue // the period of the patient before (an extract has few dates)
			}
			if i > 0 && d < dates[i-1] {
				return nil, fmt.Errorf("monitor: patient %d's date %s is before the one before it: the rows are not in date order", i+1, dates.At(i).Format(time.DateOnly))
			}
			if k := key(dates.At(i)); i == 0 || k != last {
				cuts, labels, last = append(cuts, i), append(labels, label(k)), k
			}
		}
	case "block":
		if per.Block < 2 {
			return nil, fmt.Errorf("monitor: a block of %d patients is too small", per.Block)
		}
		for i := 0; i < len(y); i += per.Block {
			if i > 0 && len(y)-i < per.Block/2 {
				break
			}
			cuts = append(cuts, i)
		}
		for c, s := range cuts {
			e := len(y)
			if c+1 < len(cuts) {
				e = cuts[c+1]
			}
			labels = append(labels, fmt.Sprintf("%d–%d", s+1, e))
		}
	default:
		return nil, fmt.Errorf("monitor: period %q is not month, quarter or block", per.Kind)
	}
	out := make([]Period, len(cuts))
	for c, s := range cuts {
		e := len(y)
		if c+1 < len(cuts) {
			e = cuts[c+1]
		}
		out[c] = measure(y[s:e], p[s:e], labels[c], s)
		if dates != nil {
			out[c].Start = dates.At(s).Format(time.DateOnly)
			out[c].End = dates.At(e - 1).Format(time.DateOnly)
		}
	}
	return out, nil
}

func measure(y, p []float64, label string, first int) Period {
	pr := Period{Label: label, First: first + 1, Last: first + len(y), N: len(y)}
	oe, ci, o, e := metrics.OE(y, p)
	pr.Events, pr.Expected, pr.OE, pr.OECI = int(o), e, oe, ci
	nan := math.NaN()
	pr.CITL, pr.CITLCI = nan, [2]float64{nan, nan}
	lp, _ := metrics.ClampedLogits(p, 1e-15)
	if est, err := metrics.CalibrationInTheLarge(y, lp); err == nil {
		pr.CITL, pr.CITLCI = est.Value, est.CI
	}
	auc, _ := metrics.AUC(metrics.SortByRisk(y, p))
	pr.AUC, pr.AUCCI = auc.AUC, auc.CI
	return pr
}
