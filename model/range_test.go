package model

import (
	"errors"
	"strings"
	"testing"
)

// TestDevelopmentRangeKey: each spec's development_range reads as the
// range it states, or is refused with the kind and line given.
func TestDevelopmentRangeKey(t *testing.T) {
	head := "outcome: {column: y, event: 1}\nintercept: 0\npredictors:\n"
	for _, tc := range []struct {
		name, preds string
		want        *Range // nil: the spec states none
		kind        error  // nil: the spec loads
		line        int
		msg         string
	}{
		{"absent: an older spec still loads", "  - column: a\n    coef: 1\n", nil, nil, 0, ""},
		{"stated", "  - column: a\n    coef: 1\n    development_range: {min: 18, max: 96}\n", &Range{18, 96}, nil, 0, ""},
		{"a constant column", "  - column: a\n    coef: 1\n    development_range: {min: 2.5, max: 2.5}\n", &Range{2.5, 2.5}, nil, 0, ""},
		{"min above max is a bad value", "  - column: a\n    coef: 1\n    development_range: {min: 96, max: 18}\n", nil, ErrSpecValue, 6, "min 96 is above max 18"},
		{"one end only is a missing key", "  - column: a\n    coef: 1\n    development_range: {max: 96}\n", nil, ErrMissingKey, 6, "needs both min and max"},
		{"a typo in it is an unknown key", "  - column: a\n    coef: 1\n    development_range: {min: 1, maxi: 2}\n", nil, ErrUnknownKey, 6, `unknown key "maxi" in development_range (did you mean "max"?)`},
		{"not a number", "  - column: a\n    coef: 1\n    development_range: {min: low, max: 2}\n", nil, ErrSpecValue, 6, "development_range.min must be a finite number"},
		{"not a mapping", "  - column: a\n    coef: 1\n    development_range: [1, 2]\n", nil, ErrSpecValue, 6, "development_range must be a mapping"},
		{"a categorical predictor has none", "  - column: g\n    categorical: true\n    reference: p\n    levels: {q: 1}\n    development_range: {min: 1, max: 2}\n", nil, ErrConflict, 4, "takes only reference and levels"},
		{"a product has none", "  - column: a\n    coef: 1\n  - product: [a, a]\n    coef: 1\n    development_range: {min: 1, max: 2}\n", nil, ErrConflict, 6, "takes only product"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			s, err := ParseSpec("s.yaml", []byte(head+tc.preds))
			if tc.kind != nil {
				var se *SpecError
				if !errors.Is(err, tc.kind) || !errors.As(err, &se) || se.Line != tc.line || !strings.Contains(err.Error(), tc.msg) {
					t.Fatalf("got %v (kind %v), want kind %v on line %d with %q", err, errKind(err), tc.kind, tc.line, tc.msg)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			got := s.Predictors[0].Range
			if (got == nil) != (tc.want == nil) || got != nil && *got != *tc.want {
				t.Fatalf("range %v, want %v", got, tc.want)
			}
			// The range survives a round trip: written, then read back.
			text, err := s.MarshalYAML()
			if err != nil {
				t.Fatal(err)
			}
			back, err := ParseSpec("back.yaml", text)
			if err != nil {
				t.Fatalf("%v\n%s", err, text)
			}
			if b := back.Predictors[0].Range; (b == nil) != (got == nil) || b != nil && *b != *got {
				t.Errorf("after the round trip %v, before %v:\n%s", b, got, text)
			}
			if got == nil && strings.Contains(string(text), "development_range") {
				t.Errorf("a spec without a range wrote one:\n%s", text)
			}
		})
	}
}

func errKind(err error) error {
	var se *SpecError
	if errors.As(err, &se) {
		return se.Kind
	}
	return nil
}

// TestFitWritesDevelopmentRange: fitting a recipe states every numeric
// predictor's range over the complete cases (the row with b missing is
// left out, so its a = 100 is not in a's range), none for a categorical
// predictor, and the same range on both entries of a column; a frozen
// model's own range is kept by FreezeWith (as an update does).
func TestFitWritesDevelopmentRange(t *testing.T) {
	recipe := mustSpec(t, "outcome: {column: y, event: 1}\npredictors:\n  - column: a\n  - column: a\n    log: true\n  - column: b\n    scale: 10\n  - column: g\n    categorical: true\n")
	csv := "y,a,b,g\n1,2,30,p\n0,5,-4,q\n1,3,12,p\n0,100,,q\n0,4,7,p\n1,1,3,q\n0,2.5,8,q\n1,6,1,p\n"
	d, m, err := Build(recipe, frame(t, csv, recipe, true), Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	beta := make([]float64, m.P)
	frozen := FreezeWith(d, beta, Provenance{})
	for i, want := range []*Range{{1, 6}, {1, 6}, {-4, 30}, nil} {
		got := frozen.Predictors[i].Range
		if (got == nil) != (want == nil) || got != nil && *got != *want {
			t.Errorf("predictor %d (%s): range %v, want %v (by hand from the rows)", i, frozen.Predictors[i].Column, got, want)
		}
	}
	// Re-frozen from the frozen model's own design: the stated ranges
	// stay, though these rows span less.
	frozen.Predictors[0].Range = &Range{0, 99}
	d2, _, err := Build(frozen, frame(t, csv, frozen, true), Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	again := FreezeWith(d2, beta, Provenance{})
	if r := again.Predictors[0].Range; r == nil || *r != (Range{0, 99}) {
		t.Errorf("an update's range %v, want the parent's {0 99}", r)
	}
}
