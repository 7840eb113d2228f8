package validate

import (
	"errors"
	"fmt"
	"math"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/metrics"
)

// PredictorMix compares one predictor between the development data and
// the new cohort.
type PredictorMix struct {
	Column string `json:"column"`
	Kind   string `json:"kind"` // numeric or categorical
	// Numeric: means and standard deviations; categorical: the share of
	// each level (Levels) in each cohort.
	Dev    []float64 `json:"development"`
	New    []float64 `json:"new_cohort"`
	Levels []string  `json:"levels,omitempty"`
	// StdDiff is the standardised difference (new − development): for a
	// number, the difference of means over √((s²_dev + s²_new)/2); for a
	// level, the difference of shares over √((p_dev(1 − p_dev) +
	// p_new(1 − p_new))/2) (Austin 2009, Statistics in Medicine
	// 28:3083–3107). One value per level for a categorical predictor.
	StdDiff []float64 `json:"std_diff"`
	// Missing shares in each cohort, before exclusions.
	DevMissing float64 `json:"development_missing"`
	NewMissing float64 `json:"new_missing"`
}

// CaseMix compares the development data and the new cohort.
type CaseMix struct {
	Predictors []PredictorMix `json:"predictors"`
	// The linear predictor's mean and SD in each cohort: its spread
	// reflects case-mix heterogeneity, which drives discrimination.
	LPMeanDev float64 `json:"lp_mean_development"`
	LPSDDev   float64 `json:"lp_sd_development"`
	LPMeanNew float64 `json:"lp_mean_new"`
	LPSDNew   float64 `json:"lp_sd_new"`
	// MembershipC is the c-statistic of the membership model: a logistic
	// regression telling new-cohort rows from development rows by the
	// model's terms and the outcome (Debray et al. 2015, Journal of
	// Clinical Epidemiology 68:279–289). 0.5 means indistinguishable
	// populations; near 1, entirely different ones.
	MembershipC float64 `json:"membership_c"`
	// Interpretation says in plain words what the comparison suggests.
	Interpretation string `json:"interpretation"`
	// LPHistogram holds the linear predictors' distributions for the chart.
	LPEdges []float64 `json:"lp_edges"`
	LPDev   []float64 `json:"lp_share_development"`
	LPNew   []float64 `json:"lp_share_new"`
}

// MixInput is one cohort's side of the comparison.
type MixInput struct {
	Frame *cohort.Frame
	// Rows are the frame rows used (complete cases).
	Rows []int
	// X holds the model's terms of the used rows (intercept first), P per
	// row; Y the outcomes; LP the linear predictors.
	X     []float64
	P     int
	Y, LP []float64
}

// CompareCaseMix compares the columns named in cols (numeric or
// categorical, as read) between dev and cur, fits the membership model
// and summarises the linear predictor.
func CompareCaseMix(dev, cur MixInput, cols []string, perfDev, perfNew *Performance) (*CaseMix, error) {
	cm := &CaseMix{}
	for _, name := range cols {
		a, b := dev.Frame.Column(name), cur.Frame.Column(name)
		if a == nil || b == nil {
			continue
		}
		cm.Predictors = append(cm.Predictors, comparePredictor(a, b, dev.Rows, cur.Rows, dev.Frame.Rows, cur.Frame.Rows))
	}
	cm.LPMeanDev, cm.LPSDDev = meanSD(dev.LP)
	cm.LPMeanNew, cm.LPSDNew = meanSD(cur.LP)
	c, err := membership(dev, cur)
	if err != nil {
		return nil, err
	}
	cm.MembershipC = c
	cm.LPEdges, cm.LPDev, cm.LPNew = lpHistogram(dev.LP, cur.LP, 30)
	cm.Interpretation = interpret(cm, perfDev, perfNew)
	return cm, nil
}

func comparePredictor(a, b *cohort.Column, rowsA, rowsB []int, totalA, totalB int) PredictorMix {
	pm := PredictorMix{Column: a.Name, DevMissing: float64(a.Missing) / float64(totalA), NewMissing: float64(b.Missing) / float64(totalB)}
	if a.Kind == cohort.Numeric {
		pm.Kind = "numeric"
		va, vb := pick(a.Num, rowsA), pick(b.Num, rowsB)
		ma, sa := meanSD(va)
		mb, sb := meanSD(vb)
		pm.Dev, pm.New = []float64{ma, sa}, []float64{mb, sb}
		pm.StdDiff = []float64{(mb - ma) / math.Sqrt((sa*sa+sb*sb)/2)}
		return pm
	}
	pm.Kind = "categorical"
	levels := a.SortedLevels()
	for _, l := range b.SortedLevels() {
		found := false
		for _, k := range levels {
			found = found || k == l
		}
		if !found {
			levels = append(levels, l)
		}
	}
	pm.Levels = levels
	share := func(c *cohort.Column, rows []int) []float64 {
		counts := map[string]float64{}
		for _, i := range rows {
			if c.Codes[i] >= 0 {
				counts[c.Levels[c.Codes[i]]]++
			}
		}
		out := make([]float64, len(levels))
		for j, l := range levels {
			out[j] = counts[l] / float64(len(rows))
		}
		return out
	}
	pm.Dev, pm.New = share(a, rowsA), share(b, rowsB)
	for j := range levels {
		pa, pb := pm.Dev[j], pm.New[j]
		d := math.Sqrt((pa*(1-pa) + pb*(1-pb)) / 2)
		pm.StdDiff = append(pm.StdDiff, (pb-pa)/d)
	}
	return pm
}

func pick(v []float64, rows []int) []float64 {
	out := make([]float64, len(rows))
	for k, i := range rows {
		out[k] = v[i]
	}
	return out
}

func meanSD(v []float64) (float64, float64) {
	m := 0.0
	for _, x := range v {
		m += x
	}
	m /= float64(len(v))
	s := 0.0
	for _, x := range v {
		s += (x - m) * (x - m)
	}
	return m, math.Sqrt(s / float64(len(v)-1))
}

// membership fits membership ~ terms + outcome on the stacked cohorts and
// returns its c-statistic.
func membership(dev, cur MixInput) (float64, error) {
	p := dev.P + 1
	n := len(dev.Y) + len(cur.Y)
	x := make([]float64, 0, n*p)
	y := make([]float64, 0, n)
	for _, side := range []struct {
		in MixInput
		m  float64
	}{{dev, 0}, {cur, 1}} {
		for i := range side.in.Y {
			x = append(x, side.in.X[i*side.in.P:(i+1)*side.in.P]...)
			x = append(x, side.in.Y[i])
			y = append(y, side.m)
		}
	}
	fit, err := logistic.Fit(logistic.Data{X: x, N: n, P: p, Y: y}, logistic.Options{})
	if err != nil {
		var sep *logistic.SeparationError
		if errors.As(err, &sep) {
			return 1, nil // the cohorts can be told apart perfectly
		}
		return 0, fmt.Errorf("the membership model: %w", err)
	}
	lp := logistic.Data{X: x, N: n, P: p}.LinearPredictor(fit.Coef, make([]float64, n))
	auc, _ := metrics.AUC(metrics.SortByRisk(y, lp))
	return auc.AUC, nil
}

func lpHistogram(a, b []float64, bins int) ([]float64, []float64, []float64) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range append(append([]float64(nil), a...), b...) {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if hi <= lo {
		hi = lo + 1
	}
	edges := make([]float64, bins+1)
	for i := range edges {
		edges[i] = lo + (hi-lo)*float64(i)/float64(bins)
	}
	count := func(v []float64) []float64 {
		out := make([]float64, bins)
		for _, x := range v {
			k := min(int((x-lo)/(hi-lo)*float64(bins)), bins-1)
			out[k]++
		}
		for i := range out {
			out[i] /= float64(len(v))
		}
		return out
	}
	return edges, count(a), count(b)
}

// interpret puts the comparison into words, following the reasoning of
// Debray et al. (2015): a case-mix that differs (membership c well above
// 0.5, a wider or narrower linear predictor) explains changes in
// discrimination; a change in calibration within a similar case-mix
// points to changed predictor effects, baseline risk or outcome
// definition.
func interpret(cm *CaseMix, dev, cur *Performance) string {
	similar := cm.MembershipC < 0.6
	spread := cm.LPSDNew / cm.LPSDDev
	s := fmt.Sprintf("The membership model tells the two cohorts apart with c = %.2f, ", cm.MembershipC)
	switch {
	case similar:
		s += "so their patients are alike. "
	case cm.MembershipC < 0.75:
		s += "so their patients differ moderately. "
	default:
		s += "so their patients differ strongly. "
	}
	s += fmt.Sprintf("The linear predictor's spread (SD) is %.2f in the new cohort against %.2f in development (ratio %.2f), and its mean %.2f against %.2f. ",
		cm.LPSDNew, cm.LPSDDev, spread, cm.LPMeanNew, cm.LPMeanDev)
	if dev == nil || cur == nil {
		return s
	}
	dAUC := cur.Discrimination.AUC - dev.Discrimination.AUC
	calOff := cur.Calibration.OECI[0] > 1 || cur.Calibration.OECI[1] < 1
	switch {
	case math.Abs(dAUC) >= 0.02 && math.Abs(spread-1) >= 0.1:
		s += fmt.Sprintf("The change in AUC (%+.3f) fits the change in case-mix spread: a more varied cohort is easier to rank, a more uniform one harder. ", dAUC)
	case math.Abs(dAUC) >= 0.02:
		s += fmt.Sprintf("The AUC changed by %+.3f although the spread of the linear predictor did not: predictor effects may have changed. ", dAUC)
	}
	if calOff {
		if similar {
			s += "Calibration has shifted within a similar case-mix: this points to a changed baseline risk, changed predictor effects or a changed outcome definition rather than to different patients."
		} else {
			s += "Calibration has shifted and the patients differ: part of the miscalibration may come from case-mix; an update of the intercept (or more) on the new cohort is the usual repair, and the model revision test shows whether predictor effects changed."
		}
	} else {
		s += "Calibration in the large holds."
	}
	return s
}
