package metrics

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/riskaudit/riskaudit/internal/reftest"
)

// auditRef is testdata/reference/audit.json, written by
// testdata/reference/make_reference.py with scikit-learn (roc_auc_score,
// brier_score_loss), statsmodels (GLM binomial with offset, lowess,
// proportion_confint) and direct transcriptions of DeLong et al. (1988)
// and Vickers & Elkin (2006); regenerated and compared in CI.
type auditRef struct {
	WDBC struct {
		AUCSklearn     float64      `json:"auc_sklearn"`
		AUCQuadratic   float64      `json:"auc_delong_quadratic"`
		AUCSEQuadratic float64      `json:"auc_se_delong_quadratic"`
		CITL           float64      `json:"citl"`
		CITLSE         float64      `json:"citl_se"`
		Slope          float64      `json:"slope"`
		SlopeSE        float64      `json:"slope_se"`
		SlopeIntercept float64      `json:"slope_intercept"`
		Brier          float64      `json:"brier_sklearn"`
		LowessExact    refLowess    `json:"lowess_exact"`
		LowessDelta    refLowess    `json:"lowess_delta"`
		NetBenefit     []NetBenefit `json:"net_benefit"`
		Classification []struct {
			Threshold                          float64 `json:"threshold"`
			Sensitivity, Specificity, PPV, NPV struct {
				Value float64    `json:"value"`
				CI    [2]float64 `json:"ci"`
			}
		} `json:"classification"`
	} `json:"wdbc"`
	Rounded struct {
		AUCSklearn     float64 `json:"auc_sklearn"`
		AUCQuadratic   float64 `json:"auc_delong_quadratic"`
		AUCSEQuadratic float64 `json:"auc_se_delong_quadratic"`
	} `json:"wdbc_rounded"`
}

type refLowess struct {
	Delta float64   `json:"delta"`
	X     []float64 `json:"x"`
	Fit   []float64 `json:"fit"`
	ICI   float64   `json:"ici"`
	E50   float64   `json:"e50"`
	E90   float64   `json:"e90"`
	Emax  float64   `json:"emax"`
	// Clipped counts the points where statsmodels' fit leaves [0, 1].
	Clipped int `json:"clipped_points"`
}

func loadAuditRef(t *testing.T) (auditRef, []float64, []float64) {
	t.Helper()
	var r auditRef
	reftest.JSON(t, "audit.json", &r)
	y, cols := reftest.Predictions(t, "risk")
	return r, y, cols["risk"]
}

func near(t *testing.T, what string, got, want, rel float64) {
	t.Helper()
	if math.Abs(got-want) > rel*math.Max(math.Abs(want), 1e-3) {
		t.Errorf("%s = %.12g, reference %.12g", what, got, want)
	}
}

func TestAuditMeasuresMatchReferences(t *testing.T) {
	ref, y, p := loadAuditRef(t)
	w := ref.WDBC
	auc, _ := AUC(SortByRisk(y, p))
	near(t, "AUC vs scikit-learn roc_auc_score", auc.AUC, w.AUCSklearn, 1e-9)
	near(t, "DeLong SE vs the O(n²) formulas", auc.SE, w.AUCSEQuadratic, 1e-9)
	lp, _ := ClampedLogits(p, 1e-10)
	citl, err := CalibrationInTheLarge(y, lp)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "CITL vs statsmodels GLM with offset", citl.Value, w.CITL, 1e-6)
	near(t, "CITL SE", citl.SE, w.CITLSE, 1e-6)
	slope, icpt, err := CalibrationSlope(y, lp)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "slope vs statsmodels GLM", slope.Value, w.Slope, 1e-6)
	near(t, "slope SE", slope.SE, w.SlopeSE, 1e-6)
	near(t, "slope model intercept", icpt.Value, w.SlopeIntercept, 1e-6)
	brier, _ := Brier(y, p)
	near(t, "Brier vs scikit-learn brier_score_loss", brier, w.Brier, 1e-9)
	for i, nb := range NetBenefits(SortByRisk(y, p), []float64{0.05, 0.1, 0.2, 0.3, 0.5}) {
		near(t, "net benefit", nb.Model, w.NetBenefit[i].Model, 1e-9)
		near(t, "treat all", nb.TreatAll, w.NetBenefit[i].TreatAll, 1e-9)
	}
	for i, c := range Classify(SortByRisk(y, p), []float64{0.1, 0.5}) {
		rc := w.Classification[i]
		for _, pair := range []struct {
			name string
			got  Proportion
			want struct {
				Value float64    `json:"value"`
				CI    [2]float64 `json:"ci"`
			}
		}{{"sensitivity", c.Sensitivity, rc.Sensitivity}, {"specificity", c.Specificity, rc.Specificity},
			{"PPV", c.PPV, rc.PPV}, {"NPV", c.NPV, rc.NPV}} {
			near(t, pair.name, pair.got.Value, pair.want.Value, 1e-12)
			// Clopper–Pearson against statsmodels proportion_confint(method="beta").
			near(t, pair.name+" lower", pair.got.CI[0], pair.want.CI[0], 1e-8)
			near(t, pair.name+" upper", pair.got.CI[1], pair.want.CI[1], 1e-8)
		}
	}
}

// TestLowessMatchesStatsmodels compares the curve point by point with
// statsmodels' lowess(frac=0.75, it=0), exact and with δ = 0.02, clipped
// to [0, 1] (numpy.clip), and ICI, E50, E90 and Emax taken from it.
func TestLowessMatchesStatsmodels(t *testing.T) {
	ref, y, p := loadAuditRef(t)
	for _, rl := range []refLowess{ref.WDBC.LowessExact, ref.WDBC.LowessDelta} {
		cc := FlexibleCalibration(SortByRisk(y, p), LowessOptions{Span: 0.75, Delta: rl.Delta})
		if len(cc.Curve.Fit) != len(rl.Fit) {
			t.Fatalf("%d points, reference %d", len(cc.Curve.Fit), len(rl.Fit))
		}
		worst := 0.0
		for i := range rl.Fit {
			if cc.Curve.X[i] != rl.X[i] && math.Abs(cc.Curve.X[i]-rl.X[i]) > 1e-11 {
				t.Fatalf("x[%d] = %v, reference %v", i, cc.Curve.X[i], rl.X[i])
			}
			// The curve is statsmodels' local linear fit clipped to [0, 1].
			want := math.Min(1, math.Max(0, rl.Fit[i]))
			worst = math.Max(worst, math.Abs(cc.Curve.Fit[i]-want))
		}
		if worst > 1e-8 {
			t.Errorf("δ=%g: largest difference from statsmodels %g", rl.Delta, worst)
		}
		if cc.Clipped != rl.Clipped || rl.Clipped == 0 {
			t.Errorf("δ=%g: %d points clipped, statsmodels' fit leaves [0, 1] at %d (the check needs some)", rl.Delta, cc.Clipped, rl.Clipped)
		}
		near(t, "ICI", cc.ICI, rl.ICI, 1e-6)
		near(t, "E50", cc.E50, rl.E50, 1e-6)
		near(t, "E90", cc.E90, rl.E90, 1e-6)
		near(t, "Emax", cc.Emax, rl.Emax, 1e-6)
		if rl.Delta > 0 && cc.Curve.FitPoints >= len(p)/2 {
			t.Errorf("δ=%g ran %d local fits for %d points", rl.Delta, cc.Curve.FitPoints, len(p))
		}
	}
}

func TestDeLongWithTiesMatchesQuadratic(t *testing.T) {
	ref, y, p := loadAuditRef(t)
	pr := make([]float64, len(p))
	for i, v := range p {
		pr[i] = math.Round(v*10) / 10
	}
	auc, _ := AUC(SortByRisk(y, pr))
	near(t, "AUC with ties vs scikit-learn", auc.AUC, ref.Rounded.AUCSklearn, 1e-9)
	near(t, "DeLong SE with ties vs the O(n²) formulas", auc.SE, ref.Rounded.AUCSEQuadratic, 1e-9)
}

// TestHanleyMcNeilRatingExample uses the five-category rating data of
// Hanley & McNeil (1982, Radiology 143:29–36, Table 1; counts recalled
// from memory): 58 normal and 51 abnormal cases rated 1 (definitely
// normal) to 5 (definitely abnormal). The paper gives the area as 0.893.
func TestHanleyMcNeilRatingExample(t *testing.T) {
	normal := []int{33, 6, 6, 11, 2}
	abnormal := []int{3, 2, 2, 11, 33}
	var y, p []float64
	for r := 0; r < 5; r++ {
		for k := 0; k < normal[r]; k++ {
			y, p = append(y, 0), append(p, float64(r+1))
		}
		for k := 0; k < abnormal[r]; k++ {
			y, p = append(y, 1), append(p, float64(r+1))
		}
	}
	auc, _ := AUC(SortByRisk(y, p))
	if math.Abs(auc.AUC-0.893) > 0.0005 {
		t.Errorf("AUC %.4f, published 0.893", auc.AUC)
	}
}

// quadraticDeLong is the direct O(m·n) transcription of DeLong et al.
// (1988), for property tests.
func quadraticDeLong(y, p []float64) (float64, float64) {
	var xs, zs []float64
	for i, v := range p {
		if y[i] == 1 {
			xs = append(xs, v)
		} else {
			zs = append(zs, v)
		}
	}
	psi := func(a, b float64) float64 {
		switch {
		case a > b:
			return 1
		case a == b:
			return 0.5
		}
		return 0
	}
	v10 := make([]float64, len(xs))
	v01 := make([]float64, len(zs))
	for i, a := range xs {
		for j, b := range zs {
			s := psi(a, b)
			v10[i] += s / float64(len(zs))
			v01[j] += s / float64(len(xs))
		}
	}
	// S10 and S01 of DeLong et al. (1988), each a sample variance with
	// divisor m − 1 (n − 1), written out here rather than taken from the
	// package's own helpers, so that the check does not share their code.
	avg := func(v []float64) float64 {
		s := 0.0
		for _, x := range v {
			s += x
		}
		return s / float64(len(v))
	}
	s2 := func(v []float64) float64 {
		m, s := avg(v), 0.0
		for _, x := range v {
			s += (x - m) * (x - m)
		}
		return s / float64(len(v)-1)
	}
	return avg(v10), math.Sqrt(s2(v10)/float64(len(xs)) + s2(v01)/float64(len(zs)))
}

func TestFastDeLongEqualsDefinition(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	for trial := 0; trial < 50; trial++ {
		n := 20 + r.IntN(300)
		levels := 2 + r.IntN(10) // many ties
		y, p := make([]float64, n), make([]float64, n)
		for i := range y {
			p[i] = float64(r.IntN(levels)) / float64(levels)
			if r.Float64() < 0.3+0.4*p[i] {
				y[i] = 1
			}
		}
		got, _ := AUC(SortByRisk(y, p))
		auc, se := quadraticDeLong(y, p)
		if got.Events < 2 || got.NonEvents < 2 {
			continue
		}
		if math.Abs(got.AUC-auc) > 1e-12 || math.Abs(got.SE-se) > 1e-12 {
			t.Fatalf("trial %d: fast %v ± %v, definition %v ± %v", trial, got.AUC, got.SE, auc, se)
		}
	}
}

func TestAUCInvariantToMonotoneTransform(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	n := 2000
	y, p, q := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range y {
		p[i] = math.Round(r.Float64()*50) / 50
		q[i] = math.Exp(3*p[i]) - 7 // strictly increasing
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	a, _ := AUC(SortByRisk(y, p))
	b, _ := AUC(SortByRisk(y, q))
	if a.AUC != b.AUC || math.Abs(a.SE-b.SE) > 1e-15 {
		t.Errorf("%v vs %v", a, b)
	}
}

// TestDeLongCoverage simulates cohorts from a binormal model whose true
// AUC is Φ(μ/√2) and counts how often the 95% interval covers it.
func TestDeLongCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("slow simulation")
	}
	r := rand.New(rand.NewPCG(7, 8))
	mu := 1.0
	truth := 0.5 * math.Erfc(-mu/2) // Φ(μ/√2)
	covered, trials := 0, 2000
	for k := 0; k < trials; k++ {
		n := 300
		y, p := make([]float64, n), make([]float64, n)
		for i := range y {
			if i%3 == 0 {
				y[i], p[i] = 1, r.NormFloat64()+mu
			} else {
				p[i] = r.NormFloat64()
			}
		}
		a, _ := AUC(SortByRisk(y, p))
		if a.CI[0] <= truth && truth <= a.CI[1] {
			covered++
		}
	}
	rate := float64(covered) / float64(trials)
	// Binomial sd at 0.95 over 2000 trials is about 0.005.
	if rate < 0.93 || rate > 0.97 {
		t.Errorf("coverage %.3f, want about 0.95", rate)
	}
}

func TestOEInterval(t *testing.T) {
	// 20 events among 100 rows with expected 25: O/E = 0.8 and the
	// interval exp(ln 0.8 ± 1.96 √((1 − 0.2)/20)) (the formula as stated
	// in the audit issue; common practice).
	y := make([]float64, 100)
	p := make([]float64, 100)
	for i := range y {
		p[i] = 0.25
		if i < 20 {
			y[i] = 1
		}
	}
	oe, ci, o, e := OE(y, p)
	h := 1.959963984540054 * math.Sqrt(0.8/20)
	if math.Abs(oe-0.8) > 1e-12 || o != 20 || math.Abs(e-25) > 1e-12 ||
		math.Abs(ci[0]-0.8*math.Exp(-h)) > 1e-12 || math.Abs(ci[1]-0.8*math.Exp(h)) > 1e-12 {
		t.Errorf("O/E %v %v", oe, ci)
	}
}
