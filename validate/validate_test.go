package validate

import (
	"errors"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/metrics"
)

// drawCohort draws outcomes whose true risk is the model's risk times factor,
// so factor > 1 means the model under-predicts.
func drawCohort(n int, factor float64, seed uint64) (y, p []float64) {
	r := rand.New(rand.NewPCG(seed, 1))
	y, p = make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = 0.02 + 0.3*r.Float64()
		if r.Float64() < math.Min(1, factor*p[i]) {
			y[i] = 1
		}
	}
	return y, p
}

func TestFindingsSayWhichWay(t *testing.T) {
	for _, tt := range []struct {
		factor float64
		want   string
	}{{1.5, "under-predicts"}, {0.6, "over-predicts"}, {1, "consistent with the model predicting the right number"}} {
		y, p := drawCohort(20000, tt.factor, 3)
		perf, err := Assess(y, p, Options{Delta: AutoDelta})
		if err != nil {
			t.Fatal(err)
		}
		text := Findings(perf, nil)[1].Text
		if !strings.Contains(text, tt.want) {
			t.Errorf("factor %v: %q lacks %q", tt.factor, text, tt.want)
		}
	}
}

func TestAssessRefusesBadRisks(t *testing.T) {
	y := []float64{0, 1, 0}
	var re *RiskError
	if _, err := Assess(y, []float64{0.1, math.NaN(), 0.2}, Options{}); !errors.As(err, &re) || re.Row != 1 {
		t.Errorf("NaN: %v", err)
	}
	if _, err := Assess(y, []float64{0.1, 1.5, 0.2}, Options{}); !errors.As(err, &re) || re.Value != 1.5 {
		t.Errorf("1.5: %v", err)
	}
	if _, err := Assess([]float64{0, 0, 0}, []float64{0.1, 0.2, 0.3}, Options{}); err == nil {
		t.Error("a cohort without events should be refused")
	}
}

// TestLogitsPathMatchesRisks: auditing with the model's linear predictor
// gives the same calibration as taking logit(p) of its risks.
func TestLogitsPathMatchesRisks(t *testing.T) {
	y, p := drawCohort(5000, 1.2, 4)
	lp := make([]float64, len(p))
	for i, v := range p {
		lp[i] = math.Log(v / (1 - v))
	}
	a, err := Assess(y, p, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := AssessLogits(y, p, lp, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(a.Calibration.Slope-b.Calibration.Slope) > 1e-9 || math.Abs(a.Calibration.CITL-b.Calibration.CITL) > 1e-9 {
		t.Errorf("slope %v vs %v, CITL %v vs %v", a.Calibration.Slope, b.Calibration.Slope, a.Calibration.CITL, b.Calibration.CITL)
	}
	got, n := clampLogits([]float64{-50, 0, 50}, 1e-9)
	if n != 2 || math.Abs(got[0]+math.Log((1-1e-9)/1e-9)) > 1e-9 || got[1] != 0 {
		t.Errorf("clampLogits: %v %d", got, n)
	}
}

func TestFractionWords(t *testing.T) {
	for f, want := range map[float64]string{0.2: "about a fifth", 0.26: "about a quarter", 0.4: "about 40%", 0.5: "about a half"} {
		if got := fractionWord(f); got != want {
			t.Errorf("fractionWord(%v) = %q, want %q", f, got, want)
		}
	}
}

// TestCurveBandInOrder: where the smooth strays below 0 (a local linear
// fit does not know it models a risk), the band is clipped to [0, 1]
// with its lower end never above its upper end.
func TestCurveBandInOrder(t *testing.T) {
	c := metrics.LowessCurve{X: []float64{0.01, 0.5, 0.99}, Fit: []float64{-0.006, 0.5, 1.004}, SE: []float64{0, 0.01, 0.002}}
	for i := range c.X {
		p := curvePoint(c, i)
		if !(0 <= p.Lower && p.Lower <= p.Upper && p.Upper <= 1) {
			t.Errorf("point %d: band [%g, %g]", i, p.Lower, p.Upper)
		}
	}
}
