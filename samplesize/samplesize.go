// Package samplesize computes the minimum sample size of an external
// validation of a binary-outcome model, criterion by criterion, following
// the approach of Riley et al. (2021, Statistics in Medicine
// 40:4230–4251): for each measure, the smallest n whose anticipated
// standard error gives the target 95% confidence interval width, given the
// anticipated event proportion, calibration and distribution of the
// linear predictor. The recommended size is the largest of them.
package samplesize

import (
	"errors"
	"fmt"
	"math"
	"sort"

	"gonum.org/v1/gonum/stat/distuv"
)

const z = 1.959963984540054

// Targets are the 95% confidence interval widths aimed at.
type Targets struct {
	// OEWidth is the width of the interval of O/E (default 0.2).
	OEWidth float64
	// SlopeWidth is the width of the interval of the calibration slope
	// (default 0.2).
	SlopeWidth float64
	// CWidth is the width of the interval of the C-statistic (default
	// 0.1).
	CWidth float64
	// NBWidth is the width of the interval of the standardised net
	// benefit, NB/φ (default 0.2).
	NBWidth float64
}

// DefaultTargets are the widths commonly aimed at (as proposed by Riley
// et al. 2021; common practice).
func DefaultTargets() Targets {
	return Targets{OEWidth: 0.2, SlopeWidth: 0.2, CWidth: 0.1, NBWidth: 0.2}
}

// Request is a sample-size check as a plan's sample_size section or
// the command line asks for it: the target 95% CI widths, the risk
// threshold of the net-benefit criterion, and anticipated values that
// replace those of the cohort being checked. A zero field (a nil
// pointer) was not given.
type Request struct {
	// Targets are the target widths.
	Targets
	// Threshold is the net-benefit criterion's risk threshold.
	Threshold float64
	// EventRate and CStatistic are the anticipated event proportion and
	// C-statistic; given together, they fix LPMean and LPSD (the normal
	// linear predictor of a calibrated model with those values,
	// NormalFor). CStatistic alone replaces the cohort's AUC.
	EventRate, CStatistic float64
	// LPMean and LPSD describe a normal linear predictor, given as such
	// or found from EventRate and CStatistic (FromEventRate).
	LPMean, LPSD  float64
	FromEventRate bool
	// CalIntercept and CalSlope are the anticipated calibration.
	CalIntercept, CalSlope *float64
}

// Anticipated describes the validation population.
type Anticipated struct {
	// LP is the distribution of the model's linear predictor, as a sample
	// (from a cohort, or from Normal).
	LP []float64
	// CalIntercept and CalSlope give the true risks expit(a + b·LP); 0 and
	// 1 for a calibrated model.
	CalIntercept, CalSlope float64
	// OE is the anticipated O/E; 0 takes the value the calibration
	// implies, the mean true risk over the mean of expit(LP) (1 for a
	// calibrated model).
	OE float64
	// C is the anticipated C-statistic; 0 takes the value the LP
	// distribution and calibration imply.
	C float64
	// Threshold is the risk threshold of the net-benefit criterion (0:
	// no such criterion).
	Threshold float64
}

// Criterion is one measure's sample size.
type Criterion struct {
	Measure string `json:"measure"`
	Target  string `json:"target"`
	// SE is the standard error the target needs.
	SE float64 `json:"target_se"`
	// N and Events are the patients and events needed. When the size
	// cannot be computed they are 0 and NotComputable says why.
	N      int `json:"n"`
	Events int `json:"events"`
	// Formula names how the standard error is anticipated.
	Formula string `json:"formula"`
	// NotComputable, when not empty, says why no size reaches the
	// target: the anticipated standard error is undefined (a linear
	// predictor that does not vary, for the slope), zero at every size
	// (a C-statistic of 0 or 1), or above the target for every size up
	// to MaxN.
	NotComputable string `json:"not_computable,omitempty"`
}

// Computable reports whether the criterion's size could be computed.
func (c Criterion) Computable() bool { return c.NotComputable == "" }

// UnknownCalibration is the NotComputable reason of every criterion when
// the anticipated calibration intercept or slope is NaN or infinite.
const UnknownCalibration = "the anticipated calibration intercept or slope is unknown, so the true risks cannot be anticipated"

// MaxN is the largest sample size Compute reports; a criterion that
// needs more is not computable (its size would be no guide to a study).
const MaxN = 1e12

// Result is the sample size needed.
type Result struct {
	EventRate float64     `json:"event_rate"`
	C         float64     `json:"c_statistic"`
	OE        float64     `json:"oe"`
	Criteria  []Criterion `json:"criteria"`
	// N and Events are the largest requirement among the criteria that
	// could be computed, and Driver names it (0, 0 and "" when none
	// could).
	N      int    `json:"n"`
	Events int    `json:"events"`
	Driver string `json:"driven_by"`
}

// Complete reports whether every criterion's size could be computed.
func (r *Result) Complete() bool {
	for _, c := range r.Criteria {
		if !c.Computable() {
			return false
		}
	}
	return true
}

// Normal returns k points spread over a normal distribution (its
// quantiles at (i − ½)/k), a deterministic sample for the formulas.
func Normal(mean, sd float64, k int) []float64 {
	out := make([]float64, k)
	for i := range out {
		out[i] = mean + sd*distuv.UnitNormal.Quantile((float64(i)+0.5)/float64(k))
	}
	return out
}

func expit(x float64) float64 {
	if x >= 0 {
		return 1 / (1 + math.Exp(-x))
	}
	e := math.Exp(x)
	return e / (1 + e)
}

// Compute returns the sample size each criterion needs.
//
// A criterion whose size cannot be computed keeps its place in the
// result with N = 0 and the reason in NotComputable, never a number that
// means nothing: an anticipated calibration intercept or slope that is
// NaN or infinite, or an event proportion that is 0 or 1 (every
// criterion); a linear predictor whose weighted variance is zero or
// negligible, at most 1e-10 of its weighted mean square (the slope); a
// C-statistic of 0 or 1, at which Newcombe's variance is 0 at every size
// (the C-statistic); a threshold that no anticipated risk reaches, so
// that nobody would be treated and the net benefit is 0 at every size
// (net benefit); and any need above MaxN. Compute returns an error when
// a.LP holds fewer than 10 values or one that is not finite.
func Compute(a Anticipated, t Targets) (*Result, error) {
	if len(a.LP) < 10 {
		return nil, errors.New("samplesize: the linear predictor's distribution needs at least 10 values")
	}
	for _, v := range a.LP {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("samplesize: a linear predictor of %v: give finite values", v)
		}
	}
	if a.CalSlope == 0 {
		a.CalSlope = 1
	}
	def := DefaultTargets()
	if t.OEWidth <= 0 {
		t.OEWidth = def.OEWidth
	}
	if t.SlopeWidth <= 0 {
		t.SlopeWidth = def.SlopeWidth
	}
	if t.CWidth <= 0 {
		t.CWidth = def.CWidth
	}
	if t.NBWidth <= 0 {
		t.NBWidth = def.NBWidth
	}
	k := float64(len(a.LP))
	p := make([]float64, len(a.LP))
	phi := 0.0
	for i, v := range a.LP {
		p[i] = expit(a.CalIntercept + a.CalSlope*v)
		phi += p[i]
	}
	phi /= k
	// every is a reason that no criterion can be computed.
	every := ""
	switch {
	case !finite(a.CalIntercept) || !finite(a.CalSlope):
		every = UnknownCalibration
		phi = math.NaN()
	case !(phi > 0 && phi < 1):
		every = fmt.Sprintf("the anticipated event proportion is %g, so outcomes would not vary", phi)
	}
	if a.OE <= 0 && every == "" {
		e := 0.0
		for _, v := range a.LP {
			e += expit(v)
		}
		a.OE = phi / (e / k)
	}
	c := a.C
	if c <= 0 && every == "" {
		c = impliedC(a.LP, p)
	}
	if every != "" {
		a.OE, c = math.NaN(), math.NaN()
		if a.C > 0 {
			c = a.C
		}
	}
	r := &Result{EventRate: phi, C: c, OE: a.OE}
	// add appends a criterion needing n patients (a real number, rounded
	// up), or not computable for the reason why (or every).
	add := func(cr Criterion, n float64, why string) {
		switch {
		case every != "":
			why = every
		case why != "":
		case math.IsNaN(n) || n <= 0:
			why = "the anticipated standard error is undefined"
		case n > MaxN:
			why = "more than 10¹² patients would be needed"
		}
		if why != "" {
			cr.NotComputable = why
		} else {
			cr.N = int(math.Ceil(n))
			cr.Events = int(math.Ceil(float64(cr.N) * phi))
		}
		r.Criteria = append(r.Criteria, cr)
		if cr.Computable() && cr.N > r.N {
			r.N, r.Events, r.Driver = cr.N, cr.Events, cr.Measure
		}
	}
	// O/E: var(ln O/E) ≈ (1 − φ)/(nφ) (the delta method for a binomial
	// count with E fixed); the interval exp(ln OE ± z·SE) has width
	// 2·OE·sinh(z·SE).
	se := math.Asinh(t.OEWidth/(2*a.OE)) / z
	why := ""
	if !(a.OE > 0) || math.IsInf(a.OE, 1) {
		why = "the anticipated O/E is not a positive number"
	}
	add(Criterion{Measure: "O/E", Target: fmt.Sprintf("95%% CI width %g", t.OEWidth), SE: se,
		Formula: "var(ln O/E) = (1 − φ)/(nφ)"}, (1-phi)/(phi*se*se), why)
	// Calibration slope: the inverse Fisher information of (a, b) in
	// logit P(y) = a + b·LP, averaged over the LP distribution:
	// var(b̂) = I_aa / (n (I_aa I_bb − I_ab²)). The determinant over
	// I_aa·I_bb is the weighted variance of LP over its weighted mean
	// square: zero when LP does not vary, and then only rounding.
	var iaa, iab, ibb float64
	for i, v := range a.LP {
		w := p[i] * (1 - p[i])
		iaa += w
		iab += w * v
		ibb += w * v * v
	}
	iaa, iab, ibb = iaa/k, iab/k, ibb/k
	det := iaa*ibb - iab*iab
	se = t.SlopeWidth / (2 * z)
	why = ""
	if !(det > 1e-10*iaa*ibb) {
		why = "the anticipated linear predictor does not vary (every predicted risk is the same), so no sample size estimates a calibration slope"
	}
	add(Criterion{Measure: "calibration slope", Target: fmt.Sprintf("95%% CI width %g", t.SlopeWidth), SE: se,
		Formula: "inverse Fisher information of the calibration model over the LP distribution"}, iaa/(se*se*det), why)
	// C-statistic: the variance of Newcombe (2006, Statistics in Medicine
	// 25:543–557) as used by Riley et al. (2021; the formula recalled from
	// memory), var(C) = C(1 − C)[1 + (n/2 − 1)(1 − C)/(2 − C)
	// + (n/2 − 1)C/(1 + C)] / (n² φ(1 − φ)), solved for n by bisection.
	se = t.CWidth / (2 * z)
	why, n := "", math.NaN()
	if !(c > 0 && c < 1) {
		why = fmt.Sprintf("an anticipated C-statistic of %g has no sampling variance in Newcombe's formula, at any size", c)
	} else if every == "" {
		n = float64(solve(func(n float64) float64 { return math.Sqrt(newcombeVar(c, phi, n)) }, se))
		if n < 0 {
			n = math.Inf(1)
		}
	}
	add(Criterion{Measure: "C-statistic", Target: fmt.Sprintf("95%% CI width %g", t.CWidth), SE: se,
		Formula: "Newcombe (2006) variance"}, n, why)
	if a.Threshold > 0 && a.Threshold < 1 {
		// Standardised net benefit at threshold t, w = t/(1 − t): the
		// cells of true positives, false positives and false negatives
		// over the LP distribution, then snbVariance.
		w := a.Threshold / (1 - a.Threshold)
		cut := math.Log(w) // expit(v) ≥ t exactly when v ≥ logit(t)
		var tp, fp, fn float64
		treated := 0
		for i, v := range a.LP {
			if v >= cut {
				tp += p[i]
				fp += 1 - p[i]
				treated++
			} else {
				fn += p[i]
			}
		}
		v1 := snbVariance(tp/k, fp/k, fn/k, w)
		se = t.NBWidth / (2 * z)
		why = ""
		switch {
		case treated == 0:
			why = fmt.Sprintf("no anticipated risk reaches the threshold %g, so nobody would be treated and the net benefit is 0 at any size", a.Threshold)
		case !(v1 > 0):
			why = "the standardised net benefit's anticipated variance is 0"
		}
		add(Criterion{Measure: fmt.Sprintf("standardised net benefit at %g", a.Threshold), Target: fmt.Sprintf("95%% CI width %g", t.NBWidth), SE: se,
			Formula: "delta-method variance of NB/φ over the multinomial cells"}, v1/(se*se), why)
	}
	return r, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// snbVariance is n times the delta-method variance of the standardised
// net benefit (π₁ − wπ₂)/(π₁ + π₃) estimated from n patients, with π₁, π₂
// and π₃ the shares of true positives, false positives and false
// negatives (multinomial cells): Σ gᵢ²πᵢ − (Σ gᵢπᵢ)² with the gradient
// g = ((π₃ + wπ₂)/φ², −w/φ, −(π₁ − wπ₂)/φ²), φ = π₁ + π₃.
func snbVariance(p1, p2, p3, w float64) float64 {
	f := p1 + p3
	g1, g2, g3 := (p3+w*p2)/(f*f), -w/f, -(p1-w*p2)/(f*f)
	m := g1*p1 + g2*p2 + g3*p3
	return g1*g1*p1 + g2*g2*p2 + g3*g3*p3 - m*m
}

func newcombeVar(c, phi, n float64) float64 {
	h := n/2 - 1
	return c * (1 - c) * (1 + h*(1-c)/(2-c) + h*c/(1+c)) / (n * n * phi * (1 - phi))
}

// solve finds the smallest whole n with se(n) ≤ target, se decreasing.
func solve(se func(float64) float64, target float64) int {
	lo, hi := 4.0, 8.0
	for se(hi) > target {
		lo, hi = hi, hi*2
		if hi > MaxN {
			return -1
		}
	}
	for hi-lo > 0.5 {
		mid := (lo + hi) / 2
		if se(mid) > target {
			lo = mid
		} else {
			hi = mid
		}
	}
	return int(math.Ceil(hi))
}

// impliedC is the C-statistic of risks p over the LP sample: the
// probability that an event's LP exceeds a non-event's, with each point
// an event with probability p (ties ½).
func impliedC(lp, p []float64) float64 {
	idx := make([]int, len(lp))
	for i := range idx {
		idx[i] = i
	}
	sort.Slice(idx, func(a, b int) bool { return lp[idx[a]] < lp[idx[b]] })
	var below0, total, e1, e0 float64
	for s := 0; s < len(idx); {
		e := s
		var w1, w0 float64
		for e < len(idx) && lp[idx[e]] == lp[idx[s]] {
			w1 += p[idx[e]]
			w0 += 1 - p[idx[e]]
			e++
		}
		total += w1 * (below0 + w0/2)
		below0 += w0
		e1 += w1
		e0 += w0
		s = e
	}
	return total / (e1 * e0)
}

// NormalFor finds the normal distribution of the linear predictor of a
// calibrated model with event proportion phi and C-statistic c: the
// spread σ gives the C-statistic and the mean μ the event proportion,
// each found by bisection over the deterministic sample of Normal.
func NormalFor(phi, c float64) (mu, sd float64, err error) {
	if !(phi > 0 && phi < 1) || !(c > 0.5 && c < 1) {
		return 0, 0, errors.New("samplesize: give an event proportion in (0, 1) and a C-statistic in (0.5, 1)")
	}
	const k = 4000
	meanFor := func(sd float64) float64 {
		lo, hi := -30.0, 30.0
		for it := 0; it < 80; it++ {
			mid := (lo + hi) / 2
			s := 0.0
			for _, v := range Normal(mid, sd, k) {
				s += expit(v)
			}
			if s/k < phi {
				lo = mid
			} else {
				hi = mid
			}
		}
		return (lo + hi) / 2
	}
	cFor := func(sd float64) float64 {
		m := meanFor(sd)
		lp := Normal(m, sd, k)
		p := make([]float64, k)
		for i, v := range lp {
			p[i] = expit(v)
		}
		return impliedC(lp, p)
	}
	lo, hi := 1e-3, 10.0
	if cFor(hi) < c {
		return 0, 0, fmt.Errorf("samplesize: a C-statistic of %g is out of reach", c)
	}
	for it := 0; it < 50; it++ {
		mid := (lo + hi) / 2
		if cFor(mid) < c {
			lo = mid
		} else {
			hi = mid
		}
	}
	sd = (lo + hi) / 2
	return meanFor(sd), sd, nil
}
