package audit

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/report"
)

// TestAlarmStateInHistoryAndTrend: the history keeps each audit's alarm
// state (from its audit.json) and the trend names the first audit whose
// charts in date order signalled, in trend.md and trend.json. Three
// audits of the same column of risks: one without a date column (no
// alarm state), then two dated ones in which the outcomes are far rarer
// than the risks say (one event in 50 rows against risks of 10–42%), so
// the improvement CUSUM must signal; the first of these is the first
// alarm. The expected values are the audits' own audit.json.
func TestAlarmStateInHistoryAndTrend(t *testing.T) {
	ctx := context.Background()
	dir := t.TempDir()
	store := filepath.Join(dir, "h.sqlite")
	var rows [][3]string
	for i := range 400 {
		ev := "0"
		if i%50 == 0 {
			ev = "1"
		}
		rows = append(rows, [3]string{fmt.Sprintf("2026-%02d-%02d", 1+i/40, 1+(i%40)/2), fmt.Sprintf("%.2f", 0.1+0.4*float64(i%5)/5), ev})
	}
	file := datedCohort(t, rows)
	plain := datedConfig(file)
	plain.OverTime = OverTime{}
	var dated []*Result
	for k, c := range []Config{plain, datedConfig(file), datedConfig(file)} {
		res, err := Run(ctx, c)
		if err != nil {
			t.Fatal(err)
		}
		if err := RecordHistory(store, fmt.Sprintf("2026-0%d-28", k+1), res); err != nil {
			t.Fatal(err)
		}
		if k > 0 {
			dated = append(dated, res)
		}
	}
	imp := dated[0].Audit.OverTime.CUSUM[1]
	if imp.Name != "improvement" || imp.Signals == 0 {
		t.Fatalf("the improvement chart did not signal (%+v): the test's cohort no longer makes an alarm", imp)
	}
	tr, err := ReadTrend(store, TrendOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if a := tr.Trend.Points[0].Record.Alarms; a != nil {
		t.Errorf("the audit without a date column has an alarm state %+v", a)
	}
	got := tr.Trend.Points[1].Record.Alarms
	if got == nil || got.DateColumn != "when" || len(got.CUSUM) != 2 || got.CUSUM[1].Signals != imp.Signals || got.CUSUM[1].First.Date != imp.First.Date || got.CUSUM[1].First.Patient != imp.First.Patient {
		t.Fatalf("alarm state read back %+v, audit.json has %+v", got, imp)
	}
	ew := dated[0].Audit.OverTime.EWMA
	if got.EWMABelow.Patient != ew.FirstBelow.Patient || got.EWMAAbove.Patient != ew.FirstAbove.Patient {
		t.Errorf("EWMA crossings read back %+v / %+v, audit.json %+v / %+v", got.EWMAAbove, got.EWMABelow, ew.FirstAbove, ew.FirstBelow)
	}
	if s := tr.Trend.Series; len(s) != 1 || s[0].FirstAlarm != 1 {
		t.Fatalf("series %+v: want one, its first alarm at point 1", s)
	}
	doc := TrendJSON(tr)
	b, err := jsonout.Marshal(doc)
	if err != nil {
		t.Fatal(err)
	}
	var back struct {
		Audits []map[string]any `json:"audits"`
	}
	if err := json.Unmarshal(b, &back); err != nil {
		t.Fatal(err)
	}
	if m := doc.Models[0]; m.FirstAlarm == nil || *m.FirstAlarm != "2026-02-28" || *m.FirstAlarmRecord != tr.Trend.Points[1].Record.ID {
		t.Errorf("trend.json's first alarm %v record %v, want 2026-02-28", m.FirstAlarm, m.FirstAlarmRecord)
	}
	for k, a := range back.Audits {
		_, has := a["alarms"]
		if has != (k > 0) || a["alarm"] != (k > 0) {
			t.Errorf("trend.json audit %d: alarm %v, alarms given %v; want %v", k+1, a["alarm"], has, k > 0)
		}
	}
	var md bytes.Buffer
	if err := report.WriteTrend(&md, tr.Trend, tr.Source, nil); err != nil {
		t.Fatal(err)
	}
	want := []string{
		"## Alarms in date order",
		"2 of the 3 audits charted their cohort in date order",
		fmt.Sprintf("**the audit of 2026-02-28 (record %d) is the first whose charts in date order signalled**", tr.Trend.Points[1].Record.ID),
		fmt.Sprintf("the improvement CUSUM signalled %d times, first on %s, after ", imp.Signals, imp.First.Date),
		fmt.Sprintf("Audits with a signal: 2026-02-28 (record %d), 2026-03-28 (record %d).", tr.Trend.Points[1].Record.ID, tr.Trend.Points[2].Record.ID),
	}
	for _, w := range want {
		if !strings.Contains(md.String(), w) {
			t.Errorf("trend.md lacks %q:\n%s", w, md.String())
		}
	}
}
