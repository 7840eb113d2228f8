package metrics

import (
	"math"
	"testing"
)

// TestAUCIntervalsNotEstimable: where DeLong's standard error cannot be
// estimated the SE and both intervals are NaN, the AUC itself is kept
// (checked against the direct count of pairs, ties ½). Before, one event
// gave a logit interval of [AUC, AUC] and a separating risk an SE of 0
// with the interval [1, 1].
func TestAUCIntervalsNotEstimable(t *testing.T) {
	// pairs is the Mann–Whitney probability by definition.
	pairs := func(y, p []float64) float64 {
		var s, k float64
		for i := range y {
			for j := range y {
				if y[i] == 1 && y[j] == 0 {
					k++
					switch {
					case p[i] > p[j]:
						s++
					case p[i] == p[j]:
						s += 0.5
					}
				}
			}
		}
		return s / k
	}
	ten := []float64{0.05, 0.08, 0.11, 0.14, 0.17, 0.2, 0.23, 0.26, 0.29, 0.32}
	for _, c := range []struct {
		name     string
		y, p     []float64
		estimate bool
	}{
		{"one event in ten", []float64{0, 0, 0, 0, 0, 0, 0, 1, 0, 0}, ten, false},
		{"one non-event", []float64{1, 1, 1, 0, 1, 1}, []float64{0.5, 0.6, 0.7, 0.65, 0.8, 0.9}, false},
		{"AUC 1", []float64{0, 0, 0, 1, 1}, []float64{0.1, 0.2, 0.3, 0.6, 0.7}, false},
		{"AUC 0", []float64{1, 1, 0, 0, 0}, []float64{0.1, 0.2, 0.3, 0.6, 0.7}, false},
		{"every risk tied", []float64{1, 0, 1, 0, 0}, []float64{0.2, 0.2, 0.2, 0.2, 0.2}, false},
		{"two risks, events on one", []float64{0, 0, 1, 1}, []float64{0.1, 0.1, 0.4, 0.4}, false},
		{"ordinary", []float64{0, 1, 0, 1, 1, 0, 0, 1}, []float64{0.1, 0.2, 0.3, 0.4, 0.5, 0.55, 0.6, 0.7}, true},
	} {
		r, _ := AUC(SortByRisk(c.y, c.p))
		if want := pairs(c.y, c.p); math.Abs(r.AUC-want) > 1e-15 {
			t.Errorf("%s: AUC %g, by pairs %g", c.name, r.AUC, want)
		}
		nan := math.IsNaN(r.SE) && math.IsNaN(r.CI[0]) && math.IsNaN(r.CI[1]) && math.IsNaN(r.LogitCI[0]) && math.IsNaN(r.LogitCI[1])
		if !c.estimate {
			if !nan {
				t.Errorf("%s: SE %g, CI %v, logit CI %v; want NaN", c.name, r.SE, r.CI, r.LogitCI)
			}
			continue
		}
		// The logit interval transcribed from its definition:
		// expit(logit(A) ± 1.96·SE/(A(1 − A))).
		l, h := math.Log(r.AUC/(1-r.AUC)), 1.959963984540054*r.SE/(r.AUC*(1-r.AUC))
		lo, hi := 1/(1+math.Exp(-(l-h))), 1/(1+math.Exp(-(l+h)))
		if !(r.SE > 0) || math.Abs(r.LogitCI[0]-lo) > 1e-12 || math.Abs(r.LogitCI[1]-hi) > 1e-12 {
			t.Errorf("%s: SE %g, logit CI %v, want [%g, %g]", c.name, r.SE, r.LogitCI, lo, hi)
		}
	}
}
