package audit_test

import (
	"context"
	"errors"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
)

// TestPlanSizeRefusesWhatCannotBeComputed: a plan one of whose criteria
// cannot be computed is refused with the reason, not printed with a
// meaningless size.
func TestPlanSizeRefusesWhatCannotBeComputed(t *testing.T) {
	// Risks about expit(−10): none reaches a threshold of 0.5.
	_, err := audit.PlanSize(context.Background(), audit.SizeConfig{LPMean: -10, LPSD: 0.01, Threshold: 0.5})
	var ce *audit.ConfigError
	if !errors.As(err, &ce) || !strings.Contains(err.Error(), "net benefit at 0.5 criterion cannot be computed: no anticipated risk reaches") {
		t.Fatalf("got %v", err)
	}
	if _, err := audit.PlanSize(context.Background(), audit.SizeConfig{LPMean: -2, LPSD: 1, Threshold: 0.1}); err != nil {
		t.Errorf("an ordinary plan: %v", err)
	}
}
