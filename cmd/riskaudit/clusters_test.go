package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var clustersCSV = filepath.Join("..", "..", "testdata", "reference", "clusters.csv")

// TestAuditClusters audits the invented multicentre cohort with
// --cluster and checks that the report's plain sentences and audit.json
// carry the prediction intervals and probabilities of
// testdata/reference/clusters.json (REML by a matrix transcription of
// Viechtbauer 2005, intervals by scipy.stats; make_reference.py), that
// the four forest plots are written, and that the plan's keys give the
// same options as the flags.
func TestAuditClusters(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "reference", "clusters.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Pooled map[string]map[string]struct {
			PI   [2]float64 `json:"prediction_interval"`
			Prob *float64   `json:"prob_acceptable"`
		} `json:"pooled"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	out := filepath.Join(dir, "a")
	args := []string{"audit", "--predicted", "risk", "--outcome", "outcome", "--event", "1", "--cohort", clustersCSV, "--cluster", "site", "--out", out, "-q"}
	if code := run(context.Background(), args, s); code != exitOK {
		t.Fatalf("exit status %d", code)
	}
	md, err := os.ReadFile(filepath.Join(out, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	slope := ref.Pooled["reml"]["slope"]
	want := fmt.Sprintf("in a new `site` it is expected between %.2f and %.2f, and the chance that it is between 0.9 and 1.1 there is %.1f%%",
		slope.PI[0], slope.PI[1], 100**slope.Prob)
	if !strings.Contains(string(md), want) {
		t.Errorf("report.md lacks %q", want)
	}
	oe := ref.Pooled["reml"]["oe"]
	if want := fmt.Sprintf("in a new `site` it is expected between %.2f and %.2f", oe.PI[0], oe.PI[1]); !strings.Contains(string(md), want) {
		t.Errorf("report.md lacks %q", want)
	}
	if !strings.Contains(string(md), "all measures: 1 event and 59 non-events, fewer than the 10 each a cluster needs") {
		t.Error("report.md does not say why site I is not pooled")
	}
	for _, f := range []string{"clusters_auc.svg", "clusters_oe.svg", "clusters_citl.svg", "clusters_slope.svg"} {
		if b, err := os.ReadFile(filepath.Join(out, f)); err != nil || !bytes.Contains(b, []byte("<svg")) {
			t.Errorf("%s: %v", f, err)
		}
	}
	// The plan's keys, DerSimonian–Laird with Wald intervals.
	planFile := filepath.Join(dir, "plan.yaml")
	text := fmt.Sprintf("predicted: risk\noutcome: outcome\nevent: 1\ncohort: %s\nout: %s\ncluster: site\nclusters:\n  tau2_method: dl\n  ci_method: wald\n  accept_slope: [0.8, 1.2]\n",
		mustAbs(t, clustersCSV), filepath.Join(dir, "p"))
	if err := os.WriteFile(planFile, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	if code := run(context.Background(), []string{"audit", "--plan", planFile, "-q"}, s); code != exitOK {
		t.Fatalf("plan: exit status %d", code)
	}
	raw, err = os.ReadFile(filepath.Join(dir, "p", "audit.json"))
	if err != nil {
		t.Fatal(err)
	}
	var got struct {
		Clusters struct {
			Tau2Method string `json:"tau2_method"`
			CIMethod   string `json:"ci_method"`
			Bounds     struct {
				SlopeLow float64 `json:"slope_low"`
			} `json:"bounds"`
			Pooled map[string]struct {
				PI [2]float64 `json:"prediction_interval"`
			} `json:"pooled"`
		} `json:"clusters"`
	}
	if err := json.Unmarshal(raw, &got); err != nil {
		t.Fatal(err)
	}
	c := got.Clusters
	dl := ref.Pooled["dl"]["oe"].PI
	if c.Tau2Method != "dl" || c.CIMethod != "wald" || c.Bounds.SlopeLow != 0.8 {
		t.Errorf("plan: %s, %s, slope from %g", c.Tau2Method, c.CIMethod, c.Bounds.SlopeLow)
	}
	if pi := c.Pooled["oe"].PI; !(abs(pi[0]-dl[0]) < 1e-7 && abs(pi[1]-dl[1]) < 1e-7) {
		t.Errorf("plan: O/E prediction interval %v, want %v (DerSimonian–Laird)", pi, dl)
	}
}

// TestAuditClustersBadFlags checks that a bad option is a usage error
// (exit status 2) naming the flag, and that nothing is written.
func TestAuditClustersBadFlags(t *testing.T) {
	for _, c := range []struct {
		flags []string
		want  string
	}{
		{[]string{"--tau2-method", "ml"}, "--tau2-method ml"},
		{[]string{"--ci-method", "t"}, "--ci-method t"},
		{[]string{"--accept-slope", "1.1:0.9"}, "--accept-slope 1.1:0.9"},
		{[]string{"--accept-auc", "1.2"}, "C-statistic 1.2"},
		{[]string{"--min-cluster-events", "0"}, "--min-cluster-events 0"},
	} {
		dir := t.TempDir()
		var stderr bytes.Buffer
		s := &streams{out: io.Discard, err: &stderr}
		args := append([]string{"audit", "--predicted", "risk", "--outcome", "outcome", "--event", "1", "--cohort", clustersCSV,
			"--cluster", "site", "--out", filepath.Join(dir, "a")}, c.flags...)
		if code := run(context.Background(), args, s); code != exitUsage {
			t.Errorf("%v: exit status %d, want %d", c.flags, code, exitUsage)
		}
		if !strings.Contains(stderr.String(), c.want) {
			t.Errorf("%v: stderr %q lacks %q", c.flags, stderr.String(), c.want)
		}
		if _, err := os.Stat(filepath.Join(dir, "a")); err == nil {
			t.Errorf("%v: the output folder was written", c.flags)
		}
	}
}

func mustAbs(t *testing.T, p string) string {
	t.Helper()
	a, err := filepath.Abs(p)
	if err != nil {
		t.Fatal(err)
	}
	return a
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
