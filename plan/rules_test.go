package plan

import (
	"errors"
	"strings"
	"testing"
	"time"
)

// TestPlanRules: the plan's audit_date and rename rules, each
// refused with its line, its kind and a message naming what to fix.
func TestPlanRules(t *testing.T) {
	for _, tc := range []struct {
		name, yaml string
		kind       error
		line       int
		want       string
	}{
		{"impossible month", "audit_date: 2026-13-45\n", ErrValue, 1, `p.yaml: line 1: audit_date must be a calendar date written YYYY-MM-DD, not "2026-13-45"`},
		{"impossible day", "model: a\naudit_date: 2026-02-30\n", ErrValue, 2, `p.yaml: line 2: audit_date must be a calendar date written YYYY-MM-DD, not "2026-02-30"`},
		{"not a leap year", "audit_date: 2026-02-29\n", ErrValue, 1, `not "2026-02-29"`},
		{"a time too", "audit_date: 2026-11-30T10:00:00Z\n", ErrValue, 1, `not "2026-11-30T10:00:00Z"`},
		{"day first", "audit_date: 30/11/2026\n", ErrValue, 1, `not "30/11/2026"`},
		{"one digit", "audit_date: 2026-1-05\n", ErrValue, 1, `not "2026-1-05"`},
		{"empty date", "audit_date:\n", ErrValue, 1, `not ""`},
		{"date as a list", "audit_date: [2026-11-30]\n", ErrValue, 1, "audit_date must be a single value"},
		{"rename to a mapping", "rename:\n  age_years: {a: b}\n", ErrValue, 2,
			`p.yaml: line 2: rename: the new name of "age_years" must be a single column name, not a mapping`},
		{"rename to a list", "rename:\n  age_years: [age, bmi]\n", ErrValue, 2,
			`p.yaml: line 2: rename: the new name of "age_years" must be a single column name, not a list`},
		{"rename to nothing", "rename:\n  age_years:\n", ErrValue, 2, `p.yaml: line 2: rename: the new name of "age_years" is empty`},
		{"rename to null", "rename:\n  age_years: ~\n", ErrValue, 2, `rename: the new name of "age_years" is empty`},
		{"rename to the empty string", "rename:\n  age_years: \"\"\n", ErrValue, 2, `rename: the new name of "age_years" is empty`},
		{"rename an empty name", "rename:\n  \"\": age\n", ErrValue, 2, "p.yaml: line 2: rename: a column name to rename is empty"},
		{"rename a null name", "rename:\n  ~: age\n", ErrValue, 2, "rename: a column name to rename is empty"},
		{"rename twice", "rename:\n  age_years: age\n  age_years: bmi\n", ErrDuplicateKey, 3,
			`p.yaml: line 3: rename: "age_years" appears twice (first on line 2)`},
		{"two names to one", "rename:\n  age_years: age\n  sex: sex2\n  Age: age\n", ErrValue, 4,
			`p.yaml: line 4: rename: "age_years" and "Age" are both renamed to "age" (lines 2 and 4)`},
		{"rename not a mapping", "rename: [a, b]\n", ErrValue, 1, "rename must map each column name"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("p.yaml", []byte(tc.yaml))
			check(t, err, tc.kind, "p.yaml", tc.line)
			if err != nil && !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got  %.300s\nwant %s", err, tc.want)
			}
		})
	}
}

// TestPlanDateKeepsParseError: a date that is not one keeps time's
// error underneath.
func TestPlanDateKeepsParseError(t *testing.T) {
	_, err := Parse("p.yaml", []byte("audit_date: 2026-13-45\n"))
	var pe *time.ParseError
	if !errors.As(err, &pe) {
		t.Errorf("time's error is lost: %#v", err)
	}
}

// TestPlanAcceptsGoodValues: real dates (a leap day included) and
// renames that swap two names.
func TestPlanAcceptsGoodValues(t *testing.T) {
	p, err := Parse("p.yaml", []byte("audit_date: 2024-02-29\nrename:\n  a: b\n  b: a\n  age_years: age\n"))
	if err != nil {
		t.Fatal(err)
	}
	if p.AuditDate != "2024-02-29" || p.Rename["a"] != "b" || p.Rename["b"] != "a" || p.Rename["age_years"] != "age" {
		t.Errorf("read wrongly: %+v", p)
	}
}
