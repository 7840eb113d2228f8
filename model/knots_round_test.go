package model

import (
	"math"
	"sort"
	"strconv"
	"testing"

	"github.com/riskaudit/riskaudit/metrics"
)

// TestDefaultKnotsReadAsWritten: knots at interpolated quantiles are
// rounded to 12 significant digits, so the frozen model writes 27.145,
// not 27.145000000000003, and the fit uses exactly what it writes.
func TestDefaultKnotsReadAsWritten(t *testing.T) {
	// numpy.quantile (its default, definition 7) of these gives
	// 1.7600000000000002, 4.4 and 7.04 at 0.1, 0.5 and 0.9.
	z := []float64{1.1, 2.2, 3.3, 4.4, 5.5, 6.6, 7.7}
	ks, err := DefaultKnots(z, 3)
	if err != nil {
		t.Fatal(err)
	}
	s := append([]float64(nil), z...)
	sort.Float64s(s)
	raw := false
	for i, q := range defaultKnotQuantiles[3] {
		exact := metrics.Quantile7(s, q)
		text := strconv.FormatFloat(ks[i], 'g', -1, 64)
		if len(text) > 13 {
			t.Errorf("knot %d written %s", i, text)
		}
		if math.Abs(ks[i]-exact) > 1e-12*math.Abs(exact) {
			t.Errorf("knot %d = %v, the quantile is %v", i, ks[i], exact)
		}
		raw = raw || len(strconv.FormatFloat(exact, 'g', -1, 64)) > 13
	}
	if ks[0] != 1.76 || ks[1] != 4.4 || ks[2] != 7.04 {
		t.Errorf("knots %v, want numpy's quantiles rounded: [1.76 4.4 7.04]", ks)
	}
	if !raw {
		t.Fatalf("no quantile of the case has float noise: it does not test the rounding")
	}
}
