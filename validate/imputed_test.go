package validate

import (
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"

	"github.com/riskaudit/riskaudit/meta"
)

// TestBrierVarianceReference checks BrierVariance against numpy's
// var(ddof=1)/n of the squared errors (testdata/reference/rubin.json,
// written by rubin_reference.py from make_reference.py).
func TestBrierVarianceReference(t *testing.T) {
	b, err := os.ReadFile(filepath.Join("..", "testdata", "reference", "rubin.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Brier struct {
			Y, P            []float64
			Brier, Variance float64
		} `json:"brier_variance"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if len(ref.Brier.Y) < 10 {
		t.Fatalf("rubin.json has %d rows for the Brier variance", len(ref.Brier.Y))
	}
	got := BrierVariance(ref.Brier.Y, ref.Brier.P)
	if math.Abs(got-ref.Brier.Variance) > 1e-9*ref.Brier.Variance {
		t.Errorf("BrierVariance = %.12g, numpy %.12g", got, ref.Brier.Variance)
	}
	if !math.IsNaN(BrierVariance([]float64{1}, []float64{0.5})) {
		t.Error("one row: want NaN")
	}
}

// imputedFixture draws a cohort of n patients with 3 clusters and m
// imputations whose risks differ by noise of size spread on the logit
// (spread 0: identical imputations).
func imputedFixture(t *testing.T, n, m int, spread float64) ([]ImputedData, []GroupColumn) {
	t.Helper()
	r := rand.New(rand.NewPCG(7, 8))
	base, y := make([]float64, n), make([]float64, n)
	codes := make([]int32, n)
	for i := range base {
		base[i] = -1.8 + 1.1*r.NormFloat64()
		if r.Float64() < 1/(1+math.Exp(-base[i])) {
			y[i] = 1
		}
		codes[i] = int32(i % 3)
	}
	var sets []ImputedData
	var cols []GroupColumn
	for j := 0; j < m; j++ {
		p, lp := make([]float64, n), make([]float64, n)
		for i := range p {
			lp[i] = base[i]
			if i%4 == 0 { // a quarter of the patients had a value imputed
				lp[i] += spread * r.NormFloat64()
			}
			p[i] = 1 / (1 + math.Exp(-lp[i]))
		}
		perf, err := AssessLogits(y, p, lp, Options{})
		if err != nil {
			t.Fatal(err)
		}
		sets = append(sets, ImputedData{Y: y, P: p, LP: lp, Perf: perf})
		cols = append(cols, GroupColumn{Name: "site", Levels: []string{"a", "b", "c"}, Codes: codes})
	}
	return sets, cols
}

// TestPoolIdenticalImputations: m identical completed datasets carry no
// missing information, so Rubin's rules must give back the single
// dataset's measures (B = 0, T = Ū, λ = 0), and pooling within clusters
// first must give the clusters' meta-analysis of one dataset.
func TestPoolIdenticalImputations(t *testing.T) {
	sets, cols := imputedFixture(t, 1500, 4, 0)
	im, perf, err := PoolImputations(sets, ImputationOptions{})
	if err != nil {
		t.Fatal(err)
	}
	one := sets[0].Perf
	for _, c := range []struct {
		name       string
		pm         ImputedMeasure
		want, var0 float64
	}{
		{"auc", im.Pooled.AUC, one.Discrimination.AUC, math.Pow(one.Discrimination.SE/(one.Discrimination.AUC*(1-one.Discrimination.AUC)), 2)},
		{"oe", im.Pooled.OE, one.Calibration.OE, (1 - one.Calibration.Observed/1500) / one.Calibration.Observed},
		{"citl", im.Pooled.CITL, one.Calibration.CITL, one.Calibration.CITLSE * one.Calibration.CITLSE},
		{"slope", im.Pooled.Slope, one.Calibration.Slope, one.Calibration.SlopeSE * one.Calibration.SlopeSE},
		{"brier", im.Pooled.Brier, one.Overall.Brier, BrierVariance(sets[0].Y, sets[0].P)},
	} {
		if !close(c.pm.Estimate, c.want, 1e-12) || c.pm.BetweenVariance > 1e-20 || !close(c.pm.TotalVariance, c.var0, 1e-12) || c.pm.Lambda > 1e-12 {
			t.Errorf("%s: %+v, want estimate %g and variance %g with no between-imputation variance", c.name, c.pm, c.want, c.var0)
		}
	}
	if perf.Calibration.ICI != one.Calibration.ICI || len(perf.Curves.Flexible) != len(one.Curves.Flexible) {
		t.Errorf("averaged ICI %g (one %g), curve of %d points (one %d)", perf.Calibration.ICI, one.Calibration.ICI, len(perf.Curves.Flexible), len(one.Curves.Flexible))
	}
	for k, pt := range perf.Curves.Flexible {
		if !close(pt.Observed, one.Curves.Flexible[k].Observed, 1e-12) {
			t.Fatalf("averaged curve point %d: %v, one imputation %v", k, pt, one.Curves.Flexible[k])
		}
	}
	got, err := MeasureClustersImputed(sets, cols, ClusterOptions{Column: "site"})
	if err != nil {
		t.Fatal(err)
	}
	want, err := MeasureClusters(sets[0].Y, sets[0].P, sets[0].LP, cols[0], ClusterOptions{Column: "site"})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name      string
		got, want PooledMeasure
	}{{"auc", got.Pooled.AUC, want.Pooled.AUC}, {"oe", got.Pooled.OE, want.Pooled.OE}, {"citl", got.Pooled.CITL, want.Pooled.CITL}, {"slope", got.Pooled.Slope, want.Pooled.Slope}} {
		if !close(c.got.Estimate, c.want.Estimate, 1e-9) || !close(c.got.Tau2, c.want.Tau2, 1e-9) || !close(c.got.CI[0], c.want.CI[0], 1e-9) {
			t.Errorf("clusters %s: imputed %+v, one dataset %+v", c.name, c.got, c.want)
		}
	}
}

// TestPoolImputationsRubin: with imputations that differ, each pooled
// measure is meta.Rubin of the per-imputation estimates and variances on
// its scale, the between-imputation variance is positive, and the
// interval is wider than the first imputation's own.
func TestPoolImputationsRubin(t *testing.T) {
	sets, _ := imputedFixture(t, 2000, 5, 0.6)
	im, perf, err := PoolImputations(sets, ImputationOptions{})
	if err != nil {
		t.Fatal(err)
	}
	q, u := make([]float64, len(sets)), make([]float64, len(sets))
	for j, s := range sets {
		d := s.Perf.Discrimination
		q[j] = math.Log(d.AUC / (1 - d.AUC))
		u[j] = math.Pow(d.SE/(d.AUC*(1-d.AUC)), 2)
	}
	c, err := meta.Rubin(q, u, 1999, 0.95)
	if err != nil {
		t.Fatal(err)
	}
	if a := im.Pooled.AUC; !close(a.ScaleEstimate, c.Estimate, 1e-12) || !close(a.TotalVariance, c.Total, 1e-12) || !close(a.DF, c.DF, 1e-12) || !(a.BetweenVariance > 0) {
		t.Errorf("pooled AUC %+v, meta.Rubin %+v", a, c)
	}
	if w := perf.Calibration.SlopeCI[1] - perf.Calibration.SlopeCI[0]; !(w > sets[0].Perf.Calibration.SlopeCI[1]-sets[0].Perf.Calibration.SlopeCI[0]) {
		t.Errorf("pooled slope interval %v not wider than one imputation's %v", perf.Calibration.SlopeCI, sets[0].Perf.Calibration.SlopeCI)
	}
	if perf.Discrimination.AUC != im.Pooled.AUC.Estimate || perf.Calibration.OE != im.Pooled.OE.Estimate || perf.Overall.Brier != im.Pooled.Brier.Estimate {
		t.Error("the top-level measures are not the pooled ones")
	}
}

func TestPoolImputationsRefuses(t *testing.T) {
	sets, cols := imputedFixture(t, 300, 3, 0.3)
	if _, _, err := PoolImputations(sets[:1], ImputationOptions{}); err == nil {
		t.Error("one imputation: no error")
	}
	bad := append([]ImputedData(nil), sets...)
	y := append([]float64(nil), bad[1].Y...)
	y[5] = 1 - y[5]
	bad[1].Y = y
	if _, _, err := PoolImputations(bad, ImputationOptions{}); !errors.Is(err, ErrImputations) {
		t.Errorf("another outcome in imputation 2: %v", err)
	}
	short := append([]ImputedData(nil), sets...)
	short[2] = ImputedData{Y: sets[2].Y[:100], P: sets[2].P[:100], Perf: sets[2].Perf}
	if _, _, err := PoolImputations(short, ImputationOptions{}); !errors.Is(err, ErrImputations) {
		t.Errorf("a shorter imputation: %v", err)
	}
	other := append([]GroupColumn(nil), cols...)
	codes := append([]int32(nil), cols[1].Codes...)
	codes[0] = (codes[0] + 1) % 3
	other[1].Codes = codes
	if _, err := MeasureClustersImputed(sets, other, ClusterOptions{}); !errors.Is(err, ErrImputations) {
		t.Errorf("another cluster in imputation 2: %v", err)
	}
}

// TestAverageCurves checks the common grid and the interpolation on a
// hand-made pair of curves.
func TestAverageCurves(t *testing.T) {
	a := []CurvePoint{{0.1, 0.1, 0, 0.2}, {0.2, 0.3, 0.2, 0.4}, {0.4, 0.5, 0.4, 0.6}}
	b := []CurvePoint{{0.15, 0.2, 0.1, 0.3}, {0.35, 0.4, 0.3, 0.5}}
	got := AverageCurves([][]CurvePoint{a, b})
	// The grid: 0.15 (b's start), a's 0.2, 0.35 (b's end). a at 0.15 is
	// 0.2 and at 0.35 is 0.45; b at 0.2 is 0.25 (band 0.15 to 0.35).
	want := []CurvePoint{{0.15, 0.2, 0.1, 0.3}, {0.2, (0.3 + 0.25) / 2, (0.2 + 0.15) / 2, (0.4 + 0.35) / 2}, {0.35, (0.45 + 0.4) / 2, (0.35 + 0.3) / 2, (0.55 + 0.5) / 2}}
	if len(got) != len(want) {
		t.Fatalf("%d points, want %d: %v", len(got), len(want), got)
	}
	for k := range want {
		g, w := got[k], want[k]
		if !close(g.Predicted, w.Predicted, 1e-12) || !close(g.Observed, w.Observed, 1e-12) || !close(g.Lower, w.Lower, 1e-12) || !close(g.Upper, w.Upper, 1e-12) {
			t.Errorf("point %d: %v, want %v", k, g, w)
		}
	}
	if AverageCurves([][]CurvePoint{a, {{0.5, 0.5, 0.4, 0.6}}}) != nil {
		t.Error("curves that do not overlap: want no curve")
	}
}

func close(a, b, tol float64) bool {
	return math.Abs(a-b) <= tol*math.Max(1, math.Max(math.Abs(a), math.Abs(b)))
}
