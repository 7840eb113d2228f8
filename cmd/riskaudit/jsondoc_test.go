package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"testing"
)

// TestJSONKeysDocumented runs an audit with every analysis switched on
// (a recipe fitted on the development data, internal validation,
// percentile intervals, subgroups, updating), a fit with a nested
// comparison, a comparison of two models, a sample-size plan, and the
// trend of the audit and of its updated model, and checks that every key
// path they write is listed in docs/json.md, so the machine-readable
// outputs never grow an undocumented key.
func TestJSONKeysDocumented(t *testing.T) {
	dir := t.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	demo := filepath.Join(dir, "demo")
	ctx := context.Background()
	if err := runDemo(ctx, demo, s); err != nil {
		t.Fatal(err)
	}
	args := []string{"audit", "--model", filepath.Join(demo, "recipe.yaml"), "--cohort", filepath.Join(demo, "later.csv"),
		"--dev", filepath.Join(demo, "development.csv"), "--out", filepath.Join(dir, "audit"), "--bootstrap", "20", "--seed", "1",
		"--ci-bootstrap", "20", "--subgroups", "sex,smoker,age:65,75,bmi:q4", "--min-subgroup-events", "20",
		"--update", filepath.Join(dir, "updated.yaml"), "--update-alpha", "0.05", "--update-bootstrap", "20",
		"--history", filepath.Join(dir, "h.sqlite"), "--audit-date", "2026-01-31", "-q"}
	if code := run(ctx, args, s); code != exitOK && code != exitCriterion {
		t.Fatalf("riskaudit audit: exit status %d", code)
	}
	reduced := filepath.Join(dir, "reduced.yaml")
	recipe, err := os.ReadFile(filepath.Join(demo, "recipe.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	// The recipe without its last predictor (lung_disease).
	cut := strings.Index(string(recipe), "  - column: lung_disease")
	if cut < 0 {
		t.Fatal("the demo recipe has changed: no lung_disease predictor")
	}
	if err := os.WriteFile(reduced, recipe[:cut], 0o644); err != nil {
		t.Fatal(err)
	}
	// An audit from a plan that renames a column and states a purpose of
	// its own, for the provenance's plan and renames and the purpose's
	// replaced fields.
	planFile := filepath.Join(dir, "plan.yaml")
	planText := "name: keys\nmodel: demo/frozen.yaml\ncohort: demo/later.csv\nout: planned\naudit_date: 2026-03-31\n" +
		"rename: {age_in_years: age}\npurpose: {setting: a setting of the plan's own}\n"
	if err := os.WriteFile(planFile, []byte(planText), 0o644); err != nil {
		t.Fatal(err)
	}
	// A dated cohort of predicted risks, for over_time (a short ARL keeps
	// the limits' simulation quick).
	dated := filepath.Join(dir, "dated.csv")
	var b strings.Builder
	b.WriteString("day,risk,event\n")
	for i := range 1200 {
		date := fmt.Sprintf("2026-%02d-%02d", 1+i/100, 1+i%28)
		if i == 7 {
			date = ""
		}
		fmt.Fprintf(&b, "%s,%.3f,%d\n", date, 0.05+0.3*float64(i%10)/10, (i*7919)%9/8)
	}
	if err := os.WriteFile(dated, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	// The demo's multiply imputed extract, with a site column for the
	// pooling within clusters, and its first three imputations as files.
	imputed := withSiteAndDate(t, filepath.Join(demo, imputedDemoFile), filepath.Join(dir, "imputed.csv"), 7)
	files := splitImputations(t, imputed, dir, 3)
	// The later extract with its outcome coded complication = 1/0 and a
	// 999 in age (beyond the development range), for the cohort's own
	// outcome coding and out_of_range.
	recoded := filepath.Join(dir, "recoded.csv")
	writeRecoded(t, filepath.Join(demo, "later.csv"), recoded)
	// The same multicentre cohort as one file per site (--cluster-file).
	sites := filepath.Join(dir, "sites")
	if err := os.Mkdir(sites, 0o755); err != nil {
		t.Fatal(err)
	}
	clusterFiles := []string{"audit", "--predicted", "risk", "--outcome", "outcome", "--event", "1", "--out", filepath.Join(dir, "clusterfiles"), "-q"}
	for _, f := range splitBySite(t, sites) {
		clusterFiles = append(clusterFiles, "--cluster-file", f)
	}
	for _, args := range [][]string{
		clusterFiles,
		{"audit", "--model", filepath.Join(demo, "frozen.yaml"), "--cohort", imputed, "--imputation-column", "imputation",
			"--cluster", "site", "--out", filepath.Join(dir, "imputed"), "-q"},
		{"audit", "--model", filepath.Join(demo, "frozen.yaml"), "--imputed", files[0], "--imputed", files[1], "--imputed", files[2],
			"--out", filepath.Join(dir, "imputed_files"), "-q"},
		{"audit", "--predicted", "risk", "--outcome", "event", "--event", "1", "--cohort", dated, "--date-column", "day",
			"--period", "300", "--cusum-arl", "200", "--out", filepath.Join(dir, "dated"), "-q"},
		{"audit", "--plan", planFile, "--rename", "bmi_value=bmi", "-q"},
		{"audit", "--model", filepath.Join(demo, "frozen.yaml"), "--cohort", recoded, "--outcome", "complication", "--event", "1", "--non-event", "0",
			"--out", filepath.Join(dir, "recoded"), "-q"},
		{"compare", "--model", filepath.Join(demo, "frozen.yaml"), "--model", filepath.Join(demo, "frozen.yaml"), "--cohort", recoded,
			"--outcome", "complication", "--event", "1", "--non-event", "0", "--out", filepath.Join(dir, "cmp_recoded"), "--ci-bootstrap", "100", "-q"},
		{"fit", "--model", filepath.Join(demo, "recipe.yaml"), "--reduced", reduced, "--data", filepath.Join(demo, "development.csv"),
			"--out", filepath.Join(dir, "refit.yaml"), "--json", filepath.Join(dir, "fit.json"), "-q"},
		{"compare", "--model", filepath.Join(demo, "frozen.yaml"), "--model", filepath.Join(dir, "updated.yaml"),
			"--cohort", filepath.Join(demo, "later.csv"), "--out", filepath.Join(dir, "cmp"), "--bootstrap", "100", "-q"},
		{"samplesize", "--model", filepath.Join(demo, "frozen.yaml"), "--data", filepath.Join(demo, "later.csv"),
			"--threshold", "0.1", "--json", filepath.Join(dir, "size.json")},
		// The updated model, audited into the same history (its
		// audit.json names its parent), and the trend of both.
		{"audit", "--model", filepath.Join(dir, "updated.yaml"), "--cohort", filepath.Join(demo, "later.csv"), "--out", filepath.Join(dir, "audit2"),
			"--history", filepath.Join(dir, "h.sqlite"), "--audit-date", "2026-02-28", "-q"},
		{"trend", "--history", filepath.Join(dir, "h.sqlite"), "--out", filepath.Join(dir, "trend")},
		// Across clusters, on the invented multicentre cohort of the
		// reference values (one site too small to pool).
		{"audit", "--predicted", "risk", "--outcome", "outcome", "--event", "1", "--cohort", filepath.Join("..", "..", "testdata", "reference", "clusters.csv"),
			"--cluster", "site", "--out", filepath.Join(dir, "clusters"), "-q"},
	} {
		if code := run(ctx, args, s); code != 0 && (args[0] != "audit" || code != exitCriterion) {
			t.Fatalf("riskaudit %s: exit status %d", args[0], code)
		}
	}
	paths := map[string]bool{}
	for _, f := range []string{filepath.Join(dir, "dated", "audit.json"), filepath.Join(dir, "audit", "audit.json"), filepath.Join(dir, "planned", "audit.json"), filepath.Join(dir, "fit.json"), filepath.Join(dir, "cmp", "compare.json"), filepath.Join(dir, "size.json"),
		filepath.Join(dir, "audit2", "audit.json"), filepath.Join(dir, "trend", "trend.json"), filepath.Join(dir, "clusters", "audit.json"),
		filepath.Join(dir, "imputed", "audit.json"), filepath.Join(dir, "imputed_files", "audit.json"), filepath.Join(dir, "clusterfiles", "audit.json"),
		filepath.Join(dir, "recoded", "audit.json"), filepath.Join(dir, "cmp_recoded", "compare.json")} {
		raw, err := os.ReadFile(f)
		if err != nil {
			t.Fatal(err)
		}
		var doc any
		if err := json.Unmarshal(raw, &doc); err != nil {
			t.Fatal(err)
		}
		jsonPaths(doc, "", paths)
	}
	md, err := os.ReadFile("../../docs/json.md")
	if err != nil {
		t.Fatal(err)
	}
	listed := string(md)
	var missing []string
	for p := range paths {
		// The development data's measures have the cohort's keys.
		p = strings.TrimPrefix(p, "development.measures.")
		if !strings.Contains(listed, "`"+p+"`") {
			missing = append(missing, p)
		}
	}
	sort.Strings(missing)
	for _, p := range []string{"nested.lr_chi2", "delong.difference_se", "update.chosen", "internal.shrinkage_factor", "bootstrap_ci.ici", "criteria[].formula",
		"provenance.plan.sha256", "provenance.renames[].applied_to", "model.purpose.replaced_from_model.setting", "model.fitted_model.sha256", "calibration.b.ici_ci",
		"model.parent_sha256", "models[].parent_series", "provenance.inputs[].cluster", "over_time.cusum[].first_signal.patient", "over_time.periods[].auc_ci", "model_changes[].series_before", "audits[].criteria[].between",
		"imputation.pooled.brier.fmi", "imputation.pooled.auc.df", "imputation.files", "imputation.complete_case.oe", "imputation.averaged.net_benefit[].model",
		"model.cohort_outcome.non_event", "model.cohort_outcome.model_non_event", "cohort_outcome.model_event", "out_of_range[].line", "out_of_range[].text"} {
		if !paths[p] {
			t.Errorf("%s not written: an analysis did not run", p)
		}
	}
	if len(paths) < 200 {
		t.Errorf("only %d key paths: the audit did not run every analysis", len(paths))
	}
	if len(missing) > 0 {
		t.Errorf("JSON keys not in docs/json.md:\n%s", strings.Join(missing, "\n"))
	}
}

// writeRecoded copies the demo's later extract with its outcome column
// ppc_30d renamed complication and coded 1/0, and age 999 on one row in
// fifty.
func writeRecoded(t *testing.T, from, to string) {
	t.Helper()
	raw, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(raw), "\n"), "\n")
	head := strings.Split(lines[0], ",")
	out, age := -1, -1
	for j, h := range head {
		switch h {
		case "ppc_30d":
			out = j
			head[j] = "complication"
		case "age":
			age = j
		}
	}
	if out < 0 || age < 0 {
		t.Fatal("the demo extract has changed: no ppc_30d or age column")
	}
	var b strings.Builder
	b.WriteString(strings.Join(head, ",") + "\n")
	for k, l := range lines[1:] {
		f := strings.Split(l, ",")
		f[out] = map[string]string{"yes": "1", "no": "0"}[f[out]]
		if k%50 == 7 {
			f[age] = "999"
		}
		b.WriteString(strings.Join(f, ",") + "\n")
	}
	if err := os.WriteFile(to, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// jsonPaths collects the key path of every value: objects' keys joined by
// dots, arrays of objects as key[], arrays of numbers or strings as the
// key alone.
func jsonPaths(v any, prefix string, out map[string]bool) {
	switch v := v.(type) {
	case map[string]any:
		for k, c := range v {
			p := k
			if prefix != "" {
				p = prefix + "." + k
			}
			jsonPaths(c, p, out)
		}
	case []any:
		leaf := true
		for _, c := range v {
			if _, ok := c.(map[string]any); ok {
				leaf = false
				jsonPaths(c, prefix+"[]", out)
			}
		}
		if leaf {
			out[prefix] = true
		}
	default:
		out[prefix] = true
	}
}

// splitImputations writes the first k imputations of a stacked file (its
// first column the imputation number) as files of their own, without
// that column, and returns their paths.
func splitImputations(t *testing.T, stacked, dir string, k int) []string {
	t.Helper()
	raw, err := os.ReadFile(stacked)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(raw), "\n"), "\n")
	_, header, _ := strings.Cut(lines[0], ",")
	parts := make([]strings.Builder, k)
	for j := range parts {
		parts[j].WriteString(header + "\n")
	}
	for _, l := range lines[1:] {
		num, rest, _ := strings.Cut(l, ",")
		var j int
		if _, err := fmt.Sscan(num, &j); err != nil {
			t.Fatalf("%s: imputation number %q", stacked, num)
		}
		if j >= 1 && j <= k {
			parts[j-1].WriteString(rest + "\n")
		}
	}
	var out []string
	for j := range parts {
		p := filepath.Join(dir, fmt.Sprintf("imputation%d.csv", j+1))
		if err := os.WriteFile(p, []byte(parts[j].String()), 0o644); err != nil {
			t.Fatal(err)
		}
		out = append(out, p)
	}
	return out
}
