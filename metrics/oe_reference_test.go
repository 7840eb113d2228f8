package metrics

import (
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/internal/reftest"
)

// oeRef is testdata/reference/oe.json, written by
// testdata/reference/oe_reference.py (called from make_reference.py) and
// regenerated in CI.
type oeRef struct {
	OE struct {
		N     int        `json:"n"`
		Obs   float64    `json:"observed"`
		Exp   float64    `json:"expected"`
		Ratio float64    `json:"oe"`
		CI    [2]float64 `json:"ci"`
	} `json:"oe"`
	First60 struct {
		N     int        `json:"n"`
		Obs   float64    `json:"observed"`
		Exp   float64    `json:"expected"`
		Ratio float64    `json:"oe"`
		CI    [2]float64 `json:"ci"`
	} `json:"oe_first60"`
	Garwood     [2]float64 `json:"oe_garwood"`
	OnThreshold []struct {
		Threshold     float64    `json:"threshold"`
		On            int        `json:"on_threshold"`
		Tp            int        `json:"tp"`
		Fp            int        `json:"fp"`
		Fn            int        `json:"fn"`
		Tn            int        `json:"tn"`
		NetBenefit    float64    `json:"net_benefit"`
		SensitivityCI [2]float64 `json:"sensitivity_ci"`
	} `json:"on_threshold"`
}

func loadOERef(t *testing.T) oeRef {
	t.Helper()
	var r oeRef
	reftest.JSON(t, "oe.json", &r)
	return r
}

// TestOEIntervalMatchesScipy: O/E and its 95% interval on the Wisconsin
// risks (all 569 rows, and the first 60) against oe.json, where the SE of
// ln(O/E) is √Var(O)/O with Var(O) from scipy.stats.binom and z from
// scipy.stats.norm (the delta method; Riley et al. 2021), not the closed
// form OE uses; and the interval inside the exact Poisson (Garwood)
// interval of oe.json, since a binomial count varies less than a Poisson
// one of the same mean.
func TestOEIntervalMatchesScipy(t *testing.T) {
	r := loadOERef(t)
	_, y, p := loadAuditRef(t)
	for _, c := range []struct {
		name            string
		n               int
		obs, exp, ratio float64
		ci              [2]float64
	}{
		{"all rows", r.OE.N, r.OE.Obs, r.OE.Exp, r.OE.Ratio, r.OE.CI},
		{"first 60 rows", r.First60.N, r.First60.Obs, r.First60.Exp, r.First60.Ratio, r.First60.CI},
	} {
		oe, ci, o, e := OE(y[:c.n], p[:c.n])
		near(t, c.name+": observed vs numpy", o, c.obs, 1e-12)
		near(t, c.name+": expected vs numpy", e, c.exp, 1e-10)
		near(t, c.name+": O/E vs numpy", oe, c.ratio, 1e-10)
		near(t, c.name+": O/E CI lower vs scipy", ci[0], c.ci[0], 1e-10)
		near(t, c.name+": O/E CI upper vs scipy", ci[1], c.ci[1], 1e-10)
	}
	_, ci, _, _ := OE(y, p)
	if !(r.Garwood[0] < ci[0] && ci[1] < r.Garwood[1]) {
		t.Errorf("O/E interval %v not inside the exact Poisson interval %v", ci, r.Garwood)
	}
}

// TestRisksOnThresholdMatchSklearn: with the Wisconsin risks rounded to
// one decimal, dozens lie exactly on each threshold; the counts, net
// benefit and sensitivity interval at 0.1, 0.2, 0.3 and 0.5 against
// scikit-learn's confusion_matrix of risk ≥ t, the net benefit of
// Vickers & Elkin (2006) and statsmodels' Clopper–Pearson interval
// (oe.json), in the classification and the decision-curve paths.
func TestRisksOnThresholdMatchSklearn(t *testing.T) {
	r := loadOERef(t)
	_, y, p := loadAuditRef(t)
	pr := make([]float64, len(p))
	for i, v := range p {
		pr[i] = math.RoundToEven(v*10) / 10 // numpy.round(p, 1)
	}
	var ts []float64
	for _, w := range r.OnThreshold {
		ts = append(ts, w.Threshold)
		on := 0
		for _, v := range pr {
			if v == w.Threshold {
				on++
			}
		}
		if on != w.On || on == 0 {
			t.Fatalf("t = %g: %d risks on the threshold, numpy %d (the test needs some)", w.Threshold, on, w.On)
		}
	}
	s := SortByRisk(y, pr)
	cls := Classify(s, ts)
	nb := NetBenefits(s, ts)
	for i, w := range r.OnThreshold {
		c := cls[i]
		if c.Sensitivity.K != w.Tp || c.Sensitivity.N != w.Tp+w.Fn || c.Specificity.K != w.Tn || c.Specificity.N != w.Tn+w.Fp {
			t.Errorf("t = %g: TP %d of %d, TN %d of %d; sklearn TP %d, FN %d, TN %d, FP %d", w.Threshold,
				c.Sensitivity.K, c.Sensitivity.N, c.Specificity.K, c.Specificity.N, w.Tp, w.Fn, w.Tn, w.Fp)
		}
		near(t, "net benefit on the threshold vs transcription", nb[i].Model, w.NetBenefit, 1e-10)
		near(t, "sensitivity CI lower vs statsmodels", c.Sensitivity.CI[0], w.SensitivityCI[0], 1e-9)
		near(t, "sensitivity CI upper vs statsmodels", c.Sensitivity.CI[1], w.SensitivityCI[1], 1e-9)
	}
}
