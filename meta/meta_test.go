package meta

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"
)

type refMethod struct {
	Tau2     float64    `json:"tau2"`
	Estimate float64    `json:"estimate"`
	WaldSE   float64    `json:"wald_se"`
	HKSJSE   float64    `json:"hksj_se"`
	HKSJCI   [2]float64 `json:"hksj_ci"`
	WaldCI   [2]float64 `json:"wald_ci"`
	PI       *[2]float64
	Prob     *float64
}

type refDataset struct {
	Name   string     `json:"name"`
	Y      []float64  `json:"y"`
	V      []float64  `json:"v"`
	Bounds []*float64 `json:"bounds"`
	Q      float64    `json:"q"`
	I2     float64    `json:"i2"`
	DL     refMethod  `json:"dl"`
	PM     refMethod  `json:"pm"`
	REML   refMethod  `json:"reml"`
}

func close(a, b, tol float64) bool {
	return math.Abs(a-b) <= tol*math.Max(1, math.Max(math.Abs(a), math.Abs(b)))
}

// TestPoolReference checks every estimator against
// testdata/reference/meta.json: τ² by DerSimonian–Laird and Paule–Mandel,
// Cochran's Q and I² from statsmodels.stats.meta_analysis.combine_effects
// (Debian python3-statsmodels); τ² by REML from an independent matrix
// transcription of Viechtbauer (2005) by Fisher scoring, confirmed by
// scipy's direct maximisation of the restricted likelihood; the HKSJ
// interval, the Wald interval, the prediction interval and the
// probability of the bounds from scipy.stats (make_reference.py,
// write_meta_reference).
func TestPoolReference(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "testdata", "reference", "meta.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Datasets []refDataset `json:"datasets"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Datasets) < 6 {
		t.Fatalf("meta.json has %d datasets, want 6", len(ref.Datasets))
	}
	const tol = 1e-8
	intervals := 0
	for _, d := range ref.Datasets {
		lo, hi := math.Inf(-1), math.Inf(1)
		if d.Bounds[0] != nil {
			lo = *d.Bounds[0]
		}
		if d.Bounds[1] != nil {
			hi = *d.Bounds[1]
		}
		for _, m := range []struct {
			method Tau2Method
			want   refMethod
		}{{DL, d.DL}, {PM, d.PM}, {REML, d.REML}} {
			for _, ci := range []CIMethod{HKSJ, Wald} {
				r, err := Pool(d.Y, d.V, Options{Tau2: m.method, CI: ci})
				if err != nil {
					t.Fatalf("%s %s: %v", d.Name, m.method, err)
				}
				w := m.want
				check := func(what string, got, want float64) {
					t.Helper()
					if !close(got, want, tol) {
						t.Errorf("%s, %s/%s: %s = %.12g, want %.12g", d.Name, m.method, ci, what, got, want)
					}
				}
				check("tau2", r.Tau2, w.Tau2)
				check("estimate", r.Estimate, w.Estimate)
				check("Q", r.Q, d.Q)
				check("I2", r.I2, d.I2)
				check("Wald SE", r.WaldSE, w.WaldSE)
				wantCI, wantSE := w.HKSJCI, w.HKSJSE
				if ci == Wald {
					wantCI, wantSE = w.WaldCI, w.WaldSE
				}
				check("SE", r.SE, wantSE)
				check("CI lower", r.CI[0], wantCI[0])
				check("CI upper", r.CI[1], wantCI[1])
				if w.PI == nil {
					if !math.IsNaN(r.PI[0]) || !math.IsNaN(r.PI[1]) || !math.IsNaN(r.ProbWithin(lo, hi)) {
						t.Errorf("%s: k = %d, want no prediction interval, got %v", d.Name, r.K, r.PI)
					}
					continue
				}
				intervals++
				check("PI lower", r.PI[0], w.PI[0])
				check("PI upper", r.PI[1], w.PI[1])
				check("P(bounds)", r.ProbWithin(lo, hi), *w.Prob)
			}
		}
	}
	if intervals != 5*3*2 {
		t.Errorf("%d prediction intervals checked, want 30", intervals)
	}
}

// TestPoolDefinitions checks properties that hold by definition: at
// τ² = 0 the pooled estimate is the inverse-variance mean; identical
// estimates give Q = 0, I² = 0 and τ² = 0 whatever the method; the
// probability of the whole line is 1 and that of the prediction interval
// is the level.
func TestPoolDefinitions(t *testing.T) {
	y := []float64{0.3, 0.3, 0.3, 0.3}
	v := []float64{0.01, 0.02, 0.03, 0.04}
	for _, m := range []Tau2Method{REML, DL, PM} {
		r, err := Pool(y, v, Options{Tau2: m})
		if err != nil {
			t.Fatal(err)
		}
		if r.Tau2 != 0 || r.Q > 1e-15 || r.I2 != 0 || !close(r.Estimate, 0.3, 1e-14) {
			t.Errorf("%s on identical estimates: τ² %g, Q %g, I² %g, μ %g", m, r.Tau2, r.Q, r.I2, r.Estimate)
		}
	}
	y = []float64{1.1, 1.45, 0.82, 1.3, 0.95, 1.62}
	v = []float64{0.02, 0.035, 0.015, 0.05, 0.025, 0.06}
	r, err := Pool(y, v, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if r.Tau2Method != REML || r.CIMethod != HKSJ || r.Level != 0.95 {
		t.Errorf("defaults: %s, %s, %g", r.Tau2Method, r.CIMethod, r.Level)
	}
	if p := r.ProbWithin(math.Inf(-1), math.Inf(1)); !close(p, 1, 1e-12) {
		t.Errorf("P(whole line) = %g", p)
	}
	if p := r.ProbWithin(r.PI[0], r.PI[1]); !close(p, 0.95, 1e-9) {
		t.Errorf("P(prediction interval) = %g, want 0.95", p)
	}
}

func TestPoolErrors(t *testing.T) {
	for _, c := range []struct {
		name string
		y, v []float64
		opt  Options
	}{
		{"one estimate", []float64{1}, []float64{1}, Options{}},
		{"lengths", []float64{1, 2}, []float64{1}, Options{}},
		{"zero variance", []float64{1, 2}, []float64{1, 0}, Options{}},
		{"NaN estimate", []float64{1, math.NaN()}, []float64{1, 1}, Options{}},
		{"level", []float64{1, 2}, []float64{1, 1}, Options{Level: 1.5}},
		{"method", []float64{1, 2}, []float64{1, 1}, Options{Tau2: "ml"}},
	} {
		if _, err := Pool(c.y, c.v, c.opt); err == nil {
			t.Errorf("%s: no error", c.name)
		}
	}
	if _, err := ParseTau2Method("sj"); err == nil {
		t.Error("ParseTau2Method(sj): no error")
	}
	if m, err := ParseCIMethod("wald"); err != nil || m != Wald {
		t.Errorf("ParseCIMethod(wald) = %v, %v", m, err)
	}
}
