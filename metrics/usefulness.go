package metrics

import (
	"math"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"
)

// Counts is the 2×2 table of a risk threshold t: rows with p ≥ t are
// classified as events ("treat").
type Counts struct {
	Threshold      float64
	TP, FP, FN, TN int
}

// ThresholdCounts returns the 2×2 table of the rows of s at every
// threshold t in ts, in the order of ts: rows with risk ≥ t are
// classified as events. Each threshold is found by binary search among
// the sorted risks, and the events below it are counted. Thresholds need
// not be sorted, and may repeat.
func ThresholdCounts(s Sorted, ts []float64) []Counts {
	y, p := s.y, s.p
	n := len(p)
	totalE := 0
	for _, v := range y {
		if v == 1 {
			totalE++
		}
	}
	out := make([]Counts, len(ts))
	for i, t := range ts {
		k := sort.SearchFloat64s(p, t) // rows [k, n) have p ≥ t
		below := 0
		for _, v := range y[:k] {
			if v == 1 {
				below++
			}
		}
		tp := totalE - below
		fp := (n - k) - tp
		out[i] = Counts{Threshold: t, TP: tp, FP: fp, FN: below, TN: k - below}
	}
	return out
}

// NetBenefit is the decision-curve value of treating when p ≥ Threshold
// (Vickers & Elkin 2006, Medical Decision Making 26:565–574):
// NB = TP/n − FP/n · t/(1 − t). TreatAll is the same for treating
// everyone, prevalence − (1 − prevalence)·t/(1 − t); treating no one has
// net benefit 0.
type NetBenefit struct {
	Threshold float64 `json:"threshold"`
	Model     float64 `json:"model"`
	TreatAll  float64 `json:"treat_all"`
	TreatNone float64 `json:"treat_none"`
}

// Gain is the model's net benefit over the better of the two default
// strategies at the threshold: Model − max(TreatAll, TreatNone), with
// TreatNone = 0. It is positive only where acting on the model does more
// good than both treating everyone and treating no one.
func (nb NetBenefit) Gain() float64 { return nb.Model - math.Max(nb.TreatAll, nb.TreatNone) }

// NetBenefits returns the net benefit of the rows of s at every threshold
// t in ts, in the order of ts, treating the rows with risk ≥ t (as
// ThresholdCounts counts them). Thresholds must lie in (0, 1); at 1 the
// odds are infinite and the values meaningless. Every value is NaN when s
// is empty.
//
// Both are computed from counts by the same expression, so a model that
// treats every row has exactly the net benefit of treating everyone, not
// one that differs from it by rounding.
func NetBenefits(s Sorted, ts []float64) []NetBenefit {
	n := float64(s.Len())
	events := sum(s.y)
	out := make([]NetBenefit, len(ts))
	for i, c := range ThresholdCounts(s, ts) {
		odds := c.Threshold / (1 - c.Threshold)
		out[i] = NetBenefit{
			Threshold: c.Threshold,
			Model:     float64(c.TP)/n - float64(c.FP)/n*odds,
			TreatAll:  events/n - (n-events)/n*odds,
		}
	}
	return out
}

// Proportion is a share k/n with its exact 95% Clopper–Pearson interval
// (Clopper & Pearson 1934, Biometrika 26:404–413): the α/2 quantile of
// Beta(k, n − k + 1) and the 1 − α/2 quantile of Beta(k + 1, n − k), with
// the ends 0 and 1 when k = 0 or k = n.
type Proportion struct {
	Value float64    `json:"value"`
	CI    [2]float64 `json:"ci"`
	K     int        `json:"k"`
	N     int        `json:"n"`
}

// ClopperPearson returns k/n with its exact 95% interval; NaN when n = 0.
func ClopperPearson(k, n int) Proportion {
	if n == 0 {
		nan := math.NaN()
		return Proportion{Value: nan, CI: [2]float64{nan, nan}}
	}
	pr := Proportion{Value: float64(k) / float64(n), K: k, N: n}
	lo, hi := 0.0, 1.0
	if k > 0 {
		lo = distuv.Beta{Alpha: float64(k), Beta: float64(n - k + 1)}.Quantile(0.025)
	}
	if k < n {
		hi = distuv.Beta{Alpha: float64(k + 1), Beta: float64(n - k)}.Quantile(0.975)
	}
	pr.CI = [2]float64{lo, hi}
	return pr
}

// Classification is the accuracy of the rule "p ≥ Threshold means
// event".
type Classification struct {
	Threshold   float64    `json:"threshold"`
	Sensitivity Proportion `json:"sensitivity"`
	Specificity Proportion `json:"specificity"`
	PPV         Proportion `json:"ppv"`
	NPV         Proportion `json:"npv"`
	// Flagged is the share of rows at or above the threshold.
	Flagged float64 `json:"flagged"`
}

// Classify returns, for the rows of s at every threshold t in ts (in the
// order of ts, rows with risk ≥ t classified as events, as
// ThresholdCounts counts them), the sensitivity TP/(TP+FN), specificity
// TN/(TN+FP), positive predictive value TP/(TP+FP) and negative
// predictive value TN/(TN+FN), each with its Clopper–Pearson interval. A
// proportion with no rows behind it (no events, say) is NaN, as is
// Flagged when s is empty.
func Classify(s Sorted, ts []float64) []Classification {
	out := make([]Classification, len(ts))
	n := float64(s.Len())
	for i, c := range ThresholdCounts(s, ts) {
		out[i] = Classification{
			Threshold:   c.Threshold,
			Sensitivity: ClopperPearson(c.TP, c.TP+c.FN),
			Specificity: ClopperPearson(c.TN, c.TN+c.FP),
			PPV:         ClopperPearson(c.TP, c.TP+c.FP),
			NPV:         ClopperPearson(c.TN, c.TN+c.FN),
			Flagged:     float64(c.TP+c.FP) / n,
		}
	}
	return out
}

// RiskGroup is one group of the grouped calibration plot.
type RiskGroup struct {
	N int `json:"n"`
	// MeanRisk is the mean predicted risk; Observed the share of events
	// with its Clopper–Pearson interval.
	MeanRisk float64    `json:"mean_risk"`
	Observed Proportion `json:"observed"`
	MinRisk  float64    `json:"min_risk"`
	MaxRisk  float64    `json:"max_risk"`
}

// RiskGroups cuts the rows of s into g groups of (nearly) equal size by
// predicted risk, with the grouping rule of HosmerLemeshow (ties kept
// together, empty groups dropped), and returns the observed share of
// events beside the mean risk in each, lowest risks first. An empty s has
// no groups.
//
// RiskGroups panics if g < 1.
func RiskGroups(s Sorted, g int) []RiskGroup {
	if g < 1 {
		panic("metrics: RiskGroups: fewer than one group")
	}
	hl := HosmerLemeshow(s, g, false)
	out := make([]RiskGroup, len(hl.Table))
	for i, t := range hl.Table {
		out[i] = RiskGroup{N: t.N, MeanRisk: t.Expected / float64(t.N),
			Observed: ClopperPearson(int(math.Round(t.Observed)), t.N), MinRisk: t.MinRisk, MaxRisk: t.MaxRisk}
	}
	return out
}

// Histogram counts the risks of events and of non-events in bins of
// equal width on [0, max], where max is the largest risk rounded up to
// a tenth (at least 0.1).
type Histogram struct {
	Edges     []float64 `json:"edges"`
	Events    []int     `json:"events"`
	NonEvents []int     `json:"non_events"`
}

// RiskHistogram returns the histogram of risks p by outcome y in bins
// bins; the rows may be in any order. A risk v goes to bin
// ⌊v·bins/max⌋, a risk equal to max to the last. Risks must lie in
// [0, 1].
//
// RiskHistogram panics if y and p differ in length, if an outcome is
// neither 0 nor 1, or if bins < 1.
func RiskHistogram(y, p []float64, bins int) Histogram {
	checkLengths("RiskHistogram", y, p)
	checkOutcomes("RiskHistogram", y)
	if bins < 1 {
		panic("metrics: RiskHistogram: fewer than one bin")
	}
	top := 0.0
	for _, v := range p {
		top = math.Max(top, v)
	}
	top = math.Max(0.1, math.Ceil(top*10-1e-9)/10)
	h := Histogram{Edges: make([]float64, bins+1), Events: make([]int, bins), NonEvents: make([]int, bins)}
	for i := range h.Edges {
		h.Edges[i] = top * float64(i) / float64(bins)
	}
	for i, v := range p {
		b := min(int(v/top*float64(bins)), bins-1)
		if y[i] == 1 {
			h.Events[b]++
		} else {
			h.NonEvents[b]++
		}
	}
	return h
}
