package metrics

import (
	"math"
	"testing"
)

// TestClipRisks: every value is clipped to [0, 1]; only values outside by
// more than ClipTolerance are counted (a fit of an exact 0 computed as
// −5e-17, as statsmodels' lowess gives +5e-17 for the same smooth, is
// rounding), and NaN is left alone.
func TestClipRisks(t *testing.T) {
	for _, tc := range []struct {
		name      string
		in, want  []float64
		wantCount int
	}{
		{"inside", []float64{0, 0.5, 1}, []float64{0, 0.5, 1}, 0},
		{"rounding below 0", []float64{-5e-17, -1e-12}, []float64{0, 0}, 0},
		{"rounding above 1", []float64{1 + 2e-16}, []float64{1}, 0},
		{"left the range", []float64{-0.02, 1.03, 0.4}, []float64{0, 1, 0.4}, 2},
		{"at the tolerance", []float64{-ClipTolerance, 1 + 2*ClipTolerance}, []float64{0, 1}, 1},
		{"NaN kept", []float64{math.NaN()}, []float64{math.NaN()}, 0},
	} {
		got := append([]float64(nil), tc.in...)
		n := ClipRisks(got)
		if n != tc.wantCount {
			t.Errorf("%s: counted %d, want %d", tc.name, n, tc.wantCount)
		}
		for i := range got {
			if got[i] != tc.want[i] && !(math.IsNaN(got[i]) && math.IsNaN(tc.want[i])) {
				t.Errorf("%s: value %d is %v, want %v", tc.name, i, got[i], tc.want[i])
			}
		}
	}
}
