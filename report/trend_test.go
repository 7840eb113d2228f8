package report

import (
	"bytes"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/trend"
)

// TestTrendReportNamesModels: the trend report names the model of every
// audit, says what it cannot know (a new model without a parent; records
// without their criteria) and how many audits that concerns.
func TestTrendReportNamesModels(t *testing.T) {
	at := func(v float64) *float64 { return &v }
	crit := []history.Criterion{{Measure: "auc", AtLeast: at(0.7), Severity: "fail"}, {Measure: "ici", AtMost: at(0.03), Severity: "review"}}
	recs := []history.Record{
		{ID: 1, AuditDate: "2026-01-31", Model: "Ward | model", ModelSHA: "1111111122222222", Expected: 50, OE: [3]float64{1, 0.8, 1.2}, Cohort: "jan.csv"},
		{ID: 2, AuditDate: "2026-02-28", Model: "predicted risks in column vendor_risk", Expected: 50, OE: [3]float64{1, 0.8, 1.2}, Cohort: "feb.csv", Criteria: crit},
	}
	tr, err := trend.Build(recs)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := WriteTrend(&b, tr, "h.sqlite", nil); err != nil {
		t.Fatal(err)
	}
	md := b.String()
	for _, want := range []string{
		"2 audits of 2 models recorded in `h.sqlite`, from 2026-01-31 to 2026-02-28.",
		"| 1     | Ward \\| model ",
		"| none (a column of risks) |",
		"- **From 2026-02-28: model 2** (predicted risks in column vendor\\_risk) enters after model 1; its provenance names no model it updates, so the history cannot tell whether it replaces model 1 or runs beside it.",
		"The charts mark this date with a dashed vertical line.",
		"over the audits judged by each: `auc` ≥ 0.7 (fail). A bound",
		"1 of the 2 audits were recorded without the criteria they were judged by",
		"| 1      | 2026-01-31 | 1 (11111111) | jan.csv ",
		"| 2      | 2026-02-28 | 2            | feb.csv ",
		"- Model 1: the audit's O/E lies within its 99.8% control limits",
		"clinical governance",
	} {
		if !strings.Contains(md, want) {
			t.Errorf("trend.md lacks %q:\n%s", want, md)
		}
	}
	if strings.Contains(md, "ici") {
		t.Error("trend.md lists a criterion on a measure it does not chart")
	}
}
