package logistic

import (
	"math/rand/v2"
	"testing"
)

// TestWorkspaceSameFit: fits lent one Workspace in turn (bootstrap-like
// counts over the rows, with Data.Rows) are bit for bit the fits without
// it — maximum likelihood and Firth, from a start with its StartRows and
// without the covariance as a bootstrap refits, with five columns (the
// passes read the Workspace's columns) and with two (passSmall), on one
// worker and on two over 30,000 rows (where the columns are not used) —
// whatever the Workspace held from the fit before.
func TestWorkspaceSameFit(t *testing.T) {
	var ws Workspace
	for _, c := range []struct {
		n, p, workers int
		firth, start  bool
	}{
		{5000, 5, 1, false, true}, {3000, 5, 1, true, false}, {800, 2, 1, false, true},
		{30000, 5, 2, false, false}, {6000, 5, 1, false, false}, {5000, 7, 1, false, true},
	} {
		d, rows := countedRows(c.n, c.p, uint64(c.n+c.p))
		d.Rows = rows
		opt := Options{Workers: c.workers, Firth: c.firth}
		if c.start {
			full, err := Fit(Data{X: d.X, N: d.N, P: d.P, Y: d.Y}, Options{})
			if err != nil {
				t.Fatal(err)
			}
			opt.Start, opt.CoefOnly = full.Coef, true
			opt.StartRows = NewStartRows(Data{X: d.X, N: d.N, P: d.P, Y: d.Y}, full.Coef)
		}
		want, err := Fit(d, opt)
		if err != nil {
			t.Fatal(err)
		}
		opt.Workspace = &ws
		got, err := Fit(d, opt)
		if err != nil {
			t.Fatal(err)
		}
		if got.Deviance != want.Deviance || got.Iterations != want.Iterations || got.Halvings != want.Halvings {
			t.Errorf("%+v: deviance %v in %d iterations, want %v in %d", c, got.Deviance, got.Iterations, want.Deviance, want.Iterations)
		}
		for j := range want.Coef {
			if got.Coef[j] != want.Coef[j] {
				t.Errorf("%+v: β%d = %v, want %v", c, j, got.Coef[j], want.Coef[j])
			}
			if want.SE != nil && got.SE[j] != want.SE[j] {
				t.Errorf("%+v: SE %d = %v, want %v", c, j, got.SE[j], want.SE[j])
			}
		}
	}
}

// countedRows simulates n rows of p columns (an intercept and normal
// predictors) with counts drawn as a bootstrap draws them (n draws with
// replacement) and lists the rows drawn.
func countedRows(n, p int, seed uint64) (Data, []int32) {
	r := rand.New(rand.NewPCG(seed, 3))
	d := Data{X: make([]float64, n*p), N: n, P: p, Y: make([]float64, n), Weights: make([]float64, n)}
	for i := 0; i < n; i++ {
		x := d.X[i*p : (i+1)*p]
		x[0] = 1
		for j := 1; j < p; j++ {
			x[j] = r.NormFloat64()
		}
		if r.Float64() < Expit(-1+0.7*x[1]) {
			d.Y[i] = 1
		}
	}
	for k := 0; k < n; k++ {
		d.Weights[r.IntN(n)]++
	}
	var rows []int32
	for i, w := range d.Weights {
		if w != 0 {
			rows = append(rows, int32(i))
		}
	}
	return d, rows
}
