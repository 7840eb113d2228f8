package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/validate"
)

// pooledCriteria are the criteria on the analysis across clusters that
// TestPrintedNumbersMatchJSON's audits across sites add to the default
// criteria: an estimate, intervals by contains and by one end, and a
// probability of acceptable performance, so that the verdict table's
// rows of every kind of pooled measure are read against audit.json.
var pooledCriteria = []string{
	"{measure: pooled.auc, at_least: 0.6, source: \"a pooled C-statistic of 0.6 or more (a choice for the test)\"}",
	"{measure: pooled.oe_pi, contains: 1, severity: review}",
	"{measure: pooled.slope_pi.lower, at_least: 0.5, severity: review}",
	"{measure: pooled.auc_chance, at_least: 0.8, severity: review}",
	"{measure: pooled.citl_ci, contains: 0, severity: review}",
}

// pooledPlan writes a plan of the default criteria (validate.
// DefaultCriteria, written out with their sources) and pooledCriteria,
// and returns its path.
func pooledPlan(t *testing.T, dir, name string) string {
	t.Helper()
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
	var b strings.Builder
	b.WriteString("criteria:\n")
	for _, c := range validate.DefaultCriteria() {
		src, err := json.Marshal(c.Source)
		if err != nil {
			t.Fatal(err)
		}
		fmt.Fprintf(&b, "  - {measure: %s, ", c.Measure)
		switch {
		case c.AtLeast != nil:
			fmt.Fprintf(&b, "at_least: %s, ", num(*c.AtLeast))
		case c.AtMost != nil:
			fmt.Fprintf(&b, "at_most: %s, ", num(*c.AtMost))
		case c.Between != nil:
			fmt.Fprintf(&b, "between: [%s, %s], ", num(c.Between[0]), num(c.Between[1]))
		case c.Contains != nil:
			fmt.Fprintf(&b, "contains: %s, ", num(*c.Contains))
		}
		if c.Over != nil {
			fmt.Fprintf(&b, "over: [%s, %s], ", num(c.Over[0]), num(c.Over[1]))
		}
		fmt.Fprintf(&b, "severity: %s, source: %s}\n", c.Severity, src)
	}
	for _, c := range pooledCriteria {
		b.WriteString("  - " + c + "\n")
	}
	p := filepath.Join(dir, name+".yaml")
	if err := os.WriteFile(p, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// plantPooled corrupts the verdict table's pooled rows of an audit
// across sites, as a slip in report.go could: a pooled estimate shown as
// the overall one, a prediction interval shown as the confidence
// interval, and a probability shown as its complement; each must be
// found.
func plantPooled(t *testing.T, r printedRun) {
	js := r.js
	idx := func(measure string) string {
		for i := 0; i < js.len("verdict.criteria"); i++ {
			if js.str(fmt.Sprintf("verdict.criteria[%d].measure", i)) == measure {
				return fmt.Sprintf("verdict.criteria[%d]", i)
			}
		}
		t.Fatalf("%s: no criterion %s in audit.json", r.name, measure)
		return ""
	}
	// The verdict judges clusters.pooled's own values (for the imputed
	// audit, the pooling across sites of each site's Rubin's-rules
	// estimates).
	for _, c := range []struct{ measure, path string }{
		{"pooled.auc", "clusters.pooled.auc.estimate"},
		{"pooled.slope_pi.lower", "clusters.pooled.slope.prediction_interval[0]"},
		{"pooled.auc_chance", "clusters.pooled.auc.prob_acceptable"},
		{"pooled.oe_pi", "clusters.pooled.oe.prediction_interval[1]"},
	} {
		got := js.num(idx(c.measure) + ".value")
		if strings.HasSuffix(c.measure, "_pi") {
			got = js.num(idx(c.measure) + ".interval[1]")
		}
		if want := js.num(c.path); got != want {
			t.Errorf("%s: verdict %s %v, audit.json %s %v", r.name, c.measure, got, c.path, want)
		}
	}
	f3 := func(v float64) string { return validate.FormatMeasure("pooled.auc", v) }
	oePI, oeCI := "clusters.pooled.oe.prediction_interval", "clusters.pooled.oe.ci"
	for _, m := range []struct{ name, row, old, new string }{
		{"pooled AUC shown as the overall AUC", "| `pooled.auc`", "| " + f3(js.num(idx("pooled.auc")+".value")) + " ", "| " + f3(js.num("discrimination.auc")) + " "},
		{"pooled O/E prediction interval shown as its CI", "| `pooled.oe_pi`", f3(js.num(oePI+"[0]")) + " to " + f3(js.num(oePI+"[1]")), f3(js.num(oeCI+"[0]")) + " to " + f3(js.num(oeCI+"[1]"))},
		{"probability of acceptable AUC as its complement", "| `pooled.auc_chance`", "| " + f3(js.num(idx("pooled.auc_chance")+".value")) + " ", "| " + f3(1-js.num(idx("pooled.auc_chance")+".value")) + " "},
	} {
		t.Run("corrupt/"+r.name+"/"+m.name, func(t *testing.T) {
			md, ok := replaceInRow(r.report, m.row, m.old, m.new)
			if !ok || m.old == m.new {
				t.Fatalf("cannot plant %q: no row %q with %q", m.name, m.row, m.old)
			}
			if len(checkReport(md, js)) == 0 {
				t.Errorf("%s planted in report.md and the check found nothing", m.name)
			}
		})
	}
}
