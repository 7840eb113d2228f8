package metrics

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestLowessFallsBackToTheLocalMean checks the rule of Lowess where the
// local line is not identified against a direct computation: the mean of
// the outcomes of the points concerned, with the standard error
// √(ŝ(1 − ŝ)/m) of a mean of m binary outcomes. Before the rule, a
// cohort whose risks were all 0.2 with 57 events in 200 (events first)
// got the smooth 1.0, the first row's outcome, and an ICI of 0.8.
func TestLowessFallsBackToTheLocalMean(t *testing.T) {
	// meanSE is the direct computation over y[lo:hi].
	meanSE := func(y []float64, lo, hi int) (float64, float64) {
		s := 0.0
		for _, v := range y[lo:hi] {
			s += v
		}
		m := float64(hi - lo)
		return s / m, math.Sqrt(s / m * (1 - s/m) / m)
	}
	r := rand.New(rand.NewPCG(3, 4))
	type span struct{ lo, hi int } // rows whose fit is the mean over them
	tied := func(n, events int) ([]float64, []float64) {
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = 0.2
			if i < events {
				y[i] = 1
			}
		}
		return x, y
	}
	// A run of 800 tied risks, longer than the 750 rows of a window,
	// then 200 distinct risks.
	block := func() ([]float64, []float64) {
		x, y := make([]float64, 1000), make([]float64, 1000)
		for i := range x {
			x[i] = 0.1
			if i >= 800 {
				x[i] = 0.2 + 0.3*float64(i-800)/199
			}
			if r.Float64() < x[i]+0.2 {
				y[i] = 1
			}
		}
		return x, y
	}
	// Two tied groups: at 0.3 the window reaches back to 0.1, at
	// distance h, where the tricube weight is 0, so only the points tied
	// with 0.3 have weight and x has no weighted variance.
	twoGroups := func() ([]float64, []float64) {
		x, y := make([]float64, 40), make([]float64, 40)
		for i := range x {
			x[i] = 0.1
			if i >= 30 {
				x[i] = 0.3
			}
			if i%10 < 3 || i >= 34 {
				y[i] = 1
			}
		}
		return x, y
	}
	x1, y1 := tied(200, 57)
	x2, y2 := block()
	x3, y3 := twoGroups()
	for _, c := range []struct {
		name  string
		x, y  []float64
		delta float64
		means []span
	}{
		{"every risk tied", x1, y1, 0, []span{{0, 200}}},
		{"every risk tied, δ > 0", x1, y1, 0.01, []span{{0, 200}}},
		{"a tied run longer than the window", x2, y2, 0, []span{{0, 800}}},
		{"two tied groups", x3, y3, 0, []span{{0, 30}, {30, 40}}},
	} {
		cur := Lowess(c.x, c.y, LowessOptions{Delta: c.delta})
		for _, sp := range c.means {
			want, wantSE := meanSE(c.y, sp.lo, sp.hi)
			for i := sp.lo; i < sp.hi; i++ {
				if math.Abs(cur.Fit[i]-want) > 1e-12 || math.Abs(cur.SE[i]-wantSE) > 1e-12 {
					t.Fatalf("%s: row %d: fit %.15g (SE %.15g), the direct mean %.15g (SE %.15g)", c.name, i, cur.Fit[i], cur.SE[i], want, wantSE)
				}
			}
		}
	}
	// The fit of a tied run does not depend on the order of its rows.
	xs, ys := block()
	a := Lowess(xs, ys, LowessOptions{})
	r.Shuffle(800, func(i, j int) { ys[i], ys[j] = ys[j], ys[i] })
	if b := Lowess(xs, ys, LowessOptions{}); a.Fit[0] != b.Fit[0] || a.Fit[900] != b.Fit[900] {
		t.Errorf("the tied rows' order changed the smooth: %g, %g against %g, %g", a.Fit[0], a.Fit[900], b.Fit[0], b.Fit[900])
	}
	// All tied: the curve is the event rate, and every distance is
	// |0.2 − 0.285| (Austin & Steyerberg's measures of a constant curve).
	cc := FlexibleCalibration(SortByRisk(y1, x1), LowessOptions{})
	for name, v := range map[string]float64{"ICI": cc.ICI, "E50": cc.E50, "E90": cc.E90, "Emax": cc.Emax} {
		if math.Abs(v-0.085) > 1e-12 {
			t.Errorf("every risk tied: %s %.15g, want |0.2 − 57/200| = 0.085", name, v)
		}
	}
}
