package plan

import (
	"path/filepath"
	"strings"
	"testing"
)

func TestParseStarterAndPaths(t *testing.T) {
	p, err := Parse(filepath.Join("plans", "monthly.yaml"), []byte(Starter))
	if err != nil {
		t.Fatal(err)
	}
	if p.Model != filepath.Join("plans", "frozen.yaml") || p.Out != filepath.Join("plans", "audits", "2026-11") {
		t.Errorf("paths not taken from the plan's folder: %q %q", p.Model, p.Out)
	}
	if len(p.Criteria) != 5 || p.Criteria[4].Severity != "review" || p.Rename["age_years"] != "age" {
		t.Errorf("plan read wrongly: %+v", p)
	}
	if !p.Set["bootstrap.seed"] || p.Seed != 1 {
		t.Errorf("bootstrap seed %v %d", p.Set, p.Seed)
	}
}

func TestPlanErrors(t *testing.T) {
	for _, tt := range []struct{ yaml, want string }{
		{"", "file is empty"},
		{"modle: x\n", `line 1: unknown key "modle" in the plan (did you mean "model"?)`},
		{"bootstrap: {replicats: 5}\n", `line 1: unknown key "replicats" in bootstrap`},
		{"criteria:\n  - measure: slope\n", "line 2: criterion on \"slope\" needs exactly one of"},
		{"criteria:\n  - measure: oe\n    contains: 1\n", "contains needs an interval"},
		{"criteria:\n  - measure: auc\n    at_least: high\n", `line 3: at_least must be a number, not "high"`},
		{"data: {missing: fail, decimal_comma: maybe}\n", "decimal_comma must be true or false"},
	} {
		_, err := Parse("p.yaml", []byte(tt.yaml))
		if err == nil || !strings.Contains(err.Error(), tt.want) {
			t.Errorf("%q: got %v, want %s", tt.yaml, err, tt.want)
		}
	}
}
