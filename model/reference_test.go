package model

import (
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/reftest"
	"github.com/riskaudit/riskaudit/metrics"
)

// reference is testdata/reference/fits.json, written by
// testdata/reference/make_reference.py from statsmodels' Logit and
// scipy.stats (regenerated and compared in CI).
type reference struct {
	Fits   map[string]refFit `json:"fits"`
	Nested struct {
		LRChi2  float64 `json:"lr_chi2"`
		DF      int     `json:"df"`
		P       float64 `json:"p"`
		AICDiff float64 `json:"aic_difference"`
	} `json:"nested_spector"`
	Firth  refFirth `json:"firth_separated"`
	Firth6 refFirth `json:"firth_separated6"`
	Firth1 refFirth `json:"firth_separated1"`
}

type refFirth struct {
	Terms []struct {
		Term    string     `json:"term"`
		Coef    float64    `json:"coef"`
		SE      float64    `json:"se"`
		PLRChi2 float64    `json:"plr_chi2"`
		PLRP    float64    `json:"plr_p"`
		Profile [2]float64 `json:"profile_ci"`
		// Multimodal says, per end, whether the script found another
		// local maximum above the threshold with the coefficient held
		// there.
		Multimodal [2]bool `json:"profile_multimodal"`
	} `json:"terms"`
	PenalizedLogLik float64 `json:"penalized_loglik"`
}

type refFit struct {
	FitStats
	HLExternal metrics.HosmerLemeshowTest `json:"hosmer_lemeshow_external"`
}

func loadReference(t *testing.T) reference {
	t.Helper()
	var r reference
	reftest.JSON(t, "fits.json", &r)
	return r
}

// near compares to 1e-6 relative (1e-9 absolute near zero), the
// tolerance the reference values are held to.
func near(t *testing.T, what string, got, want float64) {
	t.Helper()
	if math.Abs(got-want) > 1e-6*math.Max(math.Abs(want), 1e-3) {
		t.Errorf("%s = %.12g, reference %.12g", what, got, want)
	}
}

var refData = map[string]string{
	"spector": "spector.csv", "spector_psi_categorical": "spector.csv", "spector_gpa": "spector.csv",
	"wdbc_linear": "wdbc.csv", "wdbc_transforms": "wdbc.csv",
}

func fitRecipe(t *testing.T, name string) *Fitted {
	t.Helper()
	spec, err := LoadSpec(filepath.Join("../testdata/reference/recipes", name+".yaml"))
	if err != nil {
		t.Fatal(err)
	}
	_, d, m, err := Load(spec, filepath.Join("../testdata/open", refData[name]), cohort.Options{}, Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	f, err := Fit(d, m, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// TestFitsMatchStatsmodels compares every fit statistic with statsmodels'
// Logit on the Spector & Mazzeo (1980) grade data and the Wisconsin
// diagnostic breast-cancer data, as carried by Debian's python3-statsmodels
// and python3-sklearn.
func TestFitsMatchStatsmodels(t *testing.T) {
	ref := loadReference(t)
	for name := range refData {
		t.Run(name, func(t *testing.T) {
			want := ref.Fits[name]
			f := fitRecipe(t, name)
			got := f.Stats
			if got.N != want.N || got.Events != want.Events {
				t.Fatalf("n=%d events=%d, reference %d %d", got.N, got.Events, want.N, want.Events)
			}
			if len(got.Terms) != len(want.Terms) {
				t.Fatalf("%d terms, reference %d", len(got.Terms), len(want.Terms))
			}
			for j, w := range want.Terms {
				g := got.Terms[j]
				if g.Term != w.Term {
					t.Errorf("term %d is %q, reference %q", j, g.Term, w.Term)
				}
				near(t, w.Term+" coef", g.Coef, w.Coef)
				near(t, w.Term+" se", g.SE, w.SE)
				near(t, w.Term+" z", g.Z, w.Z)
				near(t, w.Term+" p", g.P, w.P)
				near(t, w.Term+" odds ratio", g.OddsRatio, w.OddsRatio)
				near(t, w.Term+" OR lower", g.ORCI[0], w.ORCI[0])
				near(t, w.Term+" OR upper", g.ORCI[1], w.ORCI[1])
			}
			near(t, "neg2ll", got.Neg2LL, want.Neg2LL)
			near(t, "null_neg2ll", got.NullNeg2LL, want.NullNeg2LL)
			near(t, "lr_chi2", got.LRChi2, want.LRChi2)
			near(t, "lr_p", got.LRP, want.LRP)
			if got.LRDF != want.LRDF {
				t.Errorf("lr_df %d, reference %d", got.LRDF, want.LRDF)
			}
			near(t, "aic", got.AIC, want.AIC)
			near(t, "bic", got.BIC, want.BIC)
			near(t, "nagelkerke", got.NagelkerkeR2, want.NagelkerkeR2)
			near(t, "HL statistic", got.HL.Statistic, want.HL.Statistic)
			near(t, "HL p", got.HL.P, want.HL.P)
			if got.HL.DF != want.HL.DF || got.HL.Groups != want.HL.Groups {
				t.Errorf("HL df %d groups %d, reference %d %d", got.HL.DF, got.HL.Groups, want.HL.DF, want.HL.Groups)
			}
			ext := metrics.HosmerLemeshow(metrics.SortByRisk(f.Matrix.Y, Predict(f.Matrix, f.Result.Coef, nil)), 10, false)
			near(t, "HL external p", ext.P, want.HLExternal.P)
			if ext.DF != want.HLExternal.DF {
				t.Errorf("HL external df %d, reference %d", ext.DF, want.HLExternal.DF)
			}
		})
	}
}

// TestSpectorPublished checks the Spector & Mazzeo logit estimates as
// printed in Greene, Econometric Analysis (table of the grade example;
// values recalled from memory to three decimals: −13.021, 2.826, 0.095,
// 2.379).
func TestSpectorPublished(t *testing.T) {
	f := fitRecipe(t, "spector")
	for j, want := range []float64{-13.021, 2.826, 0.095, 2.379} {
		if got := f.Result.Coef[j]; math.Abs(got-want) > 0.0006 {
			t.Errorf("%s = %.4f, published %.3f", f.Matrix.Terms[j], got, want)
		}
	}
}

func TestNestedMatchesStatsmodels(t *testing.T) {
	ref := loadReference(t)
	full, red := fitRecipe(t, "spector"), fitRecipe(t, "spector_gpa")
	lr, err := CompareNested(full, red)
	if err != nil {
		t.Fatal(err)
	}
	near(t, "LR chi2", lr.LRChi2, ref.Nested.LRChi2)
	near(t, "LR p", lr.P, ref.Nested.P)
	near(t, "AIC difference", lr.AICDifference, ref.Nested.AICDiff)
	if lr.DF != ref.Nested.DF {
		t.Errorf("df %d, reference %d", lr.DF, ref.Nested.DF)
	}
	if _, err := CompareNested(red, full); err == nil {
		t.Error("a larger model cannot be nested in a smaller one")
	}
}

// TestFirthMatchesDirectMaximisation compares Firth fits with
// testdata/reference/fits.json, where make_reference.py maximises the
// penalised likelihood ℓ + ½ log det X'WX directly with scipy's BFGS
// (polished by modified-score steps), refits with each coefficient held
// at 0 for the penalised likelihood-ratio tests (scipy.stats.chi2 for p)
// and finds the profile interval ends with scipy's brentq: on twelve
// invented rows with quasi-complete separation (ward C has no events),
// sixty invented rows completely separated by three of six terms
// (issue 11: "did not converge in 50 iterations") and forty completely
// separated by one term (issue 11: a NaN interval end and JSON that
// could not be written). Both follow the branch of constrained maxima
// through the estimate, riskaudit by refits on a straight-line
// extrapolation with Newton steps, the script by small steps climbing
// with modified-score steps from the nearest maximum found, so they
// agree where the penalised likelihood has several local maxima.
func TestFirthMatchesDirectMaximisation(t *testing.T) {
	r := loadReference(t)
	for _, tc := range []struct {
		recipe, data string
		ref          refFirth
	}{
		{"separated_firth", "separated.csv", r.Firth},
		{"separated6_firth", "separated6.csv", r.Firth6},
		{"separated1_firth", "separated1.csv", r.Firth1},
	} {
		t.Run(tc.recipe, func(t *testing.T) {
			ref := tc.ref
			if len(ref.Terms) == 0 {
				t.Fatal("no reference terms")
			}
			spec, err := LoadSpec("../testdata/reference/recipes/" + tc.recipe + ".yaml")
			if err != nil {
				t.Fatal(err)
			}
			_, d, m, err := Load(spec, "../testdata/reference/"+tc.data, cohort.Options{}, Options{Outcome: true})
			if err != nil {
				t.Fatal(err)
			}
			if _, err := Fit(d, m, FitOptions{}); err == nil {
				t.Fatal("maximum likelihood should report separation")
			}
			f, err := Fit(d, m, FitOptions{Firth: true})
			if err != nil {
				t.Fatal(err)
			}
			for j, w := range ref.Terms {
				if f.Matrix.Terms[j] != w.Term {
					t.Fatalf("term %d is %q, reference %q", j, f.Matrix.Terms[j], w.Term)
				}
				if math.Abs(f.Result.Coef[j]-w.Coef) > 1e-8 || math.Abs(f.Result.SE[j]-w.SE) > 1e-8 {
					t.Errorf("%s: %.9f ± %.9f, reference %.9f ± %.9f", w.Term, f.Result.Coef[j], f.Result.SE[j], w.Coef, w.SE)
				}
			}
			near(t, "penalised log-likelihood", f.Result.PenalizedLogLik, ref.PenalizedLogLik)
			if f.Stats.PMethod != PPenalisedLR {
				t.Errorf("p-values by %q", f.Stats.PMethod)
			}
			for j, w := range ref.Terms {
				got := f.Stats.Terms[j]
				if math.Abs(got.PLRChi2-w.PLRChi2) > 1e-7 || math.Abs(got.P-w.PLRP) > 1e-7 {
					t.Errorf("%s: penalised LR χ² %.9f p %.9f, reference %.9f p %.9f", w.Term, got.PLRChi2, got.P, w.PLRChi2, w.PLRP)
				}
				for k := range w.Profile {
					if b := got.CoefCI[k]; math.Abs(b-w.Profile[k]) > 1e-7 {
						t.Errorf("%s: profile interval end %d %.9f, reference %.9f", w.Term, k, b, w.Profile[k])
					}
					if b := math.Log(got.ORCI[k]); math.Abs(b-w.Profile[k]) > 1e-7 {
						t.Errorf("%s: odds ratio interval end %d exp(%.9f), reference exp(%.9f)", w.Term, k, b, w.Profile[k])
					}
				}
				// Every end was found; the only notes allowed say that
				// another local maximum lies above the threshold there,
				// which each implementation finds from its own starts.
				for _, n := range got.Notes {
					if !strings.Contains(n, "another local maximum") {
						t.Errorf("%s: note %q on a fit where everything was computed", w.Term, n)
					} else {
						t.Logf("%s: %s (reference: another maximum at the ends %v)", w.Term, n, w.Multimodal)
					}
				}
			}
		})
	}
}
