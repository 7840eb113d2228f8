package model

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
)

// unitData is a seeded cohort of a scaled, a log, a spline, a
// fractional-polynomial and a categorical predictor.
func unitData(n int) []byte {
	r := rand.New(rand.NewPCG(7, 11))
	var b strings.Builder
	b.WriteString("x,w,s,f,c,y\n")
	for range n {
		x, w, s, f := 40+20*r.Float64(), 10+50*r.Float64(), 20+10*r.Float64(), 1+4*r.Float64()
		c := []string{"a", "b"}[r.IntN(2)]
		lp := -1 + 0.05*(x-50) + 0.4*math.Log(w) - 0.02*s + 0.1*f
		y := 0
		if r.Float64() < 1/(1+math.Exp(-lp)) {
			y = 1
		}
		fmt.Fprintf(&b, "%.4f,%.4f,%.4f,%.4f,%s,%d\n", x, w, s, f, c, y)
	}
	return []byte(b.String())
}

func unitFit(t *testing.T, predictors string, data []byte) *Fitted {
	t.Helper()
	spec, err := ParseSpec("recipe.yaml", []byte("outcome: {column: y, event: 1}\npredictors:\n"+predictors))
	if err != nil {
		t.Fatal(err)
	}
	fr, err := cohort.Parse("cohort.csv", data, spec.Columns(true), cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	d, m, err := Build(spec, fr, Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	f, err := Fit(d, m, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// TestUnits: each term's odds-ratio unit as TermStat.Unit states it,
// and what "per 10 units" means: the coefficient of (x − 50)/10 is ten
// times that of x − 50, the same maximum-likelihood fit in another
// parametrisation (invariance of the MLE; common practice).
func TestUnits(t *testing.T) {
	data := unitData(2000)
	f := unitFit(t, `  - {column: x, center: 50, scale: 10}
  - {column: w, log: true, scale: 60}
  - {column: s, spline: {knots: 3}}
  - {column: f, powers: [0.5, 2]}
  - {column: c, categorical: true}
`, data)
	want := map[string]string{
		"x":         "per 10 units of x",
		"log(w)":    "per e-fold (×2.718) increase of w; per doubling: the odds ratio to the power 0.693 (ln 2)",
		"s":         "terms of one restricted cubic spline in s; none alone is an odds ratio per unit of s: the effect of s is the curve they make together",
		"f^0.5":     "terms of one fractional polynomial in f; none alone is an odds ratio per unit of f: the effect of f is the curve they make together",
		"intercept": "",
		"c=b":       "",
	}
	want[SplineTermLabel("s", 1)] = want["s"]
	want["f^2"] = want["f^0.5"]
	got := map[string]string{}
	for _, term := range f.Stats.Terms {
		got[term.Term] = term.Unit
	}
	for term, w := range want {
		if g, ok := got[term]; !ok || g != w {
			t.Errorf("unit of %s: got %q (present %v), want %q", term, g, ok, w)
		}
	}
	if len(got) != len(want) {
		t.Errorf("terms %v, want those of %v", got, want)
	}

	per1 := unitFit(t, "  - {column: x, center: 50}\n", data)
	per10 := unitFit(t, "  - {column: x, center: 50, scale: 10}\n", data)
	b1, b10 := per1.Stats.Terms[1].Coef, per10.Stats.Terms[1].Coef
	if math.Abs(b10-10*b1) > 1e-8*math.Abs(b10) {
		t.Errorf("coefficient per 10 units %.12g, 10 × per unit %.12g", b10, 10*b1)
	}
	if per1.Stats.Terms[1].Unit != "" {
		t.Errorf("a centred, unscaled term has unit %q, want none", per1.Stats.Terms[1].Unit)
	}
}
