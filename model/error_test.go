package model

import (
	"errors"
	"fmt"
	"io/fs"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/logistic"
)

// specKinds are the sentinel errors of spec problems.
var specKinds = []error{ErrSpecRead, ErrSpecSyntax, ErrUnknownKey, ErrDuplicateKey, ErrMissingKey, ErrSpecValue,
	ErrConflict, ErrCoefficients, ErrNotFrozen, ErrSpecData}

// dataKinds are the cohort sentinels that model reports.
var dataKinds = []error{cohort.ErrMissing, cohort.ErrOutcome, cohort.ErrLevel, cohort.ErrDomain}

// fitKinds are the sentinels of fits that cannot be made.
var fitKinds = []error{ErrSeparation, ErrCollinear, ErrNotConverged, ErrNotNested}

// allKinds is every sentinel an error of this package may match.
func allKinds() []error {
	return append(append(append([]error{}, specKinds...), dataKinds...), fitKinds...)
}

// checkKind fails unless errors.Is finds kind in err and no other
// sentinel of the package.
func checkKind(t *testing.T, err, kind error) {
	t.Helper()
	if err == nil {
		t.Fatal("no error")
	}
	for _, k := range allKinds() {
		if got := errors.Is(err, k); got != (k == kind) {
			t.Errorf("errors.Is(err, %v) = %v; err: %v", k, got, err)
		}
	}
}

const (
	outcomeOnly = "outcome: {column: y, event: 1}\n"
	twoRows     = "y,a,g\n1,1,p\n0,2,q\n"
)

// buildErr builds the spec on the CSV data (outcome read) and returns the
// error of ParseSpec or Build.
func buildErr(spec, csv string, opt Options) func(t *testing.T) error {
	return func(t *testing.T) error {
		s, err := ParseSpec("s.yaml", []byte(spec))
		if err != nil {
			return err
		}
		opt.Outcome = true
		_, _, err = Build(s, frame(t, csv, s, true), opt)
		return err
	}
}

// TestSpecErrorKinds: each bad spec gives a *SpecError that errors.Is
// finds with its kind and no other, that errors.As finds with its file and
// line, and that keeps the error underneath where there is one.
func TestSpecErrorKinds(t *testing.T) {
	frozenSpline := outcomeOnly + "intercept: 0.5\npredictors:\n  - column: a\n    spline: {knots: [1, 2, 3]}\n"
	for _, tc := range []struct {
		name string
		run  func(t *testing.T) error
		kind error
		file string
		line int
		// cause, when set, checks the error underneath (errors.Is or
		// errors.As through Err).
		cause func(error) bool
	}{
		{"missing file", func(t *testing.T) error {
			_, err := LoadSpec(filepath.Join(t.TempDir(), "nope.yaml"))
			return err
		}, ErrSpecRead, "nope.yaml", 0, func(err error) bool {
			var pe *fs.PathError
			return errors.Is(err, fs.ErrNotExist) && errors.As(err, &pe) && filepath.Base(pe.Path) == "nope.yaml"
		}},
		{"empty", buildErr("", "", Options{}), ErrSpecSyntax, "s.yaml", 0, nil},
		{"not YAML", buildErr("outcome: [", "", Options{}), ErrSpecSyntax, "s.yaml", 0, func(err error) bool {
			return errors.Unwrap(err) != nil
		}},
		{"not a mapping", buildErr("- a\n- b\n", "", Options{}), ErrSpecSyntax, "s.yaml", 1, nil},
		{"unknown key", buildErr("name: x\noutcom:\n  column: y\n", "", Options{}), ErrUnknownKey, "s.yaml", 2, nil},
		{"unknown predictor key", buildErr(outcomeOnly+"predictors:\n  - column: a\n    cofe: 1\n", "", Options{}), ErrUnknownKey, "s.yaml", 4, nil},
		{"key twice", buildErr(outcomeOnly+"predictors: []\npredictors: []\n", "", Options{}), ErrDuplicateKey, "s.yaml", 3, nil},
		{"coefficient twice", buildErr(outcomeOnly+"intercept: 0\npredictors:\n  - column: g\n    categorical: true\n    reference: p\n    levels:\n      q: 1\n      q: 2\n", "", Options{}),
			ErrDuplicateKey, "s.yaml", 9, nil},
		{"no outcome", buildErr("predictors: []\n", "", Options{}), ErrMissingKey, "s.yaml", 1, nil},
		{"no event", buildErr("outcome: {column: y}\npredictors: []\n", "", Options{}), ErrMissingKey, "s.yaml", 1, nil},
		{"no predictors", buildErr(outcomeOnly, "", Options{}), ErrMissingKey, "s.yaml", 1, nil},
		{"spline without knots", buildErr(outcomeOnly+"predictors:\n  - column: a\n    spline: {}\n", "", Options{}), ErrMissingKey, "s.yaml", 4, nil},
		{"frozen without reference", buildErr(outcomeOnly+"intercept: 0\npredictors:\n  - column: g\n    categorical: true\n    levels: {q: 1}\n", "", Options{}),
			ErrMissingKey, "s.yaml", 4, nil},
		{"not a number", buildErr(outcomeOnly+"intercept: abc\npredictors: []\n", "", Options{}), ErrSpecValue, "s.yaml", 2, func(err error) bool {
			var ne *strconv.NumError
			return errors.As(err, &ne) && ne.Num == "abc" && errors.Is(err, strconv.ErrSyntax)
		}},
		{"knot count not a number", buildErr(outcomeOnly+"predictors:\n  - column: a\n    spline: {knots: many}\n", "", Options{}), ErrSpecValue, "s.yaml", 4, func(err error) bool {
			var ne *strconv.NumError
			return errors.As(err, &ne) && ne.Num == "many"
		}},
		{"negative scale", buildErr(outcomeOnly+"predictors:\n  - column: a\n    scale: -2\n", "", Options{}), ErrSpecValue, "s.yaml", 4, nil},
		{"knots not increasing", buildErr(outcomeOnly+"predictors:\n  - column: a\n    spline: {knots: [1, 3, 2]}\n", "", Options{}), ErrSpecValue, "s.yaml", 4, nil},
		{"predictors not a list", buildErr(outcomeOnly+"predictors: a\n", "", Options{}), ErrSpecValue, "s.yaml", 2, nil},
		{"outcome as predictor", buildErr(outcomeOnly+"predictors:\n  - column: y\n", "", Options{}), ErrConflict, "s.yaml", 3, nil},
		{"log and spline", buildErr(outcomeOnly+"predictors:\n  - column: a\n    log: true\n    spline: {knots: 3}\n", "", Options{}), ErrConflict, "s.yaml", 3, nil},
		{"two kinds", buildErr(outcomeOnly+"predictors:\n  - column: a\n  - column: a\n    categorical: true\n", "", Options{}), ErrConflict, "s.yaml", 4, nil},
		{"product of an absent predictor", buildErr(outcomeOnly+"predictors:\n  - column: a\n  - product: [a, b]\n", "", Options{}), ErrConflict, "s.yaml", 4, nil},
		{"product listed first", buildErr(outcomeOnly+"predictors:\n  - product: [a, g]\n  - column: a\n  - column: g\n    categorical: true\n", twoRows, Options{}),
			ErrConflict, "s.yaml", 3, nil},
		{"term twice", buildErr(outcomeOnly+"predictors:\n  - column: a\n  - column: a\n", twoRows, Options{}), ErrConflict, "s.yaml", 0, nil},
		{"coefficients in a recipe", buildErr(outcomeOnly+"predictors:\n  - column: a\n    coef: 2\n", "", Options{}), ErrCoefficients, "s.yaml", 3, nil},
		{"coefficient of the reference level", buildErr(outcomeOnly+"intercept: 0\npredictors:\n  - column: g\n    categorical: true\n    reference: p\n    levels: {p: 1, q: 2}\n", twoRows, Options{}),
			ErrCoefficients, "s.yaml", 7, nil},
		{"coefs without a term", func(t *testing.T) error {
			s := mustSpec(t, frozenSpline+"    coefs: {a: 1}\n")
			d, _, err := Build(s, frame(t, "y,a\n1,1\n0,2\n1,3\n", s, false), Options{})
			if err != nil {
				return err
			}
			_, err = d.Coefficients()
			return err
		}, ErrCoefficients, "s.yaml", 4, nil},
		{"coefs of no term", func(t *testing.T) error {
			s := mustSpec(t, frozenSpline+"    coefs: {a: 1, \"a'\": 2,\n      b: 3}\n")
			d, _, err := Build(s, frame(t, "y,a\n1,1\n0,2\n1,3\n", s, false), Options{})
			if err != nil {
				return err
			}
			_, err = d.Coefficients()
			return err
		}, ErrCoefficients, "s.yaml", 7, nil},
		{"a recipe to score", func(t *testing.T) error {
			s := mustSpec(t, outcomeOnly+"predictors:\n  - column: a\n")
			d, m, err := Build(s, frame(t, twoRows, s, true), Options{Outcome: true})
			if err != nil {
				return err
			}
			_, err = d.FrozenLinearPredictors(m)
			return err
		}, ErrNotFrozen, "s.yaml", 0, nil},
		{"reference level absent", buildErr(outcomeOnly+"predictors:\n  - column: g\n    categorical: true\n    reference: z\n", twoRows, Options{}),
			ErrSpecData, "s.yaml", 3, nil},
		{"too few values for the knots", buildErr(outcomeOnly+"predictors:\n  - column: a\n    spline: {knots: 5}\n", "y,a\n1,1\n0,1\n1,1\n0,2\n", Options{}),
			ErrSpecData, "s.yaml", 3, func(err error) bool {
				return errors.Unwrap(err) != nil && errors.Unwrap(err).Error() == "the data have too few distinct values for 5 knots"
			}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.run(t)
			checkKind(t, err, tc.kind)
			var se *SpecError
			if !errors.As(err, &se) {
				t.Fatalf("errors.As finds no *SpecError in %T: %v", err, err)
			}
			if filepath.Base(se.File) != tc.file || se.Line != tc.line {
				t.Errorf("file %q line %d, want %q line %d", se.File, se.Line, tc.file, tc.line)
			}
			if tc.cause != nil && !tc.cause(err) {
				t.Errorf("the error underneath is lost: Err = %#v", se.Err)
			}
			if tc.cause == nil && se.Err != nil {
				t.Errorf("Err = %v for a problem found in the spec itself", se.Err)
			}
		})
	}
}

// TestDataErrorKinds: the problems model finds in cohort data are
// *cohort.Error values of cohort's kinds, pointing at the value.
func TestDataErrorKinds(t *testing.T) {
	recipe := "outcome: {column: y, event: yes, non_event: no}\npredictors:\n  - column: a\n    log: true\n  - column: g\n    categorical: true\n"
	frozen := outcomeOnly + "intercept: 0\npredictors:\n  - column: g\n    categorical: true\n    reference: a\n    levels: {b: 1}\n"
	for _, tc := range []struct {
		name           string
		spec, csv      string
		opt            Options
		kind           error
		line           int
		column, value  string
		hasValue, miss bool
	}{
		{name: "missing under the fail policy", spec: recipe, csv: "y,a,g\nyes,1,p\nno,NA,q\n", opt: Options{FailOnMissing: true},
			kind: cohort.ErrMissing, line: 3, column: "a"},
		{name: "no complete row", spec: recipe, csv: "y,a,g\nyes,NA,p\nno,2,\n",
			kind: cohort.ErrMissing},
		{name: "neither event nor non-event", spec: recipe, csv: "y,a,g\nyes,1,p\nno,2,q\nYes,3,p\n",
			kind: cohort.ErrOutcome, line: 4, column: "y", value: "Yes", hasValue: true},
		{name: "no events", spec: outcomeOnly + "predictors: []\n", csv: "y\n0\n0\n",
			kind: cohort.ErrOutcome, column: "y"},
		{name: "no non-events", spec: outcomeOnly + "predictors: []\n", csv: "y\n1\n1.0\n",
			kind: cohort.ErrOutcome, column: "y"},
		{name: "unknown level", spec: frozen, csv: "y,g\n1,a\n0,b\n0,c\n",
			kind: cohort.ErrLevel, line: 4, column: "g", value: "c", hasValue: true},
		{name: "log of zero", spec: recipe, csv: "y,a,g\nyes,1,p\nno,0,q\n",
			kind: cohort.ErrDomain, line: 3, column: "a", value: "0", hasValue: true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := buildErr(tc.spec, tc.csv, tc.opt)(t)
			checkKind(t, err, tc.kind)
			var ce *cohort.Error
			if !errors.As(err, &ce) {
				t.Fatalf("errors.As finds no *cohort.Error in %T: %v", err, err)
			}
			if ce.File != "c.csv" || ce.Line != tc.line || ce.Column != tc.column || ce.Value != tc.value || ce.HasValue != tc.hasValue {
				t.Errorf("file %q line %d column %q value %q (%v), want c.csv line %d column %q value %q (%v)",
					ce.File, ce.Line, ce.Column, ce.Value, ce.HasValue, tc.line, tc.column, tc.value, tc.hasValue)
			}
		})
	}
}

// TestFitErrorKinds: a fit that cannot be made keeps the logistic error
// it explains, so that errors.Is finds its kind and errors.As both the
// model's error and logistic's.
func TestFitErrorKinds(t *testing.T) {
	fit := func(spec, csv string) func(t *testing.T) error {
		return func(t *testing.T) error {
			s := mustSpec(t, spec)
			d, m, err := Build(s, frame(t, csv, s, true), Options{Outcome: true})
			if err != nil {
				t.Fatal(err)
			}
			_, err = Fit(d, m, FitOptions{})
			return err
		}
	}
	separated := "y,a,g\n1,0.5,a\n0,0.1,a\n1,0.3,b\n0,0.9,b\n1,0.2,a\n0,0.4,b\n0,0.7,c\n0,0.1,c\n1,0.8,a\n0,0.6,b\n"
	collinear := "y,a,b\n1,1,2\n0,2,4\n1,3,6\n0,4,8\n1,5,10\n0,6,12\n1,2,4\n0,5,10\n"
	for _, tc := range []struct {
		name string
		run  func(t *testing.T) error
		kind error
		as   func(error) bool
	}{
		{"separation", fit(outcomeOnly+"predictors:\n  - column: a\n  - column: g\n    categorical: true\n", separated), ErrSeparation, func(err error) bool {
			var se *SeparationError
			var le *logistic.SeparationError
			return errors.As(err, &se) && len(se.Terms) > 0 && se.Terms[len(se.Terms)-1] == "g=c" && errors.As(err, &le) && !le.Complete
		}},
		{"collinear", fit(outcomeOnly+"predictors:\n  - column: a\n  - column: b\n", collinear), ErrCollinear, func(err error) bool {
			var fe *FitError
			var ce *logistic.CollinearError
			return errors.As(err, &fe) && errors.As(err, &ce) && len(ce.Columns) == 2
		}},
		{"not converged", func(*testing.T) error {
			return explainFitError(fmt.Errorf("%w in 50 iterations", logistic.ErrNotConverged), []string{InterceptTerm})
		}, ErrNotConverged, func(err error) bool {
			var fe *FitError
			return errors.As(err, &fe) && fe.Err != nil
		}},
		// Iterations stopped by a singular step (a coefficient running
		// off, as with a level of one patient) name the term and point to
		// Firth's fit, not to dropping one of two dependent terms.
		{"not converged on a singular step", func(*testing.T) error {
			step := &logistic.CollinearError{Columns: []int{1}}
			return explainFitError(fmt.Errorf("%w in 13 iterations: %w", logistic.ErrNotConverged, step), []string{InterceptTerm, "smoker=ex-smoker"})
		}, ErrNotConverged, func(err error) bool {
			var fe *FitError
			return errors.As(err, &fe) && strings.Contains(fe.Msg, "lost the term smoker=ex-smoker") && strings.Contains(fe.Msg, "--firth")
		}},
		{"not nested", func(t *testing.T) error {
			csv := "y,a,b\n1,1,2\n0,2,1\n1,3,5\n0,4,3\n1,5,4\n0,6,7\n1,2,1\n0,5,6\n"
			full := mustSpec(t, outcomeOnly+"predictors:\n  - column: a\n  - column: b\n")
			reduced := mustSpec(t, outcomeOnly+"predictors:\n  - column: a\n    log: true\n")
			var fits [2]*Fitted
			for i, s := range []*Spec{full, reduced} {
				d, m, err := Build(s, frame(t, csv, full, true), Options{Outcome: true})
				if err != nil {
					t.Fatal(err)
				}
				if fits[i], err = Fit(d, m, FitOptions{}); err != nil {
					t.Fatal(err)
				}
			}
			_, err := CompareNested(fits[0], fits[1])
			return err
		}, ErrNotNested, func(err error) bool {
			return err.Error() == `the models are not nested: term "log(a)" of the reduced model is not in the full model`
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			err := tc.run(t)
			checkKind(t, err, tc.kind)
			if !tc.as(err) {
				t.Errorf("errors.As does not find the expected types in %T: %v", err, err)
			}
		})
	}
}

// TestSentinelsAreLogistics: model's fit sentinels are logistic's, so a
// caller may test with either.
func TestSentinelsAreLogistics(t *testing.T) {
	for _, p := range [][2]error{{ErrSeparation, logistic.ErrSeparation}, {ErrCollinear, logistic.ErrCollinear}, {ErrNotConverged, logistic.ErrNotConverged}} {
		if p[0] != p[1] {
			t.Errorf("%v is not logistic's %v", p[0], p[1])
		}
	}
}
