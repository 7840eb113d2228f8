package metrics

import (
	"math"
	"testing"
)

// TestRiskOnThreshold: a risk exactly on a threshold is treated and
// flagged (risk ≥ t, the convention the report states; net benefit of
// Vickers & Elkin 2006 counted by hand here), in the classification and
// the decision-curve paths alike. Rows: risks 0.1, 0.1, 0.2, 0.3, 0.05
// with outcomes 1, 0, 1, 0, 0 at t = 0.1 and 0.2.
func TestRiskOnThreshold(t *testing.T) {
	y := []float64{1, 0, 1, 0, 0}
	p := []float64{0.1, 0.1, 0.2, 0.3, 0.05}
	s := SortByRisk(y, p)
	ts := []float64{0.1, 0.2}
	// At 0.1: treated rows 0.1, 0.1, 0.2, 0.3 → TP 2, FP 2, FN 0, TN 1.
	// At 0.2: treated 0.2, 0.3 → TP 1, FP 1, FN 1, TN 2.
	want := []struct{ tp, fp, fn, tn int }{{2, 2, 0, 1}, {1, 1, 1, 2}}
	cls := Classify(s, ts)
	nb := NetBenefits(s, ts)
	for i, w := range want {
		c := cls[i]
		if c.Sensitivity.K != w.tp || c.Sensitivity.N != w.tp+w.fn || c.Specificity.K != w.tn || c.Specificity.N != w.tn+w.fp {
			t.Errorf("t = %g: sensitivity %d/%d, specificity %d/%d; by hand %d/%d and %d/%d", ts[i],
				c.Sensitivity.K, c.Sensitivity.N, c.Specificity.K, c.Specificity.N, w.tp, w.tp+w.fn, w.tn, w.tn+w.fp)
		}
		if f := float64(w.tp+w.fp) / 5; math.Abs(c.Flagged-f) > 1e-15 {
			t.Errorf("t = %g: flagged %g, by hand %g", ts[i], c.Flagged, f)
		}
		odds := ts[i] / (1 - ts[i])
		m := float64(w.tp)/5 - float64(w.fp)/5*odds
		if math.Abs(nb[i].Model-m) > 1e-15 {
			t.Errorf("t = %g: net benefit %g, by hand %g (a risk on the threshold is treated)", ts[i], nb[i].Model, m)
		}
	}
}

// TestQuantileSelectByHand: quantiles of type 7 (Hyndman & Fan 1996:
// h = (n − 1)·q, x_⌊h⌋ + (h − ⌊h⌋)(x_⌊h⌋+1 − x_⌊h⌋), 0-based) of the
// squares 0, 1, 4, …, 100 given out of order, worked by hand.
func TestQuantileSelectByHand(t *testing.T) {
	a := []float64{49, 0, 100, 9, 64, 1, 36, 81, 4, 25, 16}
	for _, c := range []struct{ q, want float64 }{
		{0, 0}, {0.5, 25}, {0.9, 81}, {1, 100},
		{0.25, 6.5},  // h = 2.5: 4 + 0.5·(9 − 4)
		{0.95, 90.5}, // h = 9.5: 81 + 0.5·(100 − 81)
		{0.33, 11.1}, // h = 3.3: 9 + 0.3·(16 − 9)
	} {
		b := append([]float64(nil), a...)
		if got := quantileSelect(b, c.q); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("quantile %g = %g, by hand %g", c.q, got, c.want)
		}
	}
}

// TestLowessLocalMeanSEByHand: five rows at 0 and five at 1, span 0.75
// (k = 7): at 0 the neighbourhood's radius is 1, the rows at 1 get
// tricube weight 0 and the five at 0 weight 1, so x has no spread and the
// fit is their mean ŝ = 2/5 with smoother weights 1/5 each: Σl² = 5/25
// and SE = √(ŝ(1 − ŝ)/5) (the variance of a mean of five, worked by hand).
func TestLowessLocalMeanSEByHand(t *testing.T) {
	x := []float64{0, 0, 0, 0, 0, 1, 1, 1, 1, 1}
	y := []float64{1, 0, 0, 1, 0, 1, 1, 0, 1, 1}
	c := Lowess(x, y, LowessOptions{})
	want := math.Sqrt(0.4 * 0.6 / 5)
	for i := 0; i < 5; i++ {
		if math.Abs(c.Fit[i]-0.4) > 1e-12 || math.Abs(c.SE[i]-want) > 1e-12 {
			t.Errorf("row %d: fit %g SE %g, by hand 0.4 and %g", i, c.Fit[i], c.SE[i], want)
		}
	}
	// At 1 the mean of the five rows there, 4/5.
	want = math.Sqrt(0.8 * 0.2 / 5)
	for i := 5; i < 10; i++ {
		if math.Abs(c.Fit[i]-0.8) > 1e-12 || math.Abs(c.SE[i]-want) > 1e-12 {
			t.Errorf("row %d: fit %g SE %g, by hand 0.8 and %g", i, c.Fit[i], c.SE[i], want)
		}
	}
}
