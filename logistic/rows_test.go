package logistic

import (
	"math/rand/v2"
	"testing"
)

// TestRowsSameFit: a fit told the rows of nonzero weight (Data.Rows) is
// bit for bit the fit without them, on one worker and on two over 30,000
// rows (where the rows are split between the workers), by maximum
// likelihood and by Firth; Rows that do not list exactly the rows of
// nonzero weight in ascending order are refused.
func TestRowsSameFit(t *testing.T) {
	r := rand.New(rand.NewPCG(2, 9))
	n, p := 30000, 5
	d := Data{X: make([]float64, n*p), N: n, P: p, Y: make([]float64, n), Weights: make([]float64, n)}
	var rows []int32
	for i := 0; i < n; i++ {
		x := d.X[i*p : (i+1)*p]
		x[0] = 1
		for j := 1; j < p; j++ {
			x[j] = r.NormFloat64()
		}
		if r.Float64() < Expit(-1.2+0.6*x[1]-0.3*x[3]) {
			d.Y[i] = 1
		}
		d.Weights[i] = float64(r.IntN(3))
		if i == n-1 {
			d.Weights[i] = 0
		}
		if d.Weights[i] != 0 {
			rows = append(rows, int32(i))
		}
	}
	for _, c := range []struct {
		workers int
		firth   bool
	}{{1, false}, {2, false}, {2, true}} {
		opt := Options{Workers: c.workers, Firth: c.firth}
		want, err := Fit(d, opt)
		if err != nil {
			t.Fatal(err)
		}
		dr := d
		dr.Rows = rows
		got, err := Fit(dr, opt)
		if err != nil {
			t.Fatal(err)
		}
		if got.Deviance != want.Deviance || got.Iterations != want.Iterations {
			t.Errorf("%+v: deviance %v in %d iterations, want %v in %d", c, got.Deviance, got.Iterations, want.Deviance, want.Iterations)
		}
		for j := range want.Coef {
			if got.Coef[j] != want.Coef[j] || got.SE[j] != want.SE[j] {
				t.Errorf("%+v: β%d = %v (SE %v), want %v (%v)", c, j, got.Coef[j], got.SE[j], want.Coef[j], want.SE[j])
			}
		}
	}
	bad := map[string][]int32{
		"a row missing":   rows[1:],
		"a zero weight":   append(append([]int32{}, rows...), int32(n-1)),
		"descending":      append([]int32{rows[1], rows[0]}, rows[2:]...),
		"beyond the rows": append(append([]int32{}, rows[:len(rows)-1]...), int32(n)),
	}
	if d.Weights[n-1] != 0 {
		t.Fatal("the last row should have weight 0 for the check")
	}
	for name, rs := range bad {
		dr := d
		dr.Rows = rs
		if _, err := Fit(dr, Options{}); err == nil {
			t.Errorf("%s: no error", name)
		}
	}
	if _, err := Fit(Data{X: d.X, N: n, P: p, Y: d.Y, Rows: rows}, Options{}); err == nil {
		t.Error("Rows without Weights: no error")
	}
}
