package metrics

import (
	"fmt"
	"math"
)

// NullDeviance is −2 log-likelihood of the intercept-only model fitted to
// outcomes y, −2[E log ȳ + (n − E) log(1 − ȳ)] with E events among n
// rows and ȳ = E/n, each row counted w times when w is not nil. It is 0
// when the outcomes are all the same (or there are none).
//
// NullDeviance panics if w is not nil and differs from y in length, or
// if an outcome is neither 0 nor 1.
func NullDeviance(y, w []float64) float64 {
	checkWeights("NullDeviance", y, w)
	checkOutcomes("NullDeviance", y)
	n, e := 0.0, 0.0
	for i, v := range y {
		wi := 1.0
		if w != nil {
			wi = w[i]
		}
		n += wi
		e += wi * v
	}
	if e == 0 || e == n {
		return 0
	}
	m := e / n
	return -2 * (e*math.Log(m) + (n-e)*math.Log1p(-m))
}

// Nagelkerke is Nagelkerke's R² (Nagelkerke 1991, Biometrika 78:691–692):
// the Cox–Snell R² = 1 − exp((D − D₀)/n) divided by its maximum
// 1 − exp(−D₀/n), where D and D₀ are −2 log-likelihood of the model and of
// the intercept-only model on n rows. It is NaN when D₀ is 0 (outcomes
// all the same) or n is 0.
func Nagelkerke(dev, nullDev float64, n int) float64 {
	fn := float64(n)
	cs := -math.Expm1((dev - nullDev) / fn)
	max := -math.Expm1(-nullDev / fn)
	return cs / max
}

// Brier is the Brier score, the mean of (p − y)² over the rows (in any
// order) (Brier 1950, Monthly Weather Review 78:1–3), and the scaled
// Brier score 1 − Brier / (ȳ(1 − ȳ)), which compares it with a model that
// gives every row the observed event rate ȳ (Steyerberg et al. 2010,
// Epidemiology 21:128–138). The sums are compensated. Both are NaN when
// there are no rows; the scaled score is −Inf when the outcomes are all
// the same (NaN if the Brier score is then 0 too).
//
// Brier panics if y and p differ in length or an outcome is neither 0
// nor 1.
func Brier(y, p []float64) (brier, scaled float64) {
	checkLengths("Brier", y, p)
	checkOutcomes("Brier", y)
	s, c := 0.0, 0.0
	for i, v := range p {
		d := v - y[i]
		s, c = neumaier(s, c, d*d)
	}
	n := float64(len(y))
	brier = (s + c) / n
	ybar := sum(y) / n
	return brier, 1 - brier/(ybar*(1-ybar))
}

// BrierWeighted is Brier with every row counted w times, as for a
// bootstrap sample given by counts: the weighted mean of (p − y)², and
// the scaled score against the weighted event rate, with plain (not
// compensated) sums. Both are NaN when the weights sum to 0.
//
// BrierWeighted panics if y, p and w differ in length (w may not be nil)
// or an outcome is neither 0 nor 1.
func BrierWeighted(y, p, w []float64) (brier, scaled float64) {
	checkLengths("BrierWeighted", y, p)
	if len(w) != len(y) {
		panic(fmt.Sprintf("metrics: BrierWeighted: %d outcomes but %d weights", len(y), len(w)))
	}
	checkOutcomes("BrierWeighted", y)
	s, sw, sy := 0.0, 0.0, 0.0
	for i, v := range p {
		d := v - y[i]
		s += w[i] * d * d
		sw += w[i]
		sy += w[i] * y[i]
	}
	brier = s / sw
	ybar := sy / sw
	return brier, 1 - brier/(ybar*(1-ybar))
}
