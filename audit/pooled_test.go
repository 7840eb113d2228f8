package audit_test

import (
	"context"
	"errors"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/validate"
)

// TestPooledCriterionNeedsClusters: a criterion on a pooled measure is
// refused with a *ConfigError naming the measure and the cluster flags
// when the Config asks for no analysis across clusters, before anything
// is read; with a cluster column the same criterion passes the check and
// the run goes on to read the (missing) cohort.
func TestPooledCriterionNeedsClusters(t *testing.T) {
	one := 1.0
	cfg := audit.Config{Predicted: &audit.Predicted{Column: "risk", Outcome: "died", Event: "yes"}, Cohort: audit.Input{Path: "no-such-file.csv"},
		Criteria: []validate.Criterion{{Measure: "auc", AtLeast: &one}, {Measure: "pooled.oe_pi", Contains: &one}}}
	_, err := audit.Run(context.Background(), cfg)
	var ce *audit.ConfigError
	if !errors.As(err, &ce) || !strings.Contains(err.Error(), "pooled.oe_pi") || !strings.Contains(err.Error(), "--cluster") {
		t.Errorf("no clusters: error %v, want a ConfigError naming pooled.oe_pi and --cluster", err)
	}
	cfg.Clusters.Column = "site"
	if _, err := audit.Run(context.Background(), cfg); errors.As(err, &ce) || err == nil {
		t.Errorf("with a cluster column: error %v, want the cohort's read error", err)
	}
}
