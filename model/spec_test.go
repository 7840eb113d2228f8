package model

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
)

func TestSpecErrors(t *testing.T) {
	tests := []struct{ name, yaml, want string }{
		{"empty", "", "s.yaml: file is empty"},
		{"not yaml", "outcome: [", "s.yaml: not valid YAML"},
		{"not a mapping", "- a\n- b\n", "s.yaml: line 1: the spec must be a mapping"},
		{"unknown top key", "name: x\noutcom:\n  column: y\n", `s.yaml: line 2: unknown key "outcom" in the spec (did you mean "outcome"?)`},
		{"misspelt predictor key", "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n    cofe: 1\n", `s.yaml: line 4: unknown key "cofe" in a predictor (did you mean "coef"?)`},
		{"no outcome", "predictors: []\n", "s.yaml: line 1: the spec has no outcome"},
		{"no event", "outcome: {column: y}\npredictors: []\n", "s.yaml: line 1: outcome needs an event value"},
		{"no predictors", "outcome: {column: y, event: 1}\n", "the spec has no predictors"},
		{"outcome as predictor", "outcome: {column: y, event: 1}\npredictors:\n  - column: y\n", `s.yaml: line 3: the outcome column "y" cannot be a predictor`},
		{"coef without intercept", "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n    coef: 2\n", "line 3: coefficients are given but the spec has no intercept"},
		{"bad number", "outcome: {column: y, event: 1}\nintercept: abc\npredictors: []\n", `line 2: intercept must be a finite number, not "abc"`},
		{"duplicate key", "outcome: {column: y, event: 1}\npredictors: []\npredictors: []\n", `line 3: key "predictors" appears twice`},
		{"levels on numeric", "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n    reference: x\n", "is not categorical"},
		{"log and spline", "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n    log: true\n    spline: {knots: 3}\n", "choose one of log, powers and spline"},
		{"knots not increasing", "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n    spline: {knots: [1, 3, 2]}\n", "line 4: knots must increase strictly"},
		{"product of unknown", "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n  - product: [a, b]\n", `product names "b", which is not a predictor`},
		{"frozen needs reference", "outcome: {column: y, event: 1}\nintercept: 0\npredictors:\n  - column: g\n    categorical: true\n    levels: {b: 1}\n", "needs its reference level"},
		{"mixed kinds", "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n  - column: a\n    categorical: true\n", `column "a" is both categorical and numeric`},
		{"negative scale", "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n    scale: -2\n", "line 4: scale must be positive"},
		{"provenance typo", "outcome: {column: y, event: 1}\npredictors: []\nprovenance: {rows: 3}\n", `unknown key "rows" in provenance`},
		{"negative count", "outcome: {column: y, event: 1}\npredictors: []\nprovenance: {rows_used: -3}\n", "line 3: rows_used must be a whole number"},
		{"purpose typo", "purpose:\n  setting: ward\n  horizon: 30 days\noutcome: {column: y, event: 1}\npredictors: []\n", `line 3: unknown key "horizon" in purpose`},
		{"purpose empty", "purpose:\n  setting:\noutcome: {column: y, event: 1}\npredictors: []\n", "line 2: purpose.setting is empty"},
		{"purpose list", "purpose:\n  setting: [a, b]\noutcome: {column: y, event: 1}\npredictors: []\n", "line 2: purpose.setting must be a single value"},
		{"purpose not a mapping", "purpose: elective surgery\noutcome: {column: y, event: 1}\npredictors: []\n", "line 1: purpose must be a mapping"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := ParseSpec("s.yaml", []byte(tt.yaml))
			var se *SpecError
			if !errors.As(err, &se) {
				t.Fatalf("want a SpecError, got %v", err)
			}
			if !strings.Contains(err.Error(), tt.want) {
				t.Errorf("got  %s\nwant %s", err, tt.want)
			}
		})
	}
}

func frame(t *testing.T, csv string, spec *Spec, outcome bool) *cohort.Frame {
	t.Helper()
	fr, err := cohort.Parse("c.csv", []byte(csv), spec.Columns(outcome), cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return fr
}

func mustSpec(t *testing.T, y string) *Spec {
	t.Helper()
	s, err := ParseSpec("s.yaml", []byte(y))
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func TestBuildErrors(t *testing.T) {
	recipe := "outcome: {column: y, event: yes, non_event: no}\npredictors:\n  - column: a\n    log: true\n  - column: g\n    categorical: true\n"
	tests := []struct{ name, spec, csv, want string }{
		{"bad outcome", recipe, "y,a,g\nyes,1,p\nno,2,q\nYes,3,p\n", `c.csv: line 4, column "y": value "Yes": neither the event "yes" nor the non-event "no"; values seen: "yes", "no", "Yes" (the model names its outcome's codes: recode the column to them, or write the model's risks with 'riskaudit score' and audit that column with --predicted, --outcome and --event)`},
		{"no events", "outcome: {column: y, event: 1}\npredictors: []\n", "y\n0\n0\n", `c.csv: column "y": no events (no row equals the event value "1"); values seen: "0"`},
		{"no non-events", "outcome: {column: y, event: 1}\npredictors: []\n", "y\n1\n1.0\n", `no non-events`},
		{"log of zero", recipe, "y,a,g\nyes,1,p\nno,0,q\n", `c.csv: line 3, column "a": value "0": log needs positive values`},
		{"unknown level", "outcome: {column: y, event: 1}\nintercept: 0\npredictors:\n  - column: g\n    categorical: true\n    reference: a\n    levels: {b: 1}\n", "y,g\n1,a\n0,b\n0,c\n", `c.csv: line 4, column "g": value "c": a level the model does not know (it knows a, b)`},
		{"reference absent", "outcome: {column: y, event: 1}\npredictors:\n  - column: g\n    categorical: true\n    reference: z\n", "y,g\n1,a\n0,b\n", `the reference level "z" does not occur in the data`},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			s := mustSpec(t, tt.spec)
			_, _, err := Build(s, frame(t, tt.csv, s, true), Options{Outcome: true})
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Errorf("got  %v\nwant %s", err, tt.want)
			}
		})
	}
}

// TestCohortCodesHint: for an audited cohort (Options.CohortCodes) the
// outcome errors hint at the audit's outcome flags first; for other data
// (a fit's) they do not, since fit takes no such flags.
func TestCohortCodesHint(t *testing.T) {
	const flags = "say how with --outcome, --event and --non-event beside --model"
	for _, tc := range []struct {
		name, spec, csv string
		cohort          bool
		want            string
	}{
		{"a third value in a cohort", "outcome: {column: y, event: yes, non_event: no}\npredictors: []\n", "y\nyes\nno\n1\n", true,
			`values seen: "yes", "no", "1" (the model names its outcome's codes: if this cohort codes the outcome otherwise, ` + flags + `; or recode the column to the model's codes, or write the model's risks with 'riskaudit score' and audit that column with --predicted, --outcome and --event)`},
		{"no events among two values in a cohort", "outcome: {column: y, event: yes}\npredictors: []\n", "y\n1\n0\n", true,
			`no events (no row equals the event value "yes"); values seen: "1", "0" (if this cohort codes the event otherwise, give its value with --event beside --model)`},
		{"no events, one value: nothing to recode", "outcome: {column: y, event: yes}\npredictors: []\n", "y\n0\n0\n", true,
			`no events (no row equals the event value "yes"); values seen: "0"`},
		{"no events in a fit's data: no flags hinted", "outcome: {column: y, event: yes}\npredictors: []\n", "y\n1\n0\n", false,
			`no events (no row equals the event value "yes"); values seen: "1", "0"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s := mustSpec(t, tc.spec)
			_, _, err := Build(s, frame(t, tc.csv, s, true), Options{Outcome: true, CohortCodes: tc.cohort})
			if err == nil || !strings.HasSuffix(err.Error(), tc.want) {
				t.Errorf("got  %v\nwant …%s", err, tc.want)
			}
		})
	}
}

func TestMissingPolicy(t *testing.T) {
	s := mustSpec(t, "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n  - column: b\n")
	csv := "y,a,b\n1,1,NA\n0,,\n1,3,4\n0,4,5\n1,.,6\n"
	_, m, err := Build(s, frame(t, csv, s, true), Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	if m.N != 2 || m.Excluded != 3 || m.Total != 5 {
		t.Fatalf("N=%d excluded=%d total=%d", m.N, m.Excluded, m.Total)
	}
	want := []Exclusion{{"a", 2}, {"b", 2}}
	for i, w := range want {
		if m.ByColumn[i] != w {
			t.Errorf("exclusions %v, want %v", m.ByColumn, want)
		}
	}
	_, _, err = Build(s, frame(t, csv, s, true), Options{Outcome: true, FailOnMissing: true})
	if err == nil || err.Error() != `c.csv: line 2, column "b": missing value (the missing-value policy is fail)` {
		t.Errorf("got %v", err)
	}
}

// TestFreezeRoundTrip fits a recipe with every kind of term, writes the
// frozen model, reads it back and checks that it scores the same rows to
// the same linear predictor.
func TestFreezeRoundTrip(t *testing.T) {
	f := fitRecipe(t, "wdbc_transforms")
	frozen := f.Freeze(Provenance{Method: "maximum likelihood", DataFile: "wdbc.csv", RowsUsed: f.Matrix.N})
	text, err := frozen.MarshalYAML()
	if err != nil {
		t.Fatal(err)
	}
	back, err := ParseSpec("frozen.yaml", text)
	if err != nil {
		t.Fatalf("%v\n%s", err, text)
	}
	if !back.Frozen() {
		t.Fatal("the frozen spec lost its intercept")
	}
	_, d, m, err := Load(back, "../testdata/open/wdbc.csv", cohort.Options{}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	beta, err := d.Coefficients()
	if err != nil {
		t.Fatal(err)
	}
	lp := LinearPredictors(m, beta)
	want := LinearPredictors(f.Matrix, f.Result.Coef)
	for i := range lp {
		if math.Abs(lp[i]-want[i]) > 1e-12*(1+math.Abs(want[i])) {
			t.Fatalf("row %d: %v after the round trip, %v before", i, lp[i], want[i])
		}
	}
	if back.Provenance == nil || back.Provenance.RowsUsed != f.Matrix.N {
		t.Errorf("provenance lost: %+v", back.Provenance)
	}
}

func TestFrozenCoefficientChecks(t *testing.T) {
	base := "outcome: {column: y, event: 1}\nintercept: 0.5\npredictors:\n  - column: a\n    spline: {knots: [1, 2, 3]}\n"
	csv := "y,a\n1,1\n0,2\n1,3\n"
	for _, tt := range []struct{ extra, want string }{
		{"", `needs coefs with a coefficient for each of [a a [spline 1]]`},
		{"    coefs: {a: 1}\n", `coefs has no coefficient for term "a [spline 1]"`},
		{"    coefs: {a: 1, \"a'\": 2, b: 3}\n", `coefs names "b", which is not a term`},
	} {
		s := mustSpec(t, base+tt.extra)
		d, _, err := Build(s, frame(t, csv, s, false), Options{})
		if err != nil {
			t.Fatal(err)
		}
		if _, err := d.Coefficients(); err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("got %v, want %s", err, tt.want)
		}
	}
}

func TestSeparationNamesTerm(t *testing.T) {
	s := mustSpec(t, "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n  - column: g\n    categorical: true\n")
	// Level c has only non-events: quasi-complete separation by g=c.
	csv := "y,a,g\n1,0.5,a\n0,0.1,a\n1,0.3,b\n0,0.9,b\n1,0.2,a\n0,0.4,b\n0,0.7,c\n0,0.1,c\n1,0.8,a\n0,0.6,b\n"
	d, m, err := Build(s, frame(t, csv, s, true), Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	_, err = Fit(d, m, FitOptions{})
	var se *SeparationError
	if !errors.As(err, &se) || !strings.Contains(strings.Join(se.Terms, ","), "g=c") {
		t.Fatalf("want separation naming g=c, got %v", err)
	}
	if _, err := Fit(d, m, FitOptions{Firth: true}); err != nil {
		t.Errorf("Firth should fit: %v", err)
	}
}

func TestSplineBasisLinearBeyondKnots(t *testing.T) {
	// A restricted cubic spline is linear beyond the outer knots
	// (Stone & Koo 1985): second differences vanish there.
	knots := []float64{1, 2, 4, 7}
	out := make([]float64, 3)
	f := func(x float64) float64 { SplineBasis(x, knots, true, out); return out[1] + 2*out[2] }
	for _, x := range []float64{8, 10, 20, -1, -5} {
		h := 0.5
		if d2 := f(x+h) - 2*f(x) + f(x-h); math.Abs(d2) > 1e-9 {
			t.Errorf("second difference at %v = %g", x, d2)
		}
	}
}

func TestDefaultKnots(t *testing.T) {
	z := make([]float64, 101)
	for i := range z {
		z[i] = float64(i)
	}
	k, err := DefaultKnots(z, 4)
	if err != nil {
		t.Fatal(err)
	}
	for i, want := range []float64{5, 35, 65, 95} {
		if math.Abs(k[i]-want) > 1e-12 {
			t.Errorf("knots %v", k)
		}
	}
	if _, err := DefaultKnots([]float64{1, 1, 1, 2}, 5); err == nil {
		t.Error("too few distinct values should fail")
	}
}

// TestPurposeRoundTrip: a recipe's purpose survives fitting and freezing
// (the frozen spec written and read back states it as the recipe did),
// and a spec without one writes none.
func TestPurposeRoundTrip(t *testing.T) {
	recipe := mustSpec(t, `name: test model
purpose:
  intended_use: "flag patients for review: yes or no"
  target_population: adults before elective surgery
  setting: pre-operative clinic
  outcome_definition: |
    a complication within
    the horizon
  prediction_horizon: 30
outcome: {column: y, event: 1}
predictors:
  - column: a
`)
	want := Purpose{IntendedUse: "flag patients for review: yes or no", TargetPopulation: "adults before elective surgery",
		Setting: "pre-operative clinic", OutcomeDefinition: "a complication within\nthe horizon\n", PredictionHorizon: "30"}
	if recipe.Purpose != want {
		t.Fatalf("read %+v, want %+v", recipe.Purpose, want)
	}
	csv := "y,a\n1,3\n0,1\n1,2\n0,2\n1,4\n0,0\n0,3\n1,1\n"
	d, m, err := Build(recipe, frame(t, csv, recipe, true), Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	f, err := Fit(d, m, FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for _, frozen := range []*Spec{f.Freeze(Provenance{}), FreezeWith(d, f.Result.Coef, Provenance{}), recipe.AsRecipe()} {
		text, err := frozen.MarshalYAML()
		if err != nil {
			t.Fatal(err)
		}
		back, err := ParseSpec("frozen.yaml", text)
		if err != nil {
			t.Fatalf("%v\n%s", err, text)
		}
		if back.Purpose != want {
			t.Errorf("after the round trip %+v, want %+v\n%s", back.Purpose, want, text)
		}
	}
	text, err := mustSpec(t, "outcome: {column: y, event: 1}\npredictors: []\n").MarshalYAML()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(text), "purpose") {
		t.Errorf("a spec without a purpose wrote one:\n%s", text)
	}
}

// TestSplineLabels checks the spline term labels: the current form is
// written and read, the earlier trailing-prime form is still read (the
// same coefficients, the same design), and a freeze writes only the
// current form and reads back to the same coefficients.
func TestSplineLabels(t *testing.T) {
	base := "outcome: {column: y, event: 1}\nintercept: 0.5\npredictors:\n  - column: a\n    spline: {knots: [1, 2, 3, 4]}\n"
	csv := "y,a\n1,1\n0,2\n1,3\n0,4\n1,2.5\n"
	coefs := func(extra string) []float64 {
		t.Helper()
		s := mustSpec(t, base+extra)
		d, _, err := Build(s, frame(t, csv, s, false), Options{})
		if err != nil {
			t.Fatal(err)
		}
		b, err := d.Coefficients()
		if err != nil {
			t.Fatalf("%s: %v", extra, err)
		}
		if got := strings.Join(d.Terms, "|"); got != "(intercept)|a|a [spline 1]|a [spline 2]" && !strings.HasSuffix(got, "|a|a [spline 1]|a [spline 2]") {
			t.Errorf("terms %q", got)
		}
		return b
	}
	cur := coefs("    coefs: {a: 1, \"a [spline 1]\": 2, \"a [spline 2]\": 3}\n")
	old := coefs("    coefs: {a: 1, \"a'\": 2, \"a''\": 3}\n")
	if len(cur) != 4 || cur[0] != 0.5 || cur[1] != 1 || cur[2] != 2 || cur[3] != 3 {
		t.Fatalf("coefficients %v, want [0.5 1 2 3]", cur)
	}
	for i := range cur {
		if cur[i] != old[i] {
			t.Errorf("coefficient %d: %g from the current labels, %g from the earlier ones", i, cur[i], old[i])
		}
	}
	s := mustSpec(t, base+"    coefs: {a: 1, \"a'\": 2, \"a''\": 3}\n")
	d, _, err := Build(s, frame(t, csv, s, false), Options{})
	if err != nil {
		t.Fatal(err)
	}
	y, err := FreezeWith(d, cur, Provenance{}).MarshalYAML()
	if err != nil {
		t.Fatal(err)
	}
	if strings.Contains(string(y), "a'") || !strings.Contains(string(y), "a [spline 2]") {
		t.Errorf("frozen spec should name the spline terms in the current form only:\n%s", y)
	}
	back := mustSpec(t, string(y))
	d2, _, err := Build(back, frame(t, csv, back, false), Options{})
	if err != nil {
		t.Fatal(err)
	}
	b2, err := d2.Coefficients()
	if err != nil {
		t.Fatalf("reading the frozen spec back: %v\n%s", err, y)
	}
	for i := range cur {
		if b2[i] != cur[i] {
			t.Errorf("coefficient %d read back as %g, want %g", i, b2[i], cur[i])
		}
	}
}

func TestUpgradeTermLabel(t *testing.T) {
	for _, tt := range []struct{ in, want string }{
		{"bmi", "bmi"},
		{"bmi'", "bmi [spline 1]"},
		{"bmi''", "bmi [spline 2]"},
		{"bmi'*sex=M", "bmi [spline 1]*sex=M"},
		{"sex=M*age''", "sex=M*age [spline 2]"},
		{"bmi [spline 1]", "bmi [spline 1]"},
	} {
		if got := upgradeTermLabel(tt.in); got != tt.want {
			t.Errorf("upgradeTermLabel(%q) = %q, want %q", tt.in, got, tt.want)
		}
	}
}
