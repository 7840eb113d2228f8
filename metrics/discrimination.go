package metrics

import (
	"math"

	"github.com/riskaudit/riskaudit/logistic"
)

// AUCResult is the area under the ROC curve with its DeLong standard
// error and 95% confidence intervals.
type AUCResult struct {
	AUC float64 `json:"auc"`
	SE  float64 `json:"auc_se"`
	// CI is AUC ± 1.96·SE, clipped to [0, 1].
	CI [2]float64 `json:"auc_ci"`
	// LogitCI is the interval made on the logit scale,
	// expit(logit(AUC) ± 1.96·SE / (AUC(1 − AUC))), which stays inside
	// (0, 1) without clipping; NaN when SE is.
	LogitCI [2]float64 `json:"auc_logit_ci"`
	// Events and NonEvents count the rows of each outcome.
	Events    int `json:"events"`
	NonEvents int `json:"non_events"`
}

// DeLongComponents are the structural components of DeLong, DeLong &
// Clarke-Pearson (1988): V10[i] is the share of non-events ranked below
// event i (ties ½), V01[j] the share of events ranked above non-event j.
// Paired tests of two AUCs on one cohort use their covariances.
type DeLongComponents struct {
	V10, V01 []float64
}

// AUC returns the area under the ROC curve of the rows of s: the
// Mann–Whitney probability that a random event has a higher risk than a
// random non-event, ties counted ½ (Hanley & McNeil 1982, Radiology
// 143:29–36). Its standard error is DeLong's (DeLong, DeLong &
// Clarke-Pearson 1988, Biometrics 44:837–845),
//
//	Var = S10/m + S01/n,
//
// with S10 and S01 the sample variances (divisor m − 1 and n − 1) of the
// components over the m events and n non-events. The components come
// from mid-ranks (Sun & Xu 2014, IEEE Signal Processing Letters
// 21:1389–1393), in one pass over the sorted rows: V10[i] =
// (R(X_i) − R_X(X_i))/n and V01[j] = 1 − (R(Y_j) − R_Y(Y_j))/m, where R
// is the mid-rank among all rows and R_X, R_Y the mid-ranks among events
// and among non-events. The components are returned in risk order.
//
// AUC, SE and both intervals are NaN when there are no events or no
// non-events (an empty s included). SE and the intervals are NaN, the
// AUC not, when they cannot be estimated: with only one event or one
// non-event (a component's sample variance needs two), and when every
// component of each kind is the same, which makes DeLong's variance 0
// (every event above every non-event, AUC 1; every event below, AUC 0;
// or every event tied with every non-event, as when all risks are
// equal): a variance of 0 there is no estimate of the AUC's uncertainty,
// and a zero-width interval would present the AUC as known.
func AUC(s Sorted) (AUCResult, DeLongComponents) {
	y, p := s.y, s.p
	var r AUCResult
	for _, v := range y {
		if v == 1 {
			r.Events++
		}
	}
	r.NonEvents = len(y) - r.Events
	m, n := r.Events, r.NonEvents
	if m == 0 || n == 0 {
		nan := math.NaN()
		return AUCResult{AUC: nan, SE: nan, CI: [2]float64{nan, nan}, LogitCI: [2]float64{nan, nan}, Events: m, NonEvents: n}, DeLongComponents{}
	}
	v10 := make([]float64, 0, m)
	v01 := make([]float64, 0, n)
	// Walk the sorted rows in runs of tied risks. Before a run, below
	// counts the rows, belowX the events and belowY the non-events ranked
	// lower; within a run the mid-rank is below + (run + 1)/2, and
	// likewise among events and among non-events.
	below, belowX, belowY := 0, 0, 0
	for i := 0; i < len(p); {
		e := i
		x := 0
		for e < len(p) && p[e] == p[i] {
			if y[e] == 1 {
				x++
			}
			e++
		}
		run := e - i
		yy := run - x
		// Mid-rank among all: below + (run+1)/2. Among events:
		// belowX + (x+1)/2. Their difference counts the non-events below
		// plus half the tied non-events.
		if x > 0 {
			v := (float64(belowY) + float64(yy)/2) / float64(n)
			for k := 0; k < x; k++ {
				v10 = append(v10, v)
			}
		}
		if yy > 0 {
			v := 1 - (float64(belowX)+float64(x)/2)/float64(m)
			for k := 0; k < yy; k++ {
				v01 = append(v01, v)
			}
		}
		below += run
		belowX += x
		belowY += yy
		i = e
	}
	r.AUC = mean(v10)
	se := math.NaN()
	if m > 1 && n > 1 && !(constant(v10) && constant(v01)) {
		se = math.Sqrt(variance(v10)/float64(m) + variance(v01)/float64(n))
	}
	r.SE = se
	r.CI = [2]float64{math.Max(0, r.AUC-z975*se), math.Min(1, r.AUC+z975*se)}
	r.LogitCI = logitCI(r.AUC, se)
	return r, DeLongComponents{V10: v10, V01: v01}
}

// constant reports whether every value of v is the same.
func constant(v []float64) bool {
	for _, x := range v {
		if x != v[0] {
			return false
		}
	}
	return true
}

// logitCI is expit(logit(a) ± 1.96·se/(a(1 − a))), the delta-method
// interval on the logit scale. It is NaN when se is NaN or a is not
// inside (0, 1), where the logit scale has no interval to give.
func logitCI(a, se float64) [2]float64 {
	if !(a > 0 && a < 1) || math.IsNaN(se) {
		nan := math.NaN()
		return [2]float64{nan, nan}
	}
	l := logistic.Logit(a)
	h := z975 * se / (a * (1 - a))
	return [2]float64{logistic.Expit(l - h), logistic.Expit(l + h)}
}

// ROCPoint is one point of an ROC curve: classifying risks ≥ Threshold as
// events gives the true-positive rate TPR and false-positive rate FPR.
type ROCPoint struct {
	Threshold float64 `json:"threshold"`
	FPR       float64 `json:"fpr"`
	TPR       float64 `json:"tpr"`
}

// ROC returns the empirical ROC curve of the rows of s: one point per
// distinct risk t, classifying the rows with risk ≥ t as events, from the
// highest threshold down, starting at (0, 0) (threshold +Inf) and ending
// at (1, 1). When maxPoints > 0 and the curve has more points, interior
// points are thinned: a point is kept when it differs from the last kept
// one by at least 1/maxPoints in FPR or TPR, so every kept point is a
// true point of the curve and the last one is (1, 1).
//
// When there are no events or no non-events (an empty s included) the
// curve is the single point (0, 0) at threshold +Inf.
func ROC(s Sorted, maxPoints int) []ROCPoint {
	y, p := s.y, s.p
	m, n := 0, 0
	for _, v := range y {
		if v == 1 {
			m++
		} else {
			n++
		}
	}
	out := []ROCPoint{{Threshold: math.Inf(1)}}
	if m == 0 || n == 0 {
		return out
	}
	step := 0.0
	if maxPoints > 0 {
		step = 1 / float64(maxPoints)
	}
	tp, fp := 0, 0
	for e := len(p) - 1; e >= 0; {
		i := e
		for i >= 0 && p[i] == p[e] {
			if y[i] == 1 {
				tp++
			} else {
				fp++
			}
			i--
		}
		pt := ROCPoint{Threshold: p[e], FPR: float64(fp) / float64(n), TPR: float64(tp) / float64(m)}
		last := out[len(out)-1]
		if i < 0 || pt.FPR-last.FPR >= step || pt.TPR-last.TPR >= step {
			out = append(out, pt)
		}
		e = i
	}
	return out
}

// AUCValue is the AUC of the rows of s, as AUC computes it but without
// the standard error, the components or any allocation, for resampling
// loops: Σ over events of (non-events ranked below + ½ tied) / (m·n).
// It equals AUC's value up to rounding (AUC averages the components with
// a compensated sum). It is NaN when there are no events or no
// non-events.
func AUCValue(s Sorted) float64 {
	y, p := s.y, s.p
	m := 0.0
	for _, v := range y {
		m += v
	}
	n := float64(len(y)) - m
	if m == 0 || n == 0 {
		return math.NaN()
	}
	belowY, total := 0.0, 0.0
	for i := 0; i < len(p); {
		e, x := i, 0.0
		for e < len(p) && p[e] == p[i] {
			x += y[e]
			e++
		}
		yy := float64(e-i) - x
		total += x * (belowY + yy/2)
		belowY += yy
		i = e
	}
	return total / (m * n)
}
