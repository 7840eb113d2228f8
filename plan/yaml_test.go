package plan

import (
	"strings"
	"testing"
)

// TestPlanYAML: a second document and merge keys are refused, and a key
// given twice names both lines.
func TestPlanYAML(t *testing.T) {
	for _, tc := range []struct {
		name, yaml string
		kind       error
		line       int
		want       string
	}{
		{"second document", "model: a.yaml\n---\nmodel: b.yaml\n", ErrSyntax, 2,
			"p.yaml: line 2: a second YAML document starts here; the file must hold one document"},
		{"merge key", "data: &d {missing: fail}\nsample_size:\n  <<: *d\n", ErrUnknownKey, 3,
			"p.yaml: line 3: merge keys (<<) are not read"},
		{"key twice", "model: a\nmodel: b\n", ErrDuplicateKey, 2, `p.yaml: line 2: key "model" appears twice in the plan (first on line 1)`},
		{"nested key twice", "bootstrap:\n  seed: 1\n  seed: 2\n", ErrDuplicateKey, 3, `p.yaml: line 3: key "seed" appears twice in bootstrap (first on line 2)`},
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

// TestPlanAliases: an alias reads as the value its anchor marks.
func TestPlanAliases(t *testing.T) {
	p, err := Parse("p.yaml", []byte(`rename:
  age_years: &age age
subgroups: [*age]
criteria:
  - &slope {measure: slope, between: [0.8, 1.2]}
  - measure: citl
    between: &band [-0.2, 0.2]
`))
	if err != nil {
		t.Fatal(err)
	}
	if p.Rename["age_years"] != "age" || len(p.Subgroups) != 1 || p.Subgroups[0] != "age" || len(p.Criteria) != 2 || p.Criteria[1].Between == nil || p.Criteria[1].Between[0] != -0.2 {
		t.Errorf("aliases read wrongly: %+v", p)
	}
}
