package audit

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/validate"
)

// datedCohort writes a cohort of predicted risks with a date column: rows
// holds (date, risk, outcome).
func datedCohort(t *testing.T, rows [][3]string) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("when,risk,dead\n")
	for _, r := range rows {
		fmt.Fprintf(&b, "%s,%s,%s\n", r[0], r[1], r[2])
	}
	path := filepath.Join(t.TempDir(), "dated.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func datedConfig(path string) Config {
	return Config{Predicted: &Predicted{Column: "risk", Outcome: "dead", Event: "1"}, Cohort: Input{Path: path},
		OverTime: OverTime{DateColumn: "when", Period: "block", PeriodSize: 50, ARL: 100}, Seed: 1}
}

// manyRows are 400 rows over 2026 with alternating outcomes, the date of
// row i being day i/2 (so pairs of rows share a date).
func manyRows() [][3]string {
	var rows [][3]string
	for i := range 400 {
		d := fmt.Sprintf("2026-%02d-%02d", 1+i/40, 1+(i%40)/2)
		rows = append(rows, [3]string{d, fmt.Sprintf("%.2f", 0.1+0.4*float64(i%5)/5), fmt.Sprint((i / 3) % 2)})
	}
	return rows
}

// TestOverTimeOrderAndMissing: the charts follow date order with ties in
// file order (a file written out of order gives the same charts as the
// sorted file, whose ties are in the same order), a missing or invalid
// date is left out and counted under complete-case, and refused with its
// line under fail.
func TestOverTimeOrderAndMissing(t *testing.T) {
	ctx := context.Background()
	rows := manyRows()
	sorted, err := Run(ctx, datedConfig(datedCohort(t, rows)))
	if err != nil {
		t.Fatal(err)
	}
	// Reverse the order of whole dates (pairs), keeping each pair's order.
	var shuffled [][3]string
	for i := len(rows) - 2; i >= 0; i -= 2 {
		shuffled = append(shuffled, rows[i], rows[i+1])
	}
	res, err := Run(ctx, datedConfig(datedCohort(t, shuffled)))
	if err != nil {
		t.Fatal(err)
	}
	a, b := sorted.Audit.OverTime, res.Audit.OverTime
	if a.VLADEnd != b.VLADEnd || a.VLADMin != b.VLADMin || a.CUSUM[0].End != b.CUSUM[0].End || a.EWMA.End != b.EWMA.End {
		t.Errorf("reordered file gave other charts: %+v vs %+v", a.CUSUM[0], b.CUSUM[0])
	}
	if a.FirstDate != "2026-01-01" || a.Patients != 400 || len(a.Periods) != 8 {
		t.Errorf("first date %s, %d patients, %d blocks; want 2026-01-01, 400, 8", a.FirstDate, a.Patients, len(a.Periods))
	}
	if ov := a.Overall; ov.OE != sorted.Audit.Calibration.OE || ov.AUC != sorted.Audit.Discrimination.AUC || ov.N != 400 {
		t.Errorf("overall period %+v is not the audit's own measures", ov)
	}
	found := false
	for _, f := range sorted.Audit.Summary {
		if f.Area == "over time" {
			found = strings.HasPrefix(f.Text, "In date order (400 patients, 2026-01-01 to 2026-10-20), the deterioration chart ")
		}
	}
	if !found {
		t.Errorf("no over-time finding of the expected form in %+v", sorted.Audit.Summary)
	}
	// Swapping the two rows of a shared date changes the path: ties are
	// not re-sorted by anything else.
	swapped := append([][3]string(nil), rows...)
	swapped[0], swapped[1] = swapped[1], swapped[0]
	sw, err := Run(ctx, datedConfig(datedCohort(t, swapped)))
	if err != nil {
		t.Fatal(err)
	}
	if sw.Audit.OverTime.EWMA.End == a.EWMA.End {
		t.Errorf("swapping two rows of the same date left the EWMA at %v: ties were re-ordered", a.EWMA.End)
	}
	gaps := append([][3]string(nil), rows...)
	gaps[10][0], gaps[20][0], gaps[30][0] = "", "NA", "31/01/2026"
	res, err = Run(ctx, datedConfig(datedCohort(t, gaps)))
	if err != nil {
		t.Fatal(err)
	}
	ot := res.Audit.OverTime
	if ot.Patients != 397 || ot.LeftOutMissing != 2 || ot.LeftOutInvalid != 1 {
		t.Errorf("%d patients, %d missing, %d invalid; want 397, 2, 1", ot.Patients, ot.LeftOutMissing, ot.LeftOutInvalid)
	}
	if res.Audit.Cohort.Used != 400 {
		t.Errorf("the audit's own measures used %d rows; dates must not change them", res.Audit.Cohort.Used)
	}
	cfg := datedConfig(datedCohort(t, gaps))
	cfg.FailOnMissing = true
	_, err = Run(ctx, cfg)
	var ce *cohort.Error
	if !errors.As(err, &ce) || ce.Line != 12 || ce.Column != "when" {
		t.Errorf("missing date under fail: %v; want a cohort error on line 12, column when", err)
	}
}

// TestAlarmCriterion: a plan's criterion on an alarm counts in the
// verdict as its severity says, and needs a date column.
func TestAlarmCriterion(t *testing.T) {
	ctx := context.Background()
	rows := manyRows()
	// From row 200 on, every patient has the event: the deterioration
	// chart must signal.
	for i := 200; i < len(rows); i++ {
		rows[i][2] = "1"
	}
	zero := 0.0
	crit := []validate.Criterion{{Measure: "cusum_deterioration_signals", AtMost: &zero, Severity: "review"},
		{Measure: "cusum_improvement_signals", AtMost: &zero, Severity: "fail"}}
	cfg := datedConfig(datedCohort(t, rows))
	cfg.Criteria = crit
	res, err := Run(ctx, cfg)
	if err != nil {
		t.Fatal(err)
	}
	v := res.Audit.Verdict
	if v.Criteria[0].Passed || v.Criteria[0].Value < 1 {
		t.Errorf("deterioration alarm criterion: %+v; want not met with at least one signal", v.Criteria[0])
	}
	if got := res.Audit.OverTime.CUSUM[0].Signals; float64(got) != v.Criteria[0].Value {
		t.Errorf("criterion value %v, chart signals %d", v.Criteria[0].Value, got)
	}
	wantStatus := "review"
	if !v.Criteria[1].Passed {
		wantStatus = "fail"
	}
	if v.Status != wantStatus {
		t.Errorf("verdict %s, want %s", v.Status, wantStatus)
	}
	cfg.OverTime = OverTime{}
	var ce *ConfigError
	if _, err := Run(ctx, cfg); !errors.As(err, &ce) || !strings.Contains(err.Error(), "--date-column") {
		t.Errorf("alarm criterion without dates: %v; want a ConfigError naming --date-column", err)
	}
}
