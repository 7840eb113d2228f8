package metrics

import (
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/internal/reftest"
)

// extraRef is testdata/reference/extra.json, written by
// write_extra_reference in testdata/reference/make_reference.py:
// numpy transcriptions of the logit-scale AUC interval and of the local
// linear smoother's variance, and statsmodels' lowess with δ; regenerated
// and compared in CI.
type extraRef struct {
	AUCLogitCI [2]float64 `json:"auc_logit_ci"`
	Band       struct {
		X, Fit, SE, Lower, Upper []float64
	} `json:"lowess_band"`
	Lowess20000 struct {
		N     int       `json:"n"`
		Delta float64   `json:"delta"`
		Every int       `json:"every"`
		Fit   []float64 `json:"fit"`
		ICI   float64   `json:"ici"`
	} `json:"lowess_20000"`
}

func loadExtraRef(t *testing.T) extraRef {
	t.Helper()
	var r extraRef
	reftest.JSON(t, "extra.json", &r)
	return r
}

// TestAUCLogitCIMatchesTranscription: the logit-scale interval against
// numpy's expit(logit(A) ± 1.96·SE/(A(1 − A))) with A and SE from the
// O(n²) DeLong transcription (extra.json).
func TestAUCLogitCIMatchesTranscription(t *testing.T) {
	r := loadExtraRef(t)
	_, y, p := loadAuditRef(t)
	auc, _ := AUC(SortByRisk(y, p))
	near(t, "AUC logit CI lower vs numpy", auc.LogitCI[0], r.AUCLogitCI[0], 1e-9)
	near(t, "AUC logit CI upper vs numpy", auc.LogitCI[1], r.AUCLogitCI[1], 1e-9)
}

// TestLowessBandMatchesTranscription: the LOWESS fit and its pointwise
// standard error against a numpy transcription that solves the weighted
// least squares at every point and takes Σl² from the smoother weights
// e₁'(X'WX)⁻¹X'W (extra.json). The band built from them is checked in
// validate (TestCalibrationBandMatchesTranscription).
func TestLowessBandMatchesTranscription(t *testing.T) {
	r := loadExtraRef(t)
	_, y, p := loadAuditRef(t)
	s := SortByRisk(y, p)
	c := Lowess(s.P(), s.Y(), LowessOptions{})
	if len(c.Fit) != len(r.Band.Fit) {
		t.Fatalf("%d points, reference %d", len(c.Fit), len(r.Band.Fit))
	}
	for i := range c.Fit {
		near(t, "LOWESS x", c.X[i], r.Band.X[i], 1e-10)
		near(t, "LOWESS fit vs numpy WLS", c.Fit[i], r.Band.Fit[i], 1e-8)
		near(t, "LOWESS SE vs numpy smoother weights", c.SE[i], r.Band.SE[i], 1e-8)
	}
}

// TestDefaultDeltaBetween10000And100000: the documented rule (δ = 0 up
// to 10,000 rows, 1% of the range up to 100,000, 2% beyond), and the
// smooth of 20,000 generated rows with it against statsmodels' lowess
// with δ = 1% of the range (extra.json).
func TestDefaultDeltaBetween10000And100000(t *testing.T) {
	for _, c := range []struct {
		n    int
		want float64
	}{{10000, 0}, {10001, 0.02}, {100000, 0.02}, {100001, 0.04}} {
		if got := DefaultDelta(1, 3, c.n); math.Abs(got-c.want) > 1e-15 {
			t.Errorf("DefaultDelta(1, 3, %d) = %g, the rule gives %g", c.n, got, c.want)
		}
	}
	r := loadExtraRef(t).Lowess20000
	n := r.N
	x, y := make([]float64, n), make([]float64, n)
	for i := range x {
		x[i] = (float64(i) + 0.5) / float64(n)
		if float64(i*7919%1000) < 1000*x[i]*0.8+100 {
			y[i] = 1
		}
	}
	d := DefaultDelta(x[0], x[n-1], n)
	near(t, "δ at 20,000 rows vs 1% of the range", d, r.Delta, 1e-12)
	cc := FlexibleCalibration(AsSorted(y, x), LowessOptions{Delta: d})
	for j, want := range r.Fit {
		got := cc.Curve.Fit[j*r.Every]
		near(t, "smooth with δ vs statsmodels lowess", got, math.Min(math.Max(want, 0), 1), 1e-8)
	}
	near(t, "ICI with δ vs statsmodels lowess", cc.ICI, r.ICI, 1e-8)
}
