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
)

// TestDevNeedsNoDateOrClusterColumn: the date and cluster columns are
// read from the data audited only. Development data beside a cohort may
// lack them (the charts and the clusters are the cohort's); development
// data audited on their own (no cohort) must hold them, and the error
// names the column and what it was asked for.
func TestDevNeedsNoDateOrClusterColumn(t *testing.T) {
	ctx := context.Background()
	rows := manyRows()
	// The cohort: dates and a site column; the development data: neither.
	var b strings.Builder
	b.WriteString("when,risk,dead,site\n")
	for i, r := range rows {
		fmt.Fprintf(&b, "%s,%s,%s,S%d\n", r[0], r[1], r[2], i%4)
	}
	dir := t.TempDir()
	cohortFile, devFile := filepath.Join(dir, "cohort.csv"), filepath.Join(dir, "dev.csv")
	var d strings.Builder
	d.WriteString("risk,dead\n")
	for _, r := range rows[:300] {
		fmt.Fprintf(&d, "%s,%s\n", r[1], r[2])
	}
	for f, s := range map[string]string{cohortFile: b.String(), devFile: d.String()} {
		if err := os.WriteFile(f, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	cfg := datedConfig(cohortFile)
	cfg.Dev = Input{Path: devFile}
	cfg.Clusters.Column = "site"
	res, err := Run(ctx, cfg)
	if err != nil {
		t.Fatalf("development data without the date and cluster columns: %v", err)
	}
	if ot := res.Audit.OverTime; ot == nil || ot.Patients != len(rows) {
		t.Errorf("charts over %+v patients, want the cohort's %d", ot, len(rows))
	}
	if res.Audit.Clusters == nil {
		t.Error("no analysis across the cohort's clusters")
	}
	if res.Audit.Development == nil {
		t.Error("the development data were not measured")
	}
	// Audited alone, the development data must hold both: a frozen model
	// of the risk column's logit (a model is needed without a cohort).
	mod := filepath.Join(dir, "model.yaml")
	spec := "name: logit of risk\noutcome:\n  column: dead\n  event: \"1\"\nintercept: 0\npredictors:\n  - column: lr\n    coef: 1\n"
	if err := os.WriteFile(mod, []byte(spec), 0o644); err != nil {
		t.Fatal(err)
	}
	d.Reset()
	d.WriteString("lr,dead\n")
	for _, r := range rows[:300] {
		fmt.Fprintf(&d, "%s,%s\n", r[1], r[2])
	}
	if err := os.WriteFile(devFile, []byte(d.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tt := range []struct {
		name, column, what string
		set                func(*Config)
	}{
		{"date column", "when", "the date column", func(c *Config) { c.Clusters.Column = "" }},
		{"cluster column", "site", "the cluster column", func(c *Config) { c.OverTime = OverTime{} }},
	} {
		only := cfg
		only.Cohort, only.Predicted, only.Model = Input{}, nil, mod
		tt.set(&only)
		_, err := Run(ctx, only)
		var ce *cohort.Error
		if !errors.As(err, &ce) || !strings.Contains(err.Error(), `"`+tt.column+`"`) || !strings.Contains(err.Error(), tt.what) {
			t.Errorf("%s: development data audited alone without it gave %v, want an error naming %q as %s", tt.name, err, tt.column, tt.what)
		}
	}
}

// TestOverTimeFiguresListed: audit.json's list of figure files names the
// four charts in date order with their PNG copies, as it names the
// others, and every figure listed is one of those written.
func TestOverTimeFiguresListed(t *testing.T) {
	res, err := Run(context.Background(), datedConfig(datedCohort(t, manyRows())))
	if err != nil {
		t.Fatal(err)
	}
	written := map[string]bool{}
	for _, f := range res.Figures {
		written[f.Name] = true
	}
	listed := map[string]string{}
	for _, f := range res.Audit.Figures {
		listed[f.SVG] = f.PNG
		if !written[f.SVG] {
			t.Errorf("audit.json lists %s, which is not written", f.SVG)
		}
	}
	for _, name := range []string{"over_time_periods", "over_time_vlad", "over_time_cusum", "over_time_ewma"} {
		if png, ok := listed[name+".svg"]; !ok || png != name+".png" {
			t.Errorf("audit.json's figures lack %s.svg with %s.png (have %v)", name, name, listed)
		}
	}
	if len(res.Audit.Figures) != len(res.Figures) {
		t.Errorf("%d figures listed, %d written", len(res.Audit.Figures), len(res.Figures))
	}
}
