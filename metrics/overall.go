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

// AUCSorted is the AUC (as in AUC) of rows already sorted by p, without
// its standard error and without allocating.
func AUCSorted(y, p []float64) float64 {
	m := 0.0
	for _, v := range y {
		m += v
	}
	n := float64(len(y)) - m
	if m == 0 || n == 0 {
		return math.NaN()
	}
	belowY, total := 0.0, 0.0
	for s := 0; s < len(p); {
		e, x := s, 0.0
		for e < len(p) && p[e] == p[s] {
			x += y[e]
			e++
		}
		yy := float64(e-s) - x
		total += x * (belowY + yy/2)
		belowY += yy
		s = e
	}
	return total / (m * n)
}
