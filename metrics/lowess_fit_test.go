package metrics

import (
	"math/rand/v2"
	"sort"
	"testing"
)

// TestLowessFitSameAsLowess: the fit alone, in one reused workspace, is
// bit for bit Lowess's Fit, on untied and tied risks, with and without
// δ, and on one and two points.
func TestLowessFitSameAsLowess(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 7))
	mk := func(n int, tie bool) ([]float64, []float64) {
		x, y := make([]float64, n), make([]float64, n)
		for i := range x {
			x[i] = r.Float64() * 0.6
			if tie {
				x[i] = float64(int(x[i]*20)) / 20
			}
		}
		sort.Float64s(x)
		for i := range y {
			if r.Float64() < x[i] {
				y[i] = 1
			}
		}
		return x, y
	}
	var ws LowessWorkspace
	for _, c := range []struct {
		n     int
		tie   bool
		delta float64
		span  float64
	}{{1, false, 0, 0}, {2, false, 0, 0}, {50, false, 0, 0.5}, {3000, false, 0, 0}, {3000, false, 0.06, 0},
		{3000, true, 0, 0}, {3000, true, 0.06, 0.3}, {20000, false, 0.012, 0}} {
		x, y := mk(c.n, c.tie)
		opt := LowessOptions{Span: c.span, Delta: c.delta}
		want := Lowess(x, y, opt).Fit
		got := ws.LowessFit(x, y, opt)
		if len(got) != len(want) {
			t.Fatalf("%+v: %d values, want %d", c, len(got), len(want))
		}
		for i := range got {
			if got[i] != want[i] {
				t.Fatalf("%+v: point %d: %v, Lowess %v", c, i, got[i], want[i])
			}
		}
	}
}
