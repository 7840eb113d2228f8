package metrics

import "math"

// z975 is the 0.975 quantile of the standard normal distribution.
const z975 = 1.959963984540054

// Z975 is the multiplier of two-sided 95% Wald intervals.
const Z975 = z975

// mean is the arithmetic mean, with a compensated sum.
func mean(x []float64) float64 { return sum(x) / float64(len(x)) }

// variance is the sample variance with divisor len(x) − 1, by two passes.
func variance(x []float64) float64 {
	m := mean(x)
	s, c := 0.0, 0.0
	for _, v := range x {
		d := v - m
		s, c = neumaier(s, c, d*d)
	}
	return (s + c) / float64(len(x)-1)
}

// sum is the compensated sum of x (see neumaier).
func sum(x []float64) float64 {
	s, c := 0.0, 0.0
	for _, v := range x {
		s, c = neumaier(s, c, v)
	}
	return s + c
}

// neumaier adds v to the running sum s with compensation c (Neumaier
// 1974, ZAMM 54:39–51).
func neumaier(s, c, v float64) (float64, float64) {
	t := s + v
	if math.Abs(s) >= math.Abs(v) {
		c += (s - t) + v
	} else {
		c += (v - t) + s
	}
	return t, c
}

// covariance is the sample covariance of a and b (divisor len − 1).
func covariance(a, b []float64) float64 {
	ma, mb := mean(a), mean(b)
	s := 0.0
	for i := range a {
		s += (a[i] - ma) * (b[i] - mb)
	}
	return s / float64(len(a)-1)
}

// Quantiles returns the q1- and q2-quantiles (Quantile7) of unsorted
// data by selection; it reorders a.
func Quantiles(a []float64, q1, q2 float64) (float64, float64) {
	return quantileSelect(a, q1), quantileSelect(a, q2)
}

// quantileSelect is Quantile7 of unsorted data, found by selection
// (Hoare's quickselect) in expected linear time; it reorders a.
func quantileSelect(a []float64, q float64) float64 {
	n := len(a)
	if n == 0 {
		return math.NaN()
	}
	h := float64(n-1) * q
	lo := int(math.Floor(h))
	if lo >= n-1 {
		return selectK(a, n-1)
	}
	v := selectK(a, lo)
	// The next order statistic is the smallest value right of lo.
	next := math.Inf(1)
	for _, x := range a[lo+1:] {
		next = math.Min(next, x)
	}
	return v + (h-float64(lo))*(next-v)
}

// selectK places the k-th smallest value of a (0-based) at a[k], smaller
// ones before it and larger ones after, and returns it.
func selectK(a []float64, k int) float64 {
	lo, hi := 0, len(a)-1
	for lo < hi {
		// Median of three as the pivot.
		mid := lo + (hi-lo)/2
		if a[mid] < a[lo] {
			a[mid], a[lo] = a[lo], a[mid]
		}
		if a[hi] < a[lo] {
			a[hi], a[lo] = a[lo], a[hi]
		}
		if a[hi] < a[mid] {
			a[hi], a[mid] = a[mid], a[hi]
		}
		pivot := a[mid]
		i, j := lo, hi
		for i <= j {
			for a[i] < pivot {
				i++
			}
			for a[j] > pivot {
				j--
			}
			if i <= j {
				a[i], a[j] = a[j], a[i]
				i++
				j--
			}
		}
		switch {
		case k <= j:
			hi = j
		case k >= i:
			lo = i
		default:
			return a[k]
		}
	}
	return a[k]
}

// Quantile7 is the q-quantile of sorted by definition 7 of Hyndman & Fan
// (1996, The American Statistician 50:361–365): with h = (n − 1)q,
// s[⌊h⌋] + (h − ⌊h⌋)(s[⌊h⌋+1] − s[⌊h⌋]).
func Quantile7(sorted []float64, q float64) float64 {
	n := len(sorted)
	if n == 0 {
		return math.NaN()
	}
	h := float64(n-1) * q
	lo := int(math.Floor(h))
	if lo >= n-1 {
		return sorted[n-1]
	}
	return sorted[lo] + (h-float64(lo))*(sorted[lo+1]-sorted[lo])
}
