package metrics

import "math"

// NullDeviance is −2 log-likelihood of the intercept-only model,
// −2[E log ȳ + (n − E) log(1 − ȳ)] with E events among n rows, each row
// counted w times when w is not nil.
func NullDeviance(y, w []float64) float64 {
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
// the intercept-only model on n rows.
func Nagelkerke(dev, nullDev float64, n int) float64 {
	fn := float64(n)
	cs := -math.Expm1((dev - nullDev) / fn)
	max := -math.Expm1(-nullDev / fn)
	return cs / max
}

// BrierWeighted is Brier with every row counted w times: the weighted
// mean of (p − y)², and the scaled score against the weighted event rate.
func BrierWeighted(y, p, w []float64) (brier, scaled float64) {
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

// Brier is the Brier score, the mean of (p − y)² (Brier 1950, Monthly
// Weather Review 78:1–3), and the scaled Brier score
// 1 − Brier / (ȳ(1 − ȳ)), which compares it with a model that gives every
// row the observed event rate ȳ (Steyerberg et al. 2010, Epidemiology
// 21:128–138).
func Brier(y, p []float64) (brier, scaled float64) {
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
