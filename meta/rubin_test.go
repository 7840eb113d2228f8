package meta

import (
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// TestRubinReference checks Rubin's rules, the Barnard–Rubin degrees of
// freedom, the fraction of missing information and the interval against
// testdata/reference/rubin.json: an independent numpy/scipy transcription
// of Rubin (1987) and Barnard & Rubin (1999), whose total variance and λ
// are confirmed there by statsmodels' MICE.combine
// (testdata/reference/rubin_reference.py, called from make_reference.py).
func TestRubinReference(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "testdata", "reference", "rubin.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Datasets []struct {
			Name                                          string
			Q, U                                          []float64
			DFComplete                                    *float64 `json:"df_complete"`
			Estimate, Within, Between, Total, Lambda, RIV float64
			DF                                            *float64
			FMI                                           float64
			CI                                            [2]float64
		}
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Datasets) < 7 {
		t.Fatalf("rubin.json has %d datasets, want 7", len(ref.Datasets))
	}
	// 1e-8: gonum's t quantile on about 1 df agrees with scipy's to 3e-9.
	const tol = 1e-8
	for _, d := range ref.Datasets {
		t.Run(d.Name, func(t *testing.T) {
			com := math.Inf(1)
			if d.DFComplete != nil {
				com = *d.DFComplete
			}
			c, err := Rubin(d.Q, d.U, com, 0.95)
			if err != nil {
				t.Fatal(err)
			}
			wantDF := math.Inf(1)
			if d.DF != nil {
				wantDF = *d.DF
			}
			for _, x := range []struct {
				name      string
				got, want float64
			}{{"estimate", c.Estimate, d.Estimate}, {"within", c.Within, d.Within}, {"between", c.Between, d.Between},
				{"total", c.Total, d.Total}, {"lambda", c.Lambda, d.Lambda}, {"riv", c.RIV, d.RIV}, {"fmi", c.FMI, d.FMI},
				{"ci low", c.CI[0], d.CI[0]}, {"ci high", c.CI[1], d.CI[1]}} {
				if !close(x.got, x.want, tol) {
					t.Errorf("%s = %.12g, reference %.12g", x.name, x.got, x.want)
				}
			}
			if math.IsInf(wantDF, 1) != math.IsInf(c.DF, 1) || (!math.IsInf(wantDF, 1) && !close(c.DF, wantDF, tol)) {
				t.Errorf("df = %.12g, reference %.12g", c.DF, wantDF)
			}
			if c.M != len(d.Q) {
				t.Errorf("m = %d, want %d", c.M, len(d.Q))
			}
		})
	}
}

// TestRubinProperties checks relations that follow from the definitions:
// ν lies below both ν_old and ν_obs (Barnard & Rubin 1999, section 3),
// grows towards ν_old as ν_com grows, and the FMI is within [0, 1].
func TestRubinProperties(t *testing.T) {
	q := []float64{0.2, 0.35, 0.15, 0.4}
	u := []float64{0.01, 0.012, 0.011, 0.009}
	inf, err := Rubin(q, u, math.Inf(1), 0)
	if err != nil {
		t.Fatal(err)
	}
	prev := 0.0
	for _, com := range []float64{10, 100, 1000, 1e6} {
		c, err := Rubin(q, u, com, 0)
		if err != nil {
			t.Fatal(err)
		}
		if !(c.DF < inf.DF) || !(c.DF > prev) {
			t.Errorf("ν_com %g: ν %g should lie in (%g, ν_old %g)", com, c.DF, prev, inf.DF)
		}
		if !(c.FMI >= 0 && c.FMI <= 1) {
			t.Errorf("ν_com %g: FMI %g outside [0, 1]", com, c.FMI)
		}
		prev = c.DF
	}
	if math.Abs(prev-inf.DF) > 1e-3*inf.DF {
		t.Errorf("ν with ν_com = 1e6 is %g, not close to ν_old %g", prev, inf.DF)
	}
}

func TestRubinRefuses(t *testing.T) {
	for _, c := range []struct {
		name string
		q, u []float64
		com  float64
		is   error
	}{
		{"one imputation", []float64{1}, []float64{0.1}, math.Inf(1), ErrTooFewImputations},
		{"lengths differ", []float64{1, 2}, []float64{0.1}, math.Inf(1), nil},
		{"NaN estimate", []float64{1, math.NaN()}, []float64{0.1, 0.1}, math.Inf(1), nil},
		{"negative variance", []float64{1, 2}, []float64{0.1, -0.1}, math.Inf(1), nil},
		{"infinite variance", []float64{1, 2}, []float64{0.1, math.Inf(1)}, math.Inf(1), nil},
		{"zero complete-data df", []float64{1, 2}, []float64{0.1, 0.1}, 0, nil},
	} {
		_, err := Rubin(c.q, c.u, c.com, 0)
		if err == nil {
			t.Errorf("%s: no error", c.name)
		} else if c.is != nil && !errors.Is(err, c.is) {
			t.Errorf("%s: %v, want %v", c.name, err, c.is)
		}
	}
	// No variance at all: the interval is the point.
	c, err := Rubin([]float64{0.5, 0.5}, []float64{0, 0}, 10, 0)
	if err != nil || c.CI != [2]float64{0.5, 0.5} || !math.IsNaN(c.DF) {
		t.Errorf("zero variance: %+v, %v", c, err)
	}
}
