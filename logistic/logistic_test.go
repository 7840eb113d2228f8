package logistic

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"
)

// simulate draws n rows of p−1 standard-normal predictors plus an
// intercept column, with outcomes from the given coefficients.
func simulate(n int, beta []float64, seed uint64) Data {
	r := rand.New(rand.NewPCG(seed, 99))
	p := len(beta)
	d := Data{X: make([]float64, n*p), Y: make([]float64, n), N: n, P: p}
	for i := 0; i < n; i++ {
		x := d.X[i*p : i*p+p]
		x[0] = 1
		eta := beta[0]
		for j := 1; j < p; j++ {
			x[j] = r.NormFloat64()
			eta += beta[j] * x[j]
		}
		if r.Float64() < Expit(eta) {
			d.Y[i] = 1
		}
	}
	return d
}

func TestScoreIsZeroAtFit(t *testing.T) {
	d := simulate(3000, []float64{-1, 0.5, -0.25, 1}, 1)
	res, err := Fit(d, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// The maximum-likelihood equations X'(y − μ) = 0 (McCullagh & Nelder
	// 1989, §4.4) hold at the estimate.
	for j := 0; j < d.P; j++ {
		s := 0.0
		for i := 0; i < d.N; i++ {
			eta := 0.0
			for k := 0; k < d.P; k++ {
				eta += d.X[i*d.P+k] * res.Coef[k]
			}
			s += d.X[i*d.P+j] * (d.Y[i] - Expit(eta))
		}
		if math.Abs(s) > 1e-8 {
			t.Errorf("score[%d] = %g", j, s)
		}
	}
	if math.Abs(Deviance(d, res.Coef)-res.Deviance) > 1e-9 {
		t.Errorf("Deviance disagrees with the fit")
	}
}

// TestWeightsAreReplication: a frequency weight of k is the same as k
// copies of the row.
func TestWeightsAreReplication(t *testing.T) {
	d := simulate(400, []float64{0.3, 1, -0.5}, 2)
	r := rand.New(rand.NewPCG(3, 4))
	w := make([]float64, d.N)
	var rep Data
	rep.P = d.P
	for i := range w {
		w[i] = float64(r.IntN(3))
		for k := 0; k < int(w[i]); k++ {
			rep.X = append(rep.X, d.X[i*d.P:i*d.P+d.P]...)
			rep.Y = append(rep.Y, d.Y[i])
			rep.N++
		}
	}
	d.Weights = w
	a, err := Fit(d, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Fit(rep, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for j := range a.Coef {
		if math.Abs(a.Coef[j]-b.Coef[j]) > 1e-10 || math.Abs(a.SE[j]-b.SE[j]) > 1e-10 {
			t.Errorf("coef %d: weighted %v±%v, replicated %v±%v", j, a.Coef[j], a.SE[j], b.Coef[j], b.SE[j])
		}
	}
	if math.Abs(a.Deviance-b.Deviance) > 1e-8 {
		t.Errorf("deviance %v vs %v", a.Deviance, b.Deviance)
	}
}

func TestParallelEqualsSerial(t *testing.T) {
	d := simulate(60000, []float64{-2, 0.5, 0.25, -1, 0.1}, 5)
	a, err := Fit(d, Options{Workers: 1})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Fit(d, Options{Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	for j := range a.Coef {
		if math.Abs(a.Coef[j]-b.Coef[j]) > 1e-12*(1+math.Abs(a.Coef[j])) {
			t.Errorf("coef %d: %v vs %v", j, a.Coef[j], b.Coef[j])
		}
	}
}

func TestSeparation(t *testing.T) {
	// x separates the outcome completely.
	x := []float64{-3, -2, -1, -0.5, 0.5, 1, 2, 3}
	y := []float64{0, 0, 0, 0, 1, 1, 1, 1}
	d := Data{N: len(x), P: 2, Y: y}
	for _, v := range x {
		d.X = append(d.X, 1, v)
	}
	_, err := Fit(d, Options{})
	var se *SeparationError
	if !errors.As(err, &se) || !se.Complete {
		t.Fatalf("want complete separation, got %v", err)
	}
	if len(se.Columns) == 0 || se.Columns[len(se.Columns)-1] != 1 {
		t.Errorf("column 1 should diverge: %v", se.Columns)
	}
	// Quasi-complete: a binary column with no events among its ones,
	// beside an unrelated column.
	d = Data{N: 12, P: 3}
	for i := 0; i < 12; i++ {
		g := float64(i % 3 / 2) // 0,0,1,...
		yy := float64(i % 2)
		if g == 1 {
			yy = 0
		}
		d.X = append(d.X, 1, g, float64(i%5))
		d.Y = append(d.Y, yy)
	}
	_, err = Fit(d, Options{})
	if !errors.As(err, &se) || se.Complete {
		t.Fatalf("want quasi-complete separation, got %v", err)
	}
	found := false
	for _, c := range se.Columns {
		found = found || c == 1
	}
	if !found {
		t.Errorf("column 1 should be named: %v", se.Columns)
	}
}

func TestCollinear(t *testing.T) {
	d := simulate(200, []float64{0, 1, 1}, 6)
	d.P = 4
	var x []float64
	for i := 0; i < d.N; i++ {
		row := d.X[i*3 : i*3+3]
		x = append(x, row[0], row[1], row[2], row[1]+2*row[2])
	}
	d.X = x
	_, err := Fit(d, Options{})
	var ce *CollinearError
	if !errors.As(err, &ce) || len(ce.Columns) != 3 {
		t.Fatalf("want collinearity of columns 1, 2, 3: %v", err)
	}
}

// TestFirthTwoByTwo: for one binary predictor, Firth's estimate of the log
// odds ratio equals the empirical log odds ratio with ½ added to every
// cell (Firth 1993, §3; Heinze & Schemper 2002, Statistics in Medicine
// 21:2409–2419, §2).
func TestFirthTwoByTwo(t *testing.T) {
	cells := [2][2]int{{7, 0}, {3, 5}} // [x][y]: a zero cell separates x
	var d Data
	d.P = 2
	for x := 0; x < 2; x++ {
		for y := 0; y < 2; y++ {
			for k := 0; k < cells[x][y]; k++ {
				d.X = append(d.X, 1, float64(x))
				d.Y = append(d.Y, float64(y))
				d.N++
			}
		}
	}
	if _, err := Fit(d, Options{}); err == nil {
		t.Fatal("maximum likelihood should find separation")
	}
	res, err := Fit(d, Options{Firth: true})
	if err != nil {
		t.Fatal(err)
	}
	a, b, c, dd := 7.5, 0.5, 3.5, 5.5 // x=0,y=0; x=0,y=1; x=1,y=0; x=1,y=1
	wantInt := math.Log(b / a)
	wantOR := math.Log(dd * a / (c * b))
	if math.Abs(res.Coef[0]-wantInt) > 1e-9 || math.Abs(res.Coef[1]-wantOR) > 1e-9 {
		t.Errorf("Firth %v, want [%v %v]", res.Coef, wantInt, wantOR)
	}
}

func TestStableHelpers(t *testing.T) {
	for _, x := range []float64{-800, -40, -1, 0, 1, 40, 800} {
		p := Expit(x)
		if math.IsNaN(p) || p < 0 || p > 1 {
			t.Errorf("Expit(%v) = %v", x, p)
		}
	}
	if v := Logit(Expit(-30)); math.Abs(v+30) > 1e-9 {
		t.Errorf("Logit(Expit(-30)) = %v", v)
	}
	for _, z := range []float64{0, 1e-300, 1e-17, 1e-9, 1e-3, 0.3, 0.999, 1} {
		if got, want := log1pUnit(z), math.Log1p(z); math.Abs(got-want) > 4e-16*math.Max(want, 1e-300) {
			t.Errorf("log1pUnit(%g) = %g, want %g", z, got, want)
		}
	}
	if v := softplus(800); v != 800 {
		t.Errorf("softplus(800) = %v", v)
	}
}

// BenchmarkFit1M fits 1M rows with an intercept and 7 predictors.
func BenchmarkFit1M(b *testing.B) {
	d := simulate(1_000_000, []float64{-2, 0.5, -0.3, 0.2, 0.8, -0.1, 0.05, 0.4}, 7)
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := Fit(d, Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// TestFixedEqualsOffset: by maximum likelihood, holding a coefficient at
// c is the same fit as leaving its column out with c times it as offset.
// With Firth's penalty the fixed column still counts in the penalty, so
// its penalised log-likelihood is at most the free fit's.
func TestFixedEqualsOffset(t *testing.T) {
	d := simulate(2000, []float64{-1, 0.5, -0.25, 1}, 7)
	const c = 0.3
	start := []float64{0, 0, c, 0}
	fixed := []bool{false, false, true, false}
	a, err := Fit(d, Options{Start: start, Fixed: fixed})
	if err != nil {
		t.Fatal(err)
	}
	if a.Coef[2] != c {
		t.Fatalf("the fixed coefficient moved to %g", a.Coef[2])
	}
	red := Data{N: d.N, P: 3, Y: d.Y, X: make([]float64, d.N*3), Offset: make([]float64, d.N)}
	for i := 0; i < d.N; i++ {
		x := d.X[i*4 : i*4+4]
		copy(red.X[i*3:], []float64{x[0], x[1], x[3]})
		red.Offset[i] = c * x[2]
	}
	b, err := Fit(red, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for k, j := range []int{0, 1, 3} {
		if math.Abs(a.Coef[j]-b.Coef[k]) > 1e-8 {
			t.Errorf("coefficient %d: fixed fit %.10f, offset fit %.10f", j, a.Coef[j], b.Coef[k])
		}
	}
	if math.Abs(a.Deviance-b.Deviance) > 1e-8 {
		t.Errorf("deviance %.10f against %.10f", a.Deviance, b.Deviance)
	}
	free, err := Fit(d, Options{Firth: true})
	if err != nil {
		t.Fatal(err)
	}
	held, err := Fit(d, Options{Firth: true, Start: start, Fixed: fixed})
	if err != nil {
		t.Fatal(err)
	}
	if held.PenalizedLogLik > free.PenalizedLogLik+1e-9 || held.Coef[2] != c {
		t.Errorf("penalised log-likelihood %g held, %g free; held coefficient %g", held.PenalizedLogLik, free.PenalizedLogLik, held.Coef[2])
	}
	if _, err := Fit(d, Options{Fixed: []bool{true}}); err == nil {
		t.Error("a Fixed of the wrong length should be refused")
	}
}

// TestFitErrorKinds: each way a fit fails is found by errors.Is with its
// sentinel and no other, and by errors.As with its type where it has one.
func TestFitErrorKinds(t *testing.T) {
	separated := Data{N: 8, P: 2, Y: []float64{0, 0, 0, 0, 1, 1, 1, 1}}
	for _, v := range []float64{-3, -2, -1, -0.5, 0.5, 1, 2, 3} {
		separated.X = append(separated.X, 1, v)
	}
	collinear := simulate(200, []float64{0, 1}, 6)
	var x []float64
	for i := 0; i < collinear.N; i++ {
		x = append(x, 1, collinear.X[2*i+1], -3*collinear.X[2*i+1])
	}
	collinear.X, collinear.P = x, 3
	kinds := []error{ErrSeparation, ErrCollinear, ErrNotConverged}
	for _, tc := range []struct {
		name string
		d    Data
		opt  Options
		kind error
		// as checks the error's type and fields.
		as func(error) bool
	}{
		{"separation", separated, Options{}, ErrSeparation, func(err error) bool {
			var se *SeparationError
			return errors.As(err, &se) && se.Complete && se.Rows == 8
		}},
		{"collinear", collinear, Options{}, ErrCollinear, func(err error) bool {
			var ce *CollinearError
			return errors.As(err, &ce) && len(ce.Columns) == 2 && ce.Columns[0] == 1 && ce.Columns[1] == 2
		}},
		{"one iteration", simulate(200, []float64{-1, 1, 0.5}, 3), Options{MaxIter: 1}, ErrNotConverged, func(err error) bool {
			var se *SeparationError
			var ce *CollinearError
			return !errors.As(err, &se) && !errors.As(err, &ce)
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Fit(tc.d, tc.opt)
			if err == nil {
				t.Fatal("no error")
			}
			for _, k := range kinds {
				if got := errors.Is(err, k); got != (k == tc.kind) {
					t.Errorf("errors.Is(err, %v) = %v; err: %v", k, got, err)
				}
			}
			if !tc.as(err) {
				t.Errorf("errors.As does not find the expected type and fields in %T: %v", err, err)
			}
		})
	}
}
