package plan

import (
	"strings"
	"testing"
)

// TestPlanEchoesLittle: values of any length are cut in plan messages.
func TestPlanEchoesLittle(t *testing.T) {
	long := strings.Repeat("m", 5000)
	for _, tc := range []struct {
		name, yaml string
		kind       error
		line       int
		want       string
	}{
		{"long number", "classify_at: [" + long + "]\n", ErrValue, 1, `classify_at: "` + long[:60] + `…" (5000 characters) is not a risk`},
		{"long whole number", "ci_bootstrap: " + long + "\n", ErrValue, 1, `ci_bootstrap must be a whole number, not "` + long[:60] + `…" (5000 characters)`},
		{"long key", long[:1000] + ": 1\n", ErrUnknownKey, 1, `unknown key "` + long[:60] + `…" (1000 characters) in the plan`},
		{"long measure", "criteria:\n  - measure: " + long + "\n    at_least: 1\n", ErrCriterion, 2, `unknown measure "` + long[:60] + `… (5000 characters)"`},
		{"long severity", "criteria:\n  - measure: auc\n    at_least: 1\n    severity: " + long + "\n", ErrCriterion, 2, `severity must be fail or review, not "` + long[:60] + `… (5000 characters)"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("p.yaml", []byte(tc.yaml))
			check(t, err, tc.kind, "p.yaml", tc.line)
			if err == nil {
				return
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got  %.300s\nwant %s", err, tc.want)
			}
			if len(err.Error()) > 700 { // the list of measure names is about 520 bytes
				t.Errorf("a message of %d bytes", len(err.Error()))
			}
		})
	}
}
