// Package samplesize computes the minimum sample size of an external
// validation of a binary-outcome model, criterion by criterion, following
// the approach of Riley et al. (2021, Statistics in Medicine
// 40:4230–4251): for each measure, the smallest n whose anticipated
// standard error gives the target 95% confidence interval width, given the
// anticipated event proportion, calibration and distribution of the
// linear predictor. The recommended size is the largest of them.
//
// A normal linear predictor (NormalLP) is integrated over by adaptive
// Gauss–Legendre quadrature to 1e-13 relative, and NormalFor finds the
// normal linear predictor of a given event proportion and C-statistic
// to the same accuracy; a linear predictor given as a sample (a cohort's)
// is averaged over. Needs and their events are rounded up with a
// relative tolerance of 1e-12 (ceilTol).
package samplesize

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/riskaudit/riskaudit/metrics"
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
	// LP is the distribution of the model's linear predictor as a sample
	// (from a cohort, or from Normal), when Normal is nil.
	LP []float64
	// Normal, when not nil, is the linear predictor's distribution
	// itself (LP must then be empty): every expectation over it is an
	// integral, computed to 1e-13 relative by adaptive quadrature.
	Normal *NormalLP
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
// quantiles at (i − ½)/k), a deterministic sample for the formulas. Its
// expectations differ from the distribution's by about 1e-5 relative at
// k = 20,000; give Anticipated.Normal to integrate over the distribution
// itself.
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

// ceilTol is the relative tolerance of every rounding up of a count of
// patients or events: a need x becomes ⌈x·(1 − ceilTol)⌉. A need that
// is a whole number k in exact arithmetic but computed a few units in
// the last place above it (the events n·φ of 820 patients at φ = 0.1
// can come out 82.00000000000001) is then k, not k + 1. The needs are
// computed to about 1e-13 relative (the quadrature's tolerance and a few
// roundings), within ceilTol; a need above k by less than ceilTol·k (a
// millionth of a patient at a million patients) is taken as k.
const ceilTol = 1e-12

// ceilNeed rounds a positive need up to a whole count, within ceilTol.
func ceilNeed(x float64) int { return int(math.Ceil(x * (1 - ceilTol))) }

// Compute returns the sample size each criterion needs, each need and
// its events rounded up to whole numbers with a relative tolerance of
// 1e-12 (a need within 1e-12 of a whole number above it is that number;
// see ceilTol).
//
// The linear predictor is a.Normal, integrated over, or the sample a.LP.
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
// a.LP holds fewer than 10 values or one that is not finite, when
// a.Normal's mean is not finite or its SD not positive and finite, and
// when both are given.
func Compute(a Anticipated, t Targets) (*Result, error) {
	r, _, err := compute(a, t)
	return r, err
}

// expectations are the anticipated quantities every criterion is
// computed from, over the linear predictor's distribution.
type expectations struct {
	// phi and q are the event proportion and 1 − phi (each computed,
	// not by subtraction); pred is the mean predicted risk expit(LP).
	phi, q, pred float64
	// iaa and det are the Fisher information of the intercept and the
	// determinant of the calibration model's information (LP units);
	// varies is false when det is at most 1e-10 of iaa·E[w·LP²].
	iaa, det float64
	varies   bool
	// c is the implied C-statistic.
	c float64
	// tp, fp and fn are the shares of true positives, false positives
	// and false negatives at the threshold; treated is false when no
	// risk reaches it.
	tp, fp, fn float64
	treated    bool
}

// sampleExpectations are the expectations over the sample lp, with true
// risks expit(a + b·LP) and treatment at LP ≥ cut (nb).
//
// The LP's order, which only the implied C needs, is sorted on a
// goroutine of its own beside the risks' exponentials, the two slow
// passes of a large sample.
func sampleExpectations(lp []float64, a, b, cut float64, nb bool) expectations {
	order := make(chan []int32, 1)
	go func() { order <- metrics.SortedOrder32(lp) }()
	k := float64(len(lp))
	p, r := make([]float64, len(lp)), make([]float64, len(lp))
	calibrated := a == 0 && b == 1
	var e expectations
	mean := 0.0
	for i, v := range lp {
		p[i], r[i] = expit2(a + b*v)
		e.phi += p[i]
		e.q += r[i]
		if !calibrated {
			e.pred += expit(v)
		}
		mean += v
	}
	e.phi, e.q, e.pred, mean = e.phi/k, e.q/k, e.pred/k, mean/k
	if calibrated {
		e.pred = e.phi
	}
	// The calibration slope's information about the LP's mean: I_aa,
	// and I_ab and I_bb of the centred LP, whose determinant
	// I_aa·I_bb − I_ab² is that of the LP itself without the
	// cancellation of large uncentred sums.
	var iaa, iab, ibb, raw float64
	for i, v := range lp {
		w := p[i] * r[i]
		d := v - mean
		iaa += w
		iab += w * d
		ibb += w * d * d
		raw += w * v * v
	}
	iaa, iab, ibb, raw = iaa/k, iab/k, ibb/k, raw/k
	e.iaa, e.det = iaa, iaa*ibb-iab*iab
	e.varies = e.det > 1e-10*iaa*raw
	e.c = impliedC(lp, p, <-order)
	if nb {
		treated := 0
		for i, v := range lp {
			if v >= cut { // expit(v) ≥ t exactly when v ≥ logit(t)
				e.tp += p[i]
				e.fp += r[i]
				treated++
			} else {
				e.fn += p[i]
			}
		}
		e.tp, e.fp, e.fn, e.treated = e.tp/k, e.fp/k, e.fn/k, treated > 0
	}
	return e
}

// normalExpectations are the expectations over Normal(nd), integrated.
func normalExpectations(nd NormalLP, a, b, cut float64, nb bool) (expectations, error) {
	m := momentsOf(newIntegrator(), nd, a, b, cut, nb)
	if !m.ok {
		return expectations{}, fmt.Errorf("samplesize: the integrals over Normal(%g, %g) did not reach their tolerance", nd.Mean, nd.SD)
	}
	e := expectations{phi: m.phi, q: m.q, pred: m.pred, iaa: m.w0, c: m.cStatistic(),
		tp: m.tp, fp: m.fp, fn: m.fn, treated: m.treated > 0}
	sd := nd.SD
	e.det = sd * sd * (m.w0*m.w2 - m.w1*m.w1)
	raw := nd.Mean*nd.Mean*m.w0 + 2*nd.Mean*sd*m.w1 + sd*sd*m.w2 // E[w·LP²]
	e.varies = e.det > 1e-10*m.w0*raw
	return e, nil
}

// compute is Compute that also returns each criterion's need before
// rounding (NaN where it cannot be computed), for tests.
func compute(a Anticipated, t Targets) (*Result, []float64, error) {
	if a.Normal != nil {
		switch nd := *a.Normal; {
		case len(a.LP) > 0:
			return nil, nil, errors.New("samplesize: give the linear predictor as a sample or as a normal distribution, not both")
		case !finite(nd.Mean) || !(nd.SD > 0) || math.IsInf(nd.SD, 1):
			return nil, nil, fmt.Errorf("samplesize: a normal linear predictor with mean %v and SD %v: give a finite mean and a positive, finite SD", nd.Mean, nd.SD)
		}
	} else {
		if len(a.LP) < 10 {
			return nil, nil, errors.New("samplesize: the linear predictor's distribution needs at least 10 values")
		}
		for _, v := range a.LP {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, nil, fmt.Errorf("samplesize: a linear predictor of %v: give finite values", v)
			}
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
	nb := a.Threshold > 0 && a.Threshold < 1
	w := a.Threshold / (1 - a.Threshold)
	cut := math.Log(w)
	// every is a reason that no criterion can be computed.
	every := ""
	var e expectations
	switch {
	case !finite(a.CalIntercept) || !finite(a.CalSlope):
		every = UnknownCalibration
		e.phi, e.q = math.NaN(), math.NaN()
	case a.Normal != nil:
		var err error
		if e, err = normalExpectations(*a.Normal, a.CalIntercept, a.CalSlope, cut, nb); err != nil {
			return nil, nil, err
		}
	default:
		e = sampleExpectations(a.LP, a.CalIntercept, a.CalSlope, cut, nb)
	}
	phi := e.phi
	if every == "" && !(phi > 0 && phi < 1) {
		every = fmt.Sprintf("the anticipated event proportion is %g, so outcomes would not vary", phi)
	}
	if a.OE <= 0 && every == "" {
		a.OE = phi / e.pred
		if a.CalIntercept == 0 && a.CalSlope == 1 {
			a.OE = 1
		}
	}
	c := a.C
	if c <= 0 && every == "" {
		c = e.c
	}
	if every != "" {
		a.OE, c = math.NaN(), math.NaN()
		if a.C > 0 {
			c = a.C
		}
	}
	r := &Result{EventRate: phi, C: c, OE: a.OE}
	var needs []float64
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
			needs = append(needs, math.NaN())
		} else {
			cr.N = ceilNeed(n)
			cr.Events = ceilNeed(float64(cr.N) * phi)
			needs = append(needs, n)
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
		Formula: "var(ln O/E) = (1 − φ)/(nφ)"}, e.q/(phi*se*se), why)
	// Calibration slope: the inverse Fisher information of (a, b) in
	// logit P(y) = a + b·LP, averaged over the LP distribution:
	// var(b̂) = I_aa / (n (I_aa I_bb − I_ab²)). The determinant over
	// I_aa·I_bb is the weighted variance of LP over its weighted mean
	// square: zero when LP does not vary, and then only rounding.
	se = t.SlopeWidth / (2 * z)
	why = ""
	if every == "" && !e.varies {
		why = "the anticipated linear predictor does not vary (every predicted risk is the same), so no sample size estimates a calibration slope"
	}
	add(Criterion{Measure: "calibration slope", Target: fmt.Sprintf("95%% CI width %g", t.SlopeWidth), SE: se,
		Formula: "inverse Fisher information of the calibration model over the LP distribution"}, e.iaa/(se*se*e.det), why)
	// C-statistic: the variance of Newcombe (2006, Statistics in Medicine
	// 25:543–557) as used by Riley et al. (2021; the formula recalled from
	// memory), var(C) = C(1 − C)[1 + (n/2 − 1)(1 − C)/(2 − C)
	// + (n/2 − 1)C/(1 + C)] / (n² φ(1 − φ)), solved for n exactly
	// (newcombeN).
	se = t.CWidth / (2 * z)
	why, n := "", math.NaN()
	if !(c > 0 && c < 1) {
		why = fmt.Sprintf("an anticipated C-statistic of %g has no sampling variance in Newcombe's formula, at any size", c)
	} else if every == "" {
		n = newcombeN(c, phi, e.q, se)
	}
	add(Criterion{Measure: "C-statistic", Target: fmt.Sprintf("95%% CI width %g", t.CWidth), SE: se,
		Formula: "Newcombe (2006) variance"}, n, why)
	if nb {
		// Standardised net benefit at threshold t, w = t/(1 − t): the
		// cells of true positives, false positives and false negatives
		// over the LP distribution, then snbVariance.
		v1 := snbVariance(e.tp, e.fp, e.fn, w)
		se = t.NBWidth / (2 * z)
		why = ""
		switch {
		case every != "":
		case !e.treated:
			why = fmt.Sprintf("no anticipated risk reaches the threshold %g, so nobody would be treated and the net benefit is 0 at any size", a.Threshold)
		case !(v1 > 0):
			why = "the standardised net benefit's anticipated variance is 0"
		}
		add(Criterion{Measure: fmt.Sprintf("standardised net benefit at %g", a.Threshold), Target: fmt.Sprintf("95%% CI width %g", t.NBWidth), SE: se,
			Formula: "delta-method variance of NB/φ over the multinomial cells"}, v1/(se*se), why)
	}
	return r, needs, nil
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

// newcombeN is the n at which Newcombe's standard error of the
// C-statistic c equals se, with event proportion phi and q = 1 − phi.
// With K = c(1 − c)/(φ(1 − φ)) and S = (1 − c)/(2 − c) + c/(1 + c),
// var(C)·n² = K(1 − S) + (KS/2)·n, so se²n² − (KS/2)n − K(1 − S) = 0,
// whose one positive root is taken (0 < S < 1, so both terms under the
// root are positive and nothing cancels).
func newcombeN(c, phi, q, se float64) float64 {
	k := c * (1 - c) / (phi * q)
	s := (1-c)/(2-c) + c/(1+c)
	h := k * s / 2
	return (h + math.Sqrt(h*h+4*se*se*k*(1-s))) / (2 * se * se)
}

// impliedC is the C-statistic of risks p over the LP sample: the
// probability that an event's LP exceeds a non-event's, with each point
// an event with probability p (ties ½).
//
// idx is the LP's order by metrics.SortedOrder32 (a radix sort on large
// samples, 32-bit indices): a comparison sort of a 1M-row cohort's LP
// took a third of its whole audit.
func impliedC(lp, p []float64, idx []int32) float64 {
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
