package trend

import (
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/history"
)

func TestLimitsAndFlag(t *testing.T) {
	// E = 100: 1 ± 1.96/10 (the normal approximation to a Poisson count;
	// Spiegelhalter 2005).
	l := Limits(100, z95)
	if math.Abs(l[0]-0.804) > 1e-3 || math.Abs(l[1]-1.196) > 1e-3 {
		t.Errorf("limits %v", l)
	}
	recs := []history.Record{
		{AuditDate: "2026-01-01", Expected: 100, OE: [3]float64{1.1, 0.9, 1.3}},
		{AuditDate: "2026-02-01", Expected: 100, OE: [3]float64{1.25, 1.0, 1.5}}, // inside 99.8% (1 ± 0.309)
		{AuditDate: "2026-03-01", Expected: 400, OE: [3]float64{1.2, 1.1, 1.3}},  // outside (1 ± 0.155)
		{AuditDate: "2026-04-01", Expected: 400, OE: [3]float64{1.3, 1.2, 1.4}},
	}
	tr := Build(recs)
	if tr.FirstOutside != 2 {
		t.Errorf("first outside %d, want 2", tr.FirstOutside)
	}
	if !tr.Points[3].Outside || tr.Points[1].Outside {
		t.Errorf("flags %v", tr.Points)
	}
}
