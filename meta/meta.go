// Package meta pools k estimates y_i with within-estimate variances v_i by
// random-effects meta-analysis: the between-estimate variance τ² by
// restricted maximum likelihood, DerSimonian–Laird or Paule–Mandel, the
// pooled estimate with a Hartung–Knapp–Sidik–Jonkman or Wald interval,
// Cochran's Q and I², the prediction interval for the true value in a new
// cluster, and the probability that this value lies within given bounds.
//
// The model is y_i = μ + u_i + e_i with u_i ~ N(0, τ²) and e_i ~ N(0, v_i),
// v_i taken as known. With w_i = 1/(v_i + τ²), the pooled estimate is
// μ̂ = Σ w_i y_i / Σ w_i (DerSimonian & Laird 1986, Controlled Clinical
// Trials 7:177–188).
package meta

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Tau2Method names an estimator of the between-cluster variance τ².
type Tau2Method string

// The estimators of τ². Every one is truncated at 0.
const (
	// REML maximises the restricted log-likelihood
	//   ℓ_R(τ²) = −½ Σ ln(v_i+τ²) − ½ ln Σ w_i − ½ Σ w_i (y_i − μ̂)²
	// over τ² ≥ 0 (Viechtbauer 2005, Journal of Educational and
	// Behavioral Statistics 30:261–293). Its derivative
	//   ∂ℓ_R/∂τ² = ½ [Σ w_i² (y_i − μ̂)² − Σ w_i + Σ w_i² / Σ w_i]
	// is solved by bisection on a bracket doubled until the derivative is
	// negative; τ² = 0 when the derivative at 0 is not positive.
	REML Tau2Method = "reml"
	// DL is the DerSimonian–Laird moment estimator
	//   τ² = max(0, (Q − (k−1)) / (Σ w_i − Σ w_i² / Σ w_i)), w_i = 1/v_i
	// (DerSimonian & Laird 1986).
	DL Tau2Method = "dl"
	// PM is the Paule–Mandel estimator: the τ² at which the generalised Q,
	// Σ (y_i − μ̂(τ²))² / (v_i + τ²), equals its expectation k − 1, or 0
	// when Q at τ² = 0 is already at most k − 1 (Paule & Mandel 1982,
	// Journal of Research of the NBS 87:377–385; DerSimonian & Kacker
	// 2007, Contemporary Clinical Trials 28:105–114). The generalised Q
	// decreases in τ², so the root is found by bisection.
	PM Tau2Method = "pm"
)

// CIMethod names the interval for the pooled estimate.
type CIMethod string

// The intervals for μ.
const (
	// HKSJ is the Hartung–Knapp–Sidik–Jonkman interval
	//   μ̂ ± t_{k−1,1−α/2} · sqrt( Σ w_i (y_i − μ̂)² / ((k−1) Σ w_i) ),
	// without truncation of the scale factor at 1 (Hartung & Knapp 2001,
	// Statistics in Medicine 20:3875–3889; Sidik & Jonkman 2002,
	// Statistics in Medicine 21:3153–3159; IntHout et al. 2014, BMC
	// Medical Research Methodology 14:25).
	HKSJ CIMethod = "hksj"
	// Wald is μ̂ ± z_{1−α/2} / sqrt(Σ w_i).
	Wald CIMethod = "wald"
)

// ParseTau2Method reads "reml", "dl" or "pm".
func ParseTau2Method(s string) (Tau2Method, error) {
	switch m := Tau2Method(s); m {
	case REML, DL, PM:
		return m, nil
	}
	return "", fmt.Errorf("unknown τ² method %q (want reml, dl or pm)", s)
}

// ParseCIMethod reads "hksj" or "wald".
func ParseCIMethod(s string) (CIMethod, error) {
	switch m := CIMethod(s); m {
	case HKSJ, Wald:
		return m, nil
	}
	return "", fmt.Errorf("unknown interval method %q (want hksj or wald)", s)
}

// Options choose the estimators. A zero field takes the default: REML,
// HKSJ and a level of 0.95.
type Options struct {
	Tau2  Tau2Method
	CI    CIMethod
	Level float64
}

func (o Options) withDefaults() Options {
	if o.Tau2 == "" {
		o.Tau2 = REML
	}
	if o.CI == "" {
		o.CI = HKSJ
	}
	if o.Level == 0 {
		o.Level = 0.95
	}
	return o
}

// Result is one random-effects meta-analysis.
type Result struct {
	K          int
	Tau2Method Tau2Method
	CIMethod   CIMethod
	Level      float64
	// Estimate is μ̂, SE its standard error under the chosen CI method
	// (HKSJ or Wald), CI the interval.
	Estimate, SE float64
	CI           [2]float64
	// WaldSE is 1/sqrt(Σ w_i), the standard error the prediction
	// interval uses.
	WaldSE float64
	Tau2   float64
	// Q is Cochran's Q = Σ (y_i − ȳ_FE)²/v_i about the fixed-effect
	// estimate, with k − 1 degrees of freedom.
	Q float64
	// I2 is Higgins & Thompson's (2002, Statistics in Medicine
	// 21:1539–1558) I² = max(0, (Q − (k−1))/Q), from Cochran's Q whatever
	// the τ² method (0 when Q = 0).
	I2 float64
	// PI is the prediction interval for the true value in a new cluster,
	//   μ̂ ± t_{k−2,1−α/2} · sqrt(τ² + WaldSE²)
	// (Higgins, Thompson & Spiegelhalter 2009, JRSS A 172:137–159; Riley,
	// Higgins & Deeks 2011, BMJ 342:d549). It needs k ≥ 3 (k − 2 degrees
	// of freedom); with fewer clusters both ends are NaN.
	PI [2]float64
}

// ErrTooFew is returned when fewer than two estimates are given: τ² and
// every interval need at least two.
var ErrTooFew = errors.New("random-effects pooling needs at least 2 clusters")

// Pool meta-analyses the estimates y with variances v.
func Pool(y, v []float64, opt Options) (Result, error) {
	opt = opt.withDefaults()
	if len(y) != len(v) {
		return Result{}, fmt.Errorf("meta: %d estimates but %d variances", len(y), len(v))
	}
	for i := range y {
		if math.IsNaN(y[i]) || math.IsInf(y[i], 0) {
			return Result{}, fmt.Errorf("meta: estimate %d is %v", i+1, y[i])
		}
		if !(v[i] > 0) || math.IsInf(v[i], 0) {
			return Result{}, fmt.Errorf("meta: variance %d is %v (want a positive finite number)", i+1, v[i])
		}
	}
	if !(opt.Level > 0 && opt.Level < 1) {
		return Result{}, fmt.Errorf("meta: level %v is not between 0 and 1", opt.Level)
	}
	k := len(y)
	if k < 2 {
		return Result{}, ErrTooFew
	}
	r := Result{K: k, Tau2Method: opt.Tau2, CIMethod: opt.CI, Level: opt.Level}
	_, r.Q = weighted(y, v, 0)
	if r.Q > 0 {
		r.I2 = math.Max(0, (r.Q-float64(k-1))/r.Q)
	}
	switch opt.Tau2 {
	case DL:
		r.Tau2 = tau2DL(y, v, r.Q)
	case PM:
		r.Tau2 = tau2PM(y, v)
	case REML:
		r.Tau2 = tau2REML(y, v)
	default:
		return Result{}, fmt.Errorf("meta: unknown τ² method %q", opt.Tau2)
	}
	var sw, q float64
	r.Estimate, q = weighted(y, v, r.Tau2)
	for i := range v {
		sw += 1 / (v[i] + r.Tau2)
	}
	r.WaldSE = 1 / math.Sqrt(sw)
	alpha := 1 - opt.Level
	switch opt.CI {
	case HKSJ:
		r.SE = math.Sqrt(q / (float64(k-1) * sw))
		t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(k - 1)}.Quantile(1 - alpha/2)
		r.CI = [2]float64{r.Estimate - t*r.SE, r.Estimate + t*r.SE}
	case Wald:
		r.SE = r.WaldSE
		z := distuv.UnitNormal.Quantile(1 - alpha/2)
		r.CI = [2]float64{r.Estimate - z*r.SE, r.Estimate + z*r.SE}
	default:
		return Result{}, fmt.Errorf("meta: unknown interval method %q", opt.CI)
	}
	r.PI = [2]float64{math.NaN(), math.NaN()}
	if k >= 3 {
		t := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(k - 2)}.Quantile(1 - alpha/2)
		s := r.predictiveScale()
		r.PI = [2]float64{r.Estimate - t*s, r.Estimate + t*s}
	}
	return r, nil
}

func (r Result) predictiveScale() float64 { return math.Sqrt(r.Tau2 + r.WaldSE*r.WaldSE) }

// ProbWithin is the probability that the true value in a new cluster lies
// in [lo, hi] under the predictive distribution the prediction interval
// comes from: μ̂ + sqrt(τ² + WaldSE²)·T with T a Student t on k − 2
// degrees of freedom (Higgins, Thompson & Spiegelhalter 2009, section
// 7.1). Either bound may be infinite. NaN when k < 3.
func (r Result) ProbWithin(lo, hi float64) float64 {
	if r.K < 3 || math.IsNaN(lo) || math.IsNaN(hi) || lo > hi {
		return math.NaN()
	}
	s := r.predictiveScale()
	t := distuv.StudentsT{Mu: r.Estimate, Sigma: s, Nu: float64(r.K - 2)}
	return t.CDF(hi) - t.CDF(lo)
}

// weighted returns μ̂(τ²) and the generalised Q, Σ w_i (y_i − μ̂)² with
// w_i = 1/(v_i + τ²); at τ² = 0 this Q is Cochran's.
func weighted(y, v []float64, tau2 float64) (mu, q float64) {
	var sw, swy float64
	for i := range y {
		w := 1 / (v[i] + tau2)
		sw += w
		swy += w * y[i]
	}
	mu = swy / sw
	for i := range y {
		d := y[i] - mu
		q += d * d / (v[i] + tau2)
	}
	return mu, q
}

func tau2DL(y, v []float64, q float64) float64 {
	var sw, sw2 float64
	for i := range v {
		w := 1 / v[i]
		sw += w
		sw2 += w * w
	}
	return math.Max(0, (q-float64(len(y)-1))/(sw-sw2/sw))
}

func tau2PM(y, v []float64) float64 {
	target := float64(len(y) - 1)
	f := func(t float64) float64 { _, q := weighted(y, v, t); return q - target }
	return rootDecreasing(f, y, v)
}

// remlScore is 2·∂ℓ_R/∂τ².
func remlScore(y, v []float64, t float64) float64 {
	mu, _ := weighted(y, v, t)
	var sw, sw2, sw2r float64
	for i := range y {
		w := 1 / (v[i] + t)
		d := y[i] - mu
		sw += w
		sw2 += w * w
		sw2r += w * w * d * d
	}
	return sw2r - sw + sw2/sw
}

func tau2REML(y, v []float64) float64 {
	return rootDecreasing(func(t float64) float64 { return remlScore(y, v, t) }, y, v)
}

// rootDecreasing returns 0 when f(0) ≤ 0, otherwise the root of f on a
// bracket [0, b] with b doubled from the spread of y until f(b) < 0,
// found by bisection to machine precision.
func rootDecreasing(f func(float64) float64, y, v []float64) float64 {
	if !(f(0) > 0) {
		return 0
	}
	lo, hi := 0.0, spread(y, v)
	for i := 0; f(hi) >= 0; i++ {
		lo, hi = hi, 2*hi
		if i > 200 {
			return math.NaN()
		}
	}
	for i := 0; i < 200; i++ {
		mid := lo + (hi-lo)/2
		if mid <= lo || mid >= hi {
			break
		}
		if f(mid) > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return lo + (hi-lo)/2
}

// spread is a starting upper bound for τ²: the variance of y about its
// mean plus the largest v, never 0.
func spread(y, v []float64) float64 {
	var m, s, vmax float64
	for _, x := range y {
		m += x
	}
	m /= float64(len(y))
	for i, x := range y {
		s += (x - m) * (x - m)
		vmax = math.Max(vmax, v[i])
	}
	return math.Max(s/float64(len(y))+vmax, 1e-300)
}
