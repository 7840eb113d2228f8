package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestPooledCriterionExitStatus: criteria in a plan on the analysis
// across clusters enter the verdict and the exit status. On the invented
// multicentre cohort (testdata/reference/clusters.csv, eight sites
// pooled) the reference values are testdata/reference/clusters.json's
// (REML by a matrix transcription of Viechtbauer 2005, intervals and
// probabilities by scipy.stats; make_reference.py): criteria set just
// inside them are met (exit 0), a criterion just past the slope's
// probability of acceptable performance is not (exit 1), each with
// audit.json's value equal to the reference; a cohort of two sites
// cannot give a prediction interval, so a criterion on it is not met and
// says why; and a pooled criterion without --cluster is refused with
// status 2, naming the plan's line, before anything is written.
func TestPooledCriterionExitStatus(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "reference", "clusters.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Pooled map[string]map[string]struct {
			Estimate float64    `json:"estimate"`
			PI       [2]float64 `json:"prediction_interval"`
			Prob     *float64   `json:"prob_acceptable"`
		} `json:"pooled"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	reml := ref.Pooled["reml"]
	dir := t.TempDir()
	plan := func(name, cluster string, criteria ...string) string {
		p := filepath.Join(dir, name+".yaml")
		text := "criteria:\n"
		for _, c := range criteria {
			text += "  - " + c + "\n"
		}
		if cluster != "" {
			text = "cluster: " + cluster + "\n" + text
		}
		if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	type criterion struct {
		Measure  string      `json:"measure"`
		Value    float64     `json:"value"`
		Interval *[2]float64 `json:"interval"`
		Passed   bool        `json:"passed"`
		Severity string      `json:"severity"`
		Note     string      `json:"note"`
	}
	audit := func(name, cohort, planFile string, want int) (map[string]criterion, string) {
		t.Helper()
		out := filepath.Join(dir, name)
		var so, se bytes.Buffer
		args := []string{"audit", "--predicted", "risk", "--outcome", "outcome", "--event", "1", "--cohort", cohort, "--plan", planFile, "--out", out, "-q"}
		if code := run(context.Background(), args, &streams{out: &so, err: &se}); code != want {
			t.Fatalf("%s: exit status %d, want %d (%s)", name, code, want, se.String())
		}
		if want == exitUsage {
			return nil, se.String()
		}
		b, err := os.ReadFile(filepath.Join(out, "audit.json"))
		if err != nil {
			t.Fatal(err)
		}
		var doc struct {
			Verdict struct {
				Status   string      `json:"status"`
				Criteria []criterion `json:"criteria"`
			} `json:"verdict"`
		}
		if err := json.Unmarshal(b, &doc); err != nil {
			t.Fatal(err)
		}
		got := map[string]criterion{}
		for _, c := range doc.Verdict.Criteria {
			got[c.Measure] = c
		}
		return got, doc.Verdict.Status
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-6 {
			t.Errorf("%s: %.9f, reference %.9f", what, got, want)
		}
	}

	met := plan("met", "site",
		fmt.Sprintf("{measure: pooled.auc_pi.lower, at_least: %.4f}", reml["auc"].PI[0]-0.001),
		fmt.Sprintf("{measure: pooled.oe_chance, at_least: %.4f}", *reml["oe"].Prob-0.001),
		"{measure: pooled.oe_pi, contains: 1}",
		fmt.Sprintf("{measure: pooled.slope, between: [%.4f, 1.2]}", reml["slope"].Estimate-0.001))
	got, status := audit("met", clustersCSV, met, exitOK)
	if status != "pass" || len(got) != 4 {
		t.Errorf("met: verdict %s with %d criteria, want pass with 4", status, len(got))
	}
	near("pooled.auc_pi.lower", got["pooled.auc_pi.lower"].Value, reml["auc"].PI[0])
	near("pooled.oe_chance", got["pooled.oe_chance"].Value, *reml["oe"].Prob)
	near("pooled.slope", got["pooled.slope"].Value, reml["slope"].Estimate)
	if iv := got["pooled.oe_pi"].Interval; iv == nil {
		t.Error("pooled.oe_pi: no interval in audit.json")
	} else {
		near("pooled.oe_pi lower", iv[0], reml["oe"].PI[0])
		near("pooled.oe_pi upper", iv[1], reml["oe"].PI[1])
	}

	failing := plan("fails", "site",
		fmt.Sprintf("{measure: pooled.slope_chance, at_least: %.4f, severity: fail}", *reml["slope"].Prob+0.001),
		"{measure: pooled.auc_pi.lower, at_least: 0.5, severity: review}")
	got, status = audit("fails", clustersCSV, failing, exitCriterion)
	if c := got["pooled.slope_chance"]; status != "fail" || c.Passed || c.Note != "" {
		t.Errorf("fails: verdict %s, %+v; want fail with the slope's chance judged and not met", status, c)
	}
	near("pooled.slope_chance", got["pooled.slope_chance"].Value, *reml["slope"].Prob)

	// Two sites: pooled, but no prediction interval.
	src, err := os.ReadFile(clustersCSV)
	if err != nil {
		t.Fatal(err)
	}
	var two strings.Builder
	for i, line := range strings.Split(strings.TrimSpace(string(src)), "\n") {
		if i == 0 || strings.HasPrefix(line, "site A,") || strings.HasPrefix(line, "site B,") {
			two.WriteString(line + "\n")
		}
	}
	twoCSV := filepath.Join(dir, "two.csv")
	if err := os.WriteFile(twoCSV, []byte(two.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	got, status = audit("two", twoCSV, plan("two", "site", "{measure: pooled.auc_pi.lower, at_least: 0.5, severity: review}", "{measure: pooled.auc, at_least: 0.5}"), exitCriterion)
	if c := got["pooled.auc_pi.lower"]; status != "review" || c.Passed || !strings.Contains(c.Note, "at least 3 needed for a prediction interval") {
		t.Errorf("two sites: verdict %s, %+v; want review, not met, saying 3 clusters are needed", status, c)
	}
	if c := got["pooled.auc"]; !c.Passed {
		t.Errorf("two sites: the pooled AUC of two sites is not judged: %+v", c)
	}

	// No clusters: refused, naming the plan's line of the criterion.
	none := plan("none", "", "{measure: auc, at_least: 0.5}", "{measure: pooled.oe_pi, contains: 1}")
	msg := ""
	if _, msg = audit("none", clustersCSV, none, exitUsage); !strings.Contains(msg, "line 3") || !strings.Contains(msg, "pooled.oe_pi") || !strings.Contains(msg, "--cluster") {
		t.Errorf("no clusters: stderr %q; want the plan's line 3, the measure and --cluster", msg)
	}
	if _, err := os.Stat(filepath.Join(dir, "none")); err == nil {
		t.Error("the refused audit wrote its folder")
	}
}
