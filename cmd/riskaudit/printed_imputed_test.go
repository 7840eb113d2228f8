package main

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/report"
)

// The printed-numbers rules (printed_test.go, prose_test.go) for the
// section on multiply imputed data and the summary's imputation line.

const imputedSectionKey = report.ImputedSection

// imputedMeasureKeys map the section's row labels to the measures' keys
// in imputation.pooled.
var imputedMeasureKeys = map[string]string{"AUC": "auc", "O/E": "oe", "calibration-in-the-large": "citl", "calibration slope": "slope", "Brier score": "brier"}

func imputedPooledRow(c *checker, t mdTable, row []string, _ int) {
	where := "imputation pooled " + row[0]
	k, ok := imputedMeasureKeys[row[0]]
	if !ok {
		c.fail("%s: row has no rule", where)
		return
	}
	p := "imputation.pooled." + k + "."
	if row[col(t, "scale")] != c.js.str(p+"scale") {
		c.fail("%s: scale %q, audit.json %q", where, row[col(t, "scale")], c.js.str(p+"scale"))
	}
	if note := c.js.str(p + "note"); note != "" {
		c.cell(where, row[1])
		return
	}
	c.cell(where+" estimate", row[col(t, "estimate (95% CI)")], c.js.num(p+"estimate"), c.js.num(p+"ci[0]"), c.js.num(p+"ci[1]"))
	c.cell(where+" within", row[col(t, "within-imputation variance")], c.js.num(p+"within_variance"))
	c.cell(where+" between", row[col(t, "between-imputation variance")], c.js.num(p+"between_variance"))
	c.cell(where+" total", row[col(t, "total variance")], c.js.num(p+"total_variance"))
	c.cell(where+" df", row[col(t, "df")], c.js.num(p+"df"))
	c.cell(where+" fmi", row[col(t, "fraction of missing information")], c.js.num(p+"fmi"))
}

func imputedAveragedRow(c *checker, _ mdTable, row []string, _ int) {
	where := "imputation averaged " + row[0]
	keys := map[string]string{"ICI (average)": "ici", "E50 (average)": "e50", "E90 (average)": "e90", "Emax (average)": "emax", "scaled Brier score (average)": "scaled_brier"}
	k, ok := keys[row[0]]
	if !ok {
		c.fail("%s: row has no rule", where)
		return
	}
	p := "imputation.averaged." + k + "."
	c.cell(where, row[1]+" "+row[2]+" "+row[3], c.js.num(p+"average"), c.js.num(p+"min"), c.js.num(p+"max"))
	// The top-level measure is the average.
	top := map[string]string{"ici": "calibration.ici", "e50": "calibration.e50", "e90": "calibration.e90", "emax": "calibration.emax", "scaled_brier": "overall.scaled_brier"}[k]
	if a, b := c.js.num(p+"average"), c.js.num(top); !(math.Abs(a-b) <= 1e-12*math.Max(1, math.Abs(a))) {
		c.fail("%s: average %g but the top-level %s is %g", where, a, top, b)
	}
}

func imputedPerRow(c *checker, t mdTable, row []string, _ int) {
	where := "imputation " + row[0]
	j := -1
	for i := 0; i < c.js.len("imputation.labels"); i++ {
		if c.js.str(fmt.Sprintf("imputation.labels[%d]", i)) == row[0] {
			j = i
		}
	}
	if j < 0 {
		c.fail("%s: no such imputation in audit.json", where)
		return
	}
	for _, h := range []struct{ label, key string }{{"AUC", "auc"}, {"O/E", "oe"}, {"CITL", "citl"}, {"slope", "slope"}, {"Brier", "brier"}} {
		c.cell(where+" "+h.label, row[col(t, h.label)], c.js.num(fmt.Sprintf("imputation.pooled.%s.per_imputation[%d]", h.key, j)))
	}
}

func imputedCompareRow(c *checker, _ mdTable, row []string, _ int) {
	where := "imputation compared " + row[0]
	k, ok := imputedMeasureKeys[row[0]]
	if !ok {
		c.fail("%s: row has no rule", where)
		return
	}
	c.cell(where+" pooled", row[1], c.js.num("imputation.pooled."+k+".estimate"))
	c.cell(where+" complete cases", row[2], c.js.num("imputation.complete_case."+k))
}

// imputedLine checks the summary's "imputed" line.
func (c *checker) imputedLine(where, rest string) {
	want := []float64{c.js.num("imputation.m")}
	if strings.Contains(rest, " patients had") {
		want = append(want, c.js.num("imputation.patients_imputed"), c.js.num("imputation.rows"))
	}
	c.cell(where, rest, want...)
}

// imputedProseRules are the prose rules of the section and of the
// summary's finding.
func imputedProseRules() []proseRule {
	return []proseRule{
		rule("imputed cohort", `The cohort came as # completed datasets \(imputations\) of the same # patients`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "imputation.m", "imputation.rows")
		}, has("imputation.m")),
		rule("imputed files", `from the # files given`, func(js jsonDoc, _ map[string]string) []float64 {
			return one(float64(js.len("imputation.files")))
		}, nil),
		rule("imputed patients", `In # patients at least one of the model's predictor values differs`, func(js jsonDoc, _ map[string]string) []float64 {
			return nums(js, "imputation.patients_imputed")
		}, func(js jsonDoc) bool { return js.num("imputation.patients_imputed") >= 0 }),
		rule("complete cases", `keep only the # patients without any imputed value \(# events\) and leave out the other #`, func(js jsonDoc, _ map[string]string) []float64 {
			return cat(nums(js, "imputation.complete_case.n", "imputation.complete_case.events"), one(js.num("imputation.rows")-js.num("imputation.complete_case.n")))
		}, has("imputation.complete_case.n")),
		rule("imputation finding", `The cohort came as # completed datasets of # patients each(?:, in which # patients had at least one predictor imputed)?`, func(js jsonDoc, g map[string]string) []float64 {
			out := nums(js, "imputation.m", "imputation.rows")
			if strings.Contains(g[""], "in which") {
				out = append(out, js.num("imputation.patients_imputed"))
			}
			return out
		}, has("imputation.m")),
		rule("imputations needed", `suggest at least # imputations for it, and there are (?:only )?#`, func(js jsonDoc, _ map[string]string) []float64 {
			best := math.Inf(-1)
			for _, k := range imputedMeasureKeys {
				best = math.Max(best, js.num("imputation.pooled."+k+".fmi"))
			}
			return one(math.Ceil(100*best), js.num("imputation.m"))
		}, has("imputation.pooled.auc.fmi")),
		rule("imputation FMI", `The largest fraction of missing information is # \((?P<m>[^)]+)\)`, func(js jsonDoc, g map[string]string) []float64 {
			keys := map[string]string{"AUC": "auc", "O/E": "oe", "calibration-in-the-large": "citl", "calibration slope": "slope", "Brier score": "brier"}
			best := math.Inf(-1)
			for _, k := range keys {
				best = math.Max(best, js.num("imputation.pooled."+k+".fmi"))
			}
			if js.num("imputation.pooled."+keys[g["m"]]+".fmi") != best {
				return one(math.NaN())
			}
			return one(best)
		}, has("imputation.pooled.auc.fmi")),
	}
}

// imputedDemoStdout is the demo's output from its second audit summary,
// the imputed audit's.
func imputedDemoStdout(t *testing.T, out string) string {
	t.Helper()
	first := strings.Index(out, "\nAudit of ")
	if first < 0 {
		t.Fatal("no audit summary in the demo's output")
	}
	second := strings.Index(out[first+1:], "\nAudit of ")
	if second < 0 {
		t.Fatal("no second audit summary (the imputed audit) in the demo's output")
	}
	return out[first+1+second:]
}

// plantImputed plants slips in the imputed audit's section and summary
// line, each of which the checks must find.
func plantImputed(t *testing.T, run printedRun) {
	js := run.js
	if !strings.Contains(run.report, "## "+report.ImputedSection+"\n") {
		t.Fatalf("%s: no section %q to check", run.name, report.ImputedSection)
	}
	f3 := func(p string) string { return fmt.Sprintf("%.3f", js.num(p)) }
	for _, m := range []struct{ name, row, old, new string }{
		{"pooled AUC with its second imputation's value", "| AUC ", "| " + f3("imputation.pooled.auc.estimate") + " (", "| " + f3("imputation.pooled.auc.per_imputation[1]") + " ("},
		{"O/E interval on the log scale", "| O/E ", fmt.Sprintf("(%.3f to %.3f)", js.num("imputation.pooled.oe.ci[0]"), js.num("imputation.pooled.oe.ci[1]")),
			fmt.Sprintf("(%.3f to %.3f)", js.num("imputation.pooled.oe.scale_ci[0]"), js.num("imputation.pooled.oe.scale_ci[1]"))},
		{"slope df off by ten", "| calibration slope ", fmt.Sprintf("| %.1f ", js.num("imputation.pooled.slope.df")), fmt.Sprintf("| %.1f ", js.num("imputation.pooled.slope.df")+10)},
		{"the FMI as λ", "| calibration slope ", fmt.Sprintf("| %.3f ", js.num("imputation.pooled.slope.fmi")), fmt.Sprintf("| %.3f ", js.num("imputation.pooled.slope.fmi")+0.01)},
		{"complete-case O/E as the pooled one", "| O/E ", "| " + f3("imputation.complete_case.oe") + " ", "| " + f3("imputation.pooled.oe.estimate") + " "},
		{"imputation 2's slope as imputation 1's", "| `1` ", f3("imputation.pooled.slope.per_imputation[0]"), f3("imputation.pooled.slope.per_imputation[1]")},
	} {
		t.Run("corrupt/imputed "+m.name, func(t *testing.T) {
			md, ok := replaceInRow(run.report, m.row, m.old, m.new)
			if !ok || m.old == m.new {
				t.Fatalf("cannot plant %q: no row %q with %q", m.name, m.row, m.old)
			}
			if len(checkReport(md, js)) == 0 {
				t.Errorf("%s planted in report.md and the check found nothing", m.name)
			}
		})
	}
	t.Run("corrupt/imputed patients in the summary line", func(t *testing.T) {
		old := fmt.Sprintf("; %d of", int(js.num("imputation.patients_imputed")))
		out := strings.Replace(run.stdout, old, fmt.Sprintf("; %d of", int(js.num("imputation.patients_imputed"))+1), 1)
		if out == run.stdout {
			t.Fatalf("cannot plant: no %q", old)
		}
		if len(checkSummary(out, js)) == 0 {
			t.Error("the imputed patients off by one on stdout and the check found nothing")
		}
	})
	t.Run("corrupt/imputed complete cases in the prose", func(t *testing.T) {
		old := fmt.Sprintf("keep only the %d patients", int(js.num("imputation.complete_case.n")))
		md := strings.Replace(run.report, old, fmt.Sprintf("keep only the %d patients", int(js.num("imputation.complete_case.n"))-1), 1)
		if md == run.report {
			t.Fatalf("cannot plant: no %q", old)
		}
		if len(checkProse(md, js).problems) == 0 {
			t.Error("the complete cases off by one in the prose and the check found nothing")
		}
	})
}

// imputedClusterRun audits the demo's imputed extract across five sites
// (withSiteAndDate: a patient's site is the same in every imputation,
// since each imputation has 3000 rows), pooling within each site across
// the imputations and then across sites.
func imputedClusterRun(t *testing.T, dir, demo string) printedRun {
	t.Helper()
	stacked := withSiteAndDate(t, filepath.Join(demo, imputedDemoFile), filepath.Join(dir, "imputed_sites.csv"), 7)
	out := filepath.Join(dir, "imputed_sites")
	var stdout, stderr bytes.Buffer
	args := []string{"audit", "--model", filepath.Join(demo, "frozen.yaml"), "--cohort", stacked, "--imputation-column", "imputation",
		"--cluster", "site", "--out", out, "--plan", pooledPlan(t, dir, "imputed_pooled_criteria")}
	if code := run(context.Background(), args, &streams{out: &stdout, err: &stderr}); code != exitOK && code != exitCriterion {
		t.Fatalf("riskaudit audit (imputed, across sites): exit status %d: %s", code, stderr.String())
	}
	r := readRun(t, "imputed across sites", out, stdout.String())
	if r.js.len("clusters.per_cluster") != 5 || r.js.num("imputation.m") != 10 {
		t.Fatalf("imputed across sites: %d clusters, %g imputations", r.js.len("clusters.per_cluster"), r.js.num("imputation.m"))
	}
	return r
}
