package model

import (
	"errors"
	"fmt"
	"reflect"
	"strings"
	"testing"
)

// TestSpecYAMLRules: a second document, merge keys, keys that are not
// single values, aliases inside their own value and alias bombs are
// refused with their line and kind; duplicate keys name both lines.
func TestSpecYAMLRules(t *testing.T) {
	const head = "outcome: {column: y, event: 1}\n"
	bomb := "a: &a [x, x, x, x, x, x, x, x, x, x]\n"
	for i := 'b'; i <= 'h'; i++ {
		prev := string(i - 1)
		bomb += fmt.Sprintf("%c: &%c [*%s, *%s, *%s, *%s, *%s, *%s, *%s, *%s, *%s, *%s]\n", i, i, prev, prev, prev, prev, prev, prev, prev, prev, prev, prev)
	}
	for _, tc := range []struct {
		name, yaml string
		kind       error
		line       int
		want       string
	}{
		{"second document", head + "predictors: []\n---\n" + head + "predictors: []\n", ErrSpecSyntax, 3,
			"s.yaml: line 3: a second YAML document starts here; the file must hold one document"},
		{"empty second document", head + "predictors: []\n---\n", ErrSpecSyntax, 3,
			"s.yaml: line 3: a second YAML document starts here; the file must hold one document"},
		{"second document after the end marker", head + "predictors: []\n...\n---\nname: x\n", ErrSpecSyntax, 4,
			"s.yaml: line 4: a second YAML document starts here; the file must hold one document"},
		{"broken second document", head + "predictors: []\n---\n[\n", ErrSpecSyntax, 0, "s.yaml: not valid YAML: line 4: did not find expected node content"},
		{"merge key", head + "predictors:\n  - &a {column: a, center: 1}\n  - <<: *a\n    column: b\n", ErrUnknownKey, 4,
			"s.yaml: line 4: merge keys (<<) are not read: write the keys out (an alias *name may stand for a whole value)"},
		{"list as a key", head + "predictors: []\n? [a, b]\n: 1\n", ErrUnknownKey, 3, "s.yaml: line 3: a key must be a single value, not a mapping or a list"},
		{"alias inside its value", head + "predictors: &p\n  - column: a\n    levels: *p\n", ErrSpecSyntax, 4, "s.yaml: line 4: the alias *p is inside the value it refers to"},
		{"alias bomb", head + bomb + "predictors: []\n", ErrSpecSyntax, 0, "aliases expand the document by more than 1000000 values; write the values out"},
		{"key twice", head + "predictors: []\npredictors: []\n", ErrDuplicateKey, 3, `s.yaml: line 3: key "predictors" appears twice in the spec (first on line 2)`},
		{"predictor key twice", head + "predictors:\n  - column: a\n    center: 60\n    center: 65\n", ErrDuplicateKey, 5,
			`s.yaml: line 5: key "center" appears twice in a predictor (first on line 4)`},
		{"level twice", head + "intercept: 0\npredictors:\n  - column: g\n    categorical: true\n    reference: p\n    levels:\n      q: 1\n      q: 2\n", ErrDuplicateKey, 9,
			`s.yaml: line 9: "q" appears twice in levels (first on line 8)`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := ParseSpec("s.yaml", []byte(tc.yaml))
			checkKind(t, err, tc.kind)
			var se *SpecError
			if !errors.As(err, &se) {
				t.Fatalf("no *SpecError: %v", err)
			}
			if tc.line != 0 && se.Line != tc.line {
				t.Errorf("line %d, want %d", se.Line, tc.line)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got  %s\nwant %s", err, tc.want)
			}
		})
	}
}

// TestSpecAliases: an alias reads as the value its anchor marks, in a
// mapping, a scalar and a list alike, so that a spec written with
// aliases is the spec written out.
func TestSpecAliases(t *testing.T) {
	written := `outcome: {column: y, event: "yes", non_event: "no"}
predictors:
  - column: a
    center: 65
    scale: 10
  - column: b
    spline: {knots: [1, 2, 3]}
  - column: c
    spline: {knots: [1, 2, 3]}
  - column: g
    categorical: true
    reference: "yes"
`
	aliased := `outcome: &o {column: y, event: &yes "yes", non_event: "no"}
predictors:
  - column: a
    center: &c 65
    scale: 10
  - column: b
    spline: &s {knots: &k [1, 2, 3]}
  - column: c
    spline: *s
  - column: g
    categorical: true
    reference: *yes
`
	want, err := ParseSpec("s.yaml", []byte(written))
	if err != nil {
		t.Fatal(err)
	}
	got, err := ParseSpec("s.yaml", []byte(aliased))
	if err != nil {
		t.Fatalf("an aliased spec is refused: %v", err)
	}
	if !reflect.DeepEqual(got.Outcome, want.Outcome) || len(got.Predictors) != len(want.Predictors) {
		t.Fatalf("outcome %+v, want %+v", got.Outcome, want.Outcome)
	}
	for i := range got.Predictors {
		g, w := got.Predictors[i], want.Predictors[i]
		g.Line, w.Line = 0, 0
		if !reflect.DeepEqual(g, w) {
			t.Errorf("predictor %d: %+v, want %+v", i, g, w)
		}
	}
	// An alias of a mapping where a mapping belongs is read as one, not
	// refused as "must be a mapping".
	if _, err := ParseSpec("s.yaml", []byte("base: &p {column: a}\n")); err == nil || strings.Contains(err.Error(), "must be a mapping") {
		t.Errorf("got %v", err)
	}
	s, err := ParseSpec("s.yaml", []byte("outcome: {column: y, event: 1}\npredictors:\n  - &a {column: a, center: 1}\n  - product: [a, a]\n"))
	if err != nil || len(s.Predictors) != 2 {
		t.Fatalf("%v", err)
	}
}
