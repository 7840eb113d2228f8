package plan

import (
	"errors"
	"io/fs"
	"path/filepath"
	"strconv"
	"testing"
)

// kinds are the sentinel errors of the package.
var kinds = []error{ErrRead, ErrSyntax, ErrUnknownKey, ErrDuplicateKey, ErrValue, ErrConflict, ErrCriterion}

// TestErrorKinds: each bad plan gives an *Error that errors.Is finds with
// its kind and no other, that errors.As finds with its file and line, and
// that keeps the error underneath where there is one.
func TestErrorKinds(t *testing.T) {
	for _, tc := range []struct {
		name, yaml string
		kind       error
		line       int
		// cause, when set, checks the error underneath; without it Err
		// must be nil.
		cause func(error) bool
	}{
		{"empty", "", ErrSyntax, 0, nil},
		{"not YAML", "model: [", ErrSyntax, 0, func(err error) bool { return errors.Unwrap(err) != nil }},
		{"not a mapping", "- a\n", ErrSyntax, 1, nil},
		{"unknown key", "modle: x\n", ErrUnknownKey, 1, nil},
		{"unknown nested key", "bootstrap: {replicats: 5}\n", ErrUnknownKey, 1, nil},
		{"key twice", "model: a\nmodel: b\n", ErrDuplicateKey, 2, nil},
		{"not a number", "criteria:\n  - measure: auc\n    at_least: high\n", ErrValue, 3, func(err error) bool {
			var ne *strconv.NumError
			return errors.As(err, &ne) && ne.Num == "high" && errors.Is(err, strconv.ErrSyntax)
		}},
		{"classify_at not a number", "classify_at: [0.1, x]\n", ErrValue, 1, func(err error) bool {
			var ne *strconv.NumError
			return errors.As(err, &ne) && ne.Num == "x"
		}},
		{"not a whole number", "ci_bootstrap: 2.5\n", ErrValue, 1, func(err error) bool {
			var ne *strconv.NumError
			return errors.As(err, &ne) && ne.Func == "Atoi"
		}},
		{"negative whole number", "ci_bootstrap: -3\n", ErrValue, 1, nil},
		{"out of range", "sample_size:\n  c_width: 1.5\n", ErrValue, 2, nil},
		{"not a list", "subgroups: sex\n", ErrValue, 1, nil},
		{"not true or false", "data: {decimal_comma: maybe}\n", ErrValue, 1, nil},
		{"lp_mean alone", "sample_size:\n  anticipated: {lp_mean: -2}\n", ErrConflict, 2, nil},
		{"event_rate alone", "sample_size:\n  anticipated:\n    event_rate: 0.1\n", ErrConflict, 3, nil},
		{"impossible pair", "sample_size:\n  anticipated: {event_rate: 0.5, c_statistic: 0.9999}\n", ErrConflict, 2, func(err error) bool {
			return errors.Unwrap(err) != nil
		}},
		{"criterion without a bound", "criteria:\n  - measure: slope\n", ErrCriterion, 2, func(err error) bool {
			u := errors.Unwrap(err)
			return u != nil && u.Error() == `criterion on "slope" needs exactly one of at_least, at_most, between and contains`
		}},
		{"unknown measure", "criteria:\n  - measure: nosuch\n    at_least: 1\n", ErrCriterion, 2, func(err error) bool {
			return errors.Unwrap(err) != nil
		}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("p.yaml", []byte(tc.yaml))
			check(t, err, tc.kind, "p.yaml", tc.line)
			var pe *Error
			if !errors.As(err, &pe) {
				return
			}
			if tc.cause != nil && !tc.cause(err) {
				t.Errorf("the error underneath is lost: Err = %#v", pe.Err)
			}
			if tc.cause == nil && pe.Err != nil {
				t.Errorf("Err = %v for a problem found in the plan itself", pe.Err)
			}
		})
	}
}

// TestMissingPlan: a plan that does not exist is ErrRead and keeps the
// operating system's error.
func TestMissingPlan(t *testing.T) {
	path := filepath.Join(t.TempDir(), "nope.yaml")
	_, err := Load(path)
	check(t, err, ErrRead, path, 0)
	var pe *fs.PathError
	if !errors.Is(err, fs.ErrNotExist) || !errors.As(err, &pe) || pe.Path != path {
		t.Errorf("the *fs.PathError is lost: %#v", errors.Unwrap(err))
	}
	if want := path + ": cannot read file: no such file or directory"; err.Error() != want {
		t.Errorf("message %q, want %q", err, want)
	}
}

func check(t *testing.T, err, kind error, file string, line int) {
	t.Helper()
	if err == nil {
		t.Fatal("no error")
	}
	for _, k := range kinds {
		if got := errors.Is(err, k); got != (k == kind) {
			t.Errorf("errors.Is(err, %v) = %v; err: %v", k, got, err)
		}
	}
	var pe *Error
	if !errors.As(err, &pe) {
		t.Fatalf("errors.As finds no *Error in %T: %v", err, err)
	}
	if pe.File != file || pe.Line != line {
		t.Errorf("file %q line %d, want %q line %d", pe.File, pe.Line, file, line)
	}
}
