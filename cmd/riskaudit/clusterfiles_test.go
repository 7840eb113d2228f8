package main

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// splitBySite writes the rows of the invented multicentre cohort
// (testdata/reference/clusters.csv) into one file per site, dir/A.csv
// for "site A" and so on, and returns the files in site order.
func splitBySite(t *testing.T, dir string) []string {
	t.Helper()
	f, err := os.Open(clustersCSV)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	by := map[string][][]string{}
	var order []string
	for _, r := range rows[1:] {
		if _, ok := by[r[0]]; !ok {
			order = append(order, r[0])
		}
		by[r[0]] = append(by[r[0]], r)
	}
	var paths []string
	for _, site := range order {
		var b bytes.Buffer
		w := csv.NewWriter(&b)
		_ = w.Write(rows[0])
		_ = w.WriteAll(by[site])
		p := filepath.Join(dir, strings.TrimPrefix(site, "site ")+".csv")
		if err := os.WriteFile(p, b.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	return paths
}

type clusterFilesAudit struct {
	Cohort struct {
		Rows   int `json:"rows"`
		Events int `json:"events"`
	} `json:"cohort"`
	Discrimination struct {
		AUC float64 `json:"auc"`
	} `json:"discrimination"`
	Calibration struct {
		OE float64 `json:"oe"`
	} `json:"calibration"`
	Clusters struct {
		Column     string `json:"column"`
		PerCluster []struct {
			Cluster string  `json:"cluster"`
			N       int     `json:"n"`
			Events  int     `json:"events"`
			AUC     float64 `json:"auc"`
			AUCSE   float64 `json:"auc_se"`
			OE      float64 `json:"oe"`
			Slope   float64 `json:"slope"`
		} `json:"per_cluster"`
		Pooled map[string]struct {
			Estimate float64    `json:"estimate"`
			PI       [2]float64 `json:"prediction_interval"`
		} `json:"pooled"`
	} `json:"clusters"`
	Provenance struct {
		Inputs []struct {
			Role    string `json:"role"`
			Path    string `json:"path"`
			SHA256  string `json:"sha256"`
			Cluster string `json:"cluster"`
		} `json:"inputs"`
	} `json:"provenance"`
}

func readClusterFilesAudit(t *testing.T, dir string) clusterFilesAudit {
	t.Helper()
	raw, err := os.ReadFile(filepath.Join(dir, "audit.json"))
	if err != nil {
		t.Fatal(err)
	}
	var a clusterFilesAudit
	if err := json.Unmarshal(raw, &a); err != nil {
		t.Fatal(err)
	}
	return a
}

// TestClusterFiles audits the invented multicentre cohort given as one
// file per site (--cluster-file) and checks it against the outside
// reference of the same rows, testdata/reference/clusters.json (each
// site's AUC by scikit-learn, O/E and slope by statsmodels GLM, the
// pooled REML estimates and prediction intervals by a transcription of
// Viechtbauer 2005 and scipy.stats; make_reference.py), against the
// audit of the one file with --cluster site (the overall measures are
// those of all rows together), and the provenance against each file's
// SHA-256 computed here with crypto/sha256; then the same from the
// plan's cluster_files.
func TestClusterFiles(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join("..", "..", "testdata", "reference", "clusters.json"))
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		PerCluster []struct {
			Cluster string  `json:"cluster"`
			N       int     `json:"n"`
			Events  int     `json:"events"`
			AUC     float64 `json:"auc"`
			OE      float64 `json:"oe"`
			Slope   float64 `json:"slope"`
		} `json:"per_cluster"`
		Pooled map[string]map[string]struct {
			Estimate float64    `json:"estimate"`
			PI       [2]float64 `json:"prediction_interval"`
		} `json:"pooled"`
	}
	if err := json.Unmarshal(raw, &ref); err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	files := splitBySite(t, dir)
	s := &streams{out: io.Discard, err: io.Discard}
	predicted := []string{"--predicted", "risk", "--outcome", "outcome", "--event", "1"}
	out := filepath.Join(dir, "files")
	args := append([]string{"audit", "--out", out, "-q"}, predicted...)
	for _, f := range files {
		// One named as NAME=PATH, the others by their base name.
		if strings.HasSuffix(f, "A.csv") {
			args = append(args, "--cluster-file", "site A="+f)
		} else {
			args = append(args, "--cluster-file", f)
		}
	}
	if code := run(context.Background(), args, s); code != exitOK {
		t.Fatalf("--cluster-file: exit status %d", code)
	}
	whole := filepath.Join(dir, "whole")
	if code := run(context.Background(), append([]string{"audit", "--cohort", clustersCSV, "--cluster", "site", "--out", whole, "-q"}, predicted...), s); code != exitOK {
		t.Fatalf("--cluster: exit status %d", code)
	}
	a, w := readClusterFilesAudit(t, out), readClusterFilesAudit(t, whole)
	close := func(x, y float64) bool { return abs(x-y) <= 1e-9*max(1, abs(y)) }
	if a.Cohort != w.Cohort || !close(a.Discrimination.AUC, w.Discrimination.AUC) || !close(a.Calibration.OE, w.Calibration.OE) {
		t.Errorf("overall: files %+v AUC %v O/E %v; one file %+v AUC %v O/E %v", a.Cohort, a.Discrimination.AUC, a.Calibration.OE,
			w.Cohort, w.Discrimination.AUC, w.Calibration.OE)
	}
	if a.Clusters.Column != "cluster" || len(a.Clusters.PerCluster) != len(ref.PerCluster) {
		t.Fatalf("clusters %q, %d of them; want \"cluster\", %d", a.Clusters.Column, len(a.Clusters.PerCluster), len(ref.PerCluster))
	}
	for i, c := range a.Clusters.PerCluster {
		r := ref.PerCluster[i] // the files are in site order, as the reference
		name := strings.TrimPrefix(r.Cluster, "site ")
		if i == 0 {
			name = r.Cluster
		}
		if c.Cluster != name || c.N != r.N || c.Events != r.Events || !(abs(c.AUC-r.AUC) < 1e-9) || !(abs(c.OE-r.OE) < 1e-9) || !(abs(c.Slope-r.Slope) < 1e-6) {
			t.Errorf("cluster %d: %+v, reference %+v", i, c, r)
		}
	}
	for m, p := range a.Clusters.Pooled {
		r := ref.Pooled["reml"][m]
		if !(abs(p.Estimate-r.Estimate) < 1e-6) || !(abs(p.PI[0]-r.PI[0]) < 1e-6) || !(abs(p.PI[1]-r.PI[1]) < 1e-6) {
			t.Errorf("pooled %s: %v %v, reference %v %v", m, p.Estimate, p.PI, r.Estimate, r.PI)
		}
	}
	if len(a.Clusters.Pooled) != 4 {
		t.Errorf("%d pooled measures, want 4", len(a.Clusters.Pooled))
	}
	// Provenance: the cohort names every file, each file its SHA-256 and
	// cluster; the cohort's SHA-256 is that of the list "NAME\tSHA\tPATH\n".
	var list strings.Builder
	k := 0
	for _, in := range a.Provenance.Inputs {
		switch in.Role {
		case "cohort":
			if in.Path != strings.Join(files, " + ") {
				t.Errorf("cohort input %q", in.Path)
			}
		case "cluster file":
			b, err := os.ReadFile(files[k])
			if err != nil {
				t.Fatal(err)
			}
			sum := sha256.Sum256(b)
			if in.Path != files[k] || in.SHA256 != hex.EncodeToString(sum[:]) || in.Cluster != a.Clusters.PerCluster[k].Cluster {
				t.Errorf("cluster file %d: %+v, want %s with SHA-256 %x", k, in, files[k], sum)
			}
			fmt.Fprintf(&list, "%s\t%s\t%s\n", in.Cluster, in.SHA256, in.Path)
			k++
		}
	}
	if k != len(files) {
		t.Errorf("%d cluster files in the provenance, want %d", k, len(files))
	}
	sum := sha256.Sum256([]byte(list.String()))
	for _, in := range a.Provenance.Inputs {
		if in.Role == "cohort" && in.SHA256 != hex.EncodeToString(sum[:]) {
			t.Errorf("cohort SHA-256 %s, want %x (of the list of files)", in.SHA256, sum)
		}
	}
	md, err := os.ReadFile(filepath.Join(out, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(md, []byte("## Across `cluster`\n")) || !bytes.Contains(md, []byte("| `site A` ")) {
		t.Error("report.md has no section across the cluster files, or no row for the cluster named site A")
	}

	// The plan's cluster_files, relative to the plan's folder.
	planFile := filepath.Join(dir, "plan.yaml")
	var text strings.Builder
	fmt.Fprintf(&text, "predicted: risk\noutcome: outcome\nevent: 1\nout: planned\ncluster_files:\n")
	for _, f := range files {
		fmt.Fprintf(&text, "  %s: %s\n", strings.TrimSuffix(filepath.Base(f), ".csv"), filepath.Base(f))
	}
	if err := os.WriteFile(planFile, []byte(text.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	if code := run(context.Background(), []string{"audit", "--plan", planFile, "-q"}, s); code != exitOK {
		t.Fatalf("plan: exit status %d", code)
	}
	pa := readClusterFilesAudit(t, filepath.Join(dir, "planned"))
	if len(pa.Clusters.PerCluster) != len(files) || pa.Clusters.PerCluster[1].Cluster != "B" || !close(pa.Clusters.Pooled["oe"].Estimate, a.Clusters.Pooled["oe"].Estimate) {
		t.Errorf("plan: clusters %+v", pa.Clusters.PerCluster)
	}
}

// TestClusterFilesRefused checks the refusals of cluster files and of
// the options across clusters without a cluster source: one line on
// stderr naming the flag, the file or the plan's line, the exit status,
// and nothing written.
func TestClusterFilesRefused(t *testing.T) {
	dir := t.TempDir()
	files := splitBySite(t, dir)
	// A file without the outcome column.
	broken := filepath.Join(dir, "broken.csv")
	if err := os.WriteFile(broken, []byte("site,risk\nsite X,0.2\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	clusters := filepath.Join(dir, "clusters.yaml")
	if err := os.WriteFile(clusters, []byte("predicted: risk\noutcome: outcome\nevent: 1\nclusters:\n  tau2_method: dl\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	both := filepath.Join(dir, "both.yaml")
	if err := os.WriteFile(both, []byte("predicted: risk\noutcome: outcome\nevent: 1\ncohort: A.csv\ncluster_files: [B.csv, C.csv]\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	twice := filepath.Join(dir, "twice.yaml")
	if err := os.WriteFile(twice, []byte("predicted: risk\noutcome: outcome\nevent: 1\ncluster_files: [B.csv, x/B.csv]\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	predicted := []string{"--predicted", "risk", "--outcome", "outcome", "--event", "1"}
	cf := func(paths ...string) []string {
		var out []string
		for _, p := range paths {
			out = append(out, "--cluster-file", p)
		}
		return out
	}
	for _, c := range []struct {
		name  string
		args  []string
		code  int
		wants []string
	}{
		{"with --cluster", append(cf(files[0], files[1]), "--cluster", "site"), exitUsage, []string{"--cluster", "--cluster-file", "not both"}},
		{"with --cohort", append(cf(files[0], files[1]), "--cohort", clustersCSV), exitUsage, []string{"--cluster-file and --cohort"}},
		{"one file", cf(files[0]), exitUsage, []string{"at least two files"}},
		{"one name twice", cf("x="+files[0], "x="+files[1]), exitUsage, []string{files[0], files[1], `"x"`}},
		{"a file without the outcome", cf(files[0], broken), exitBadInput, []string{broken, "outcome"}},
		{"--tau2-method alone", []string{"--cohort", clustersCSV, "--tau2-method", "dl"}, exitUsage, []string{"--tau2-method", "--cluster COLUMN or --cluster-file"}},
		{"--accept-oe alone", []string{"--cohort", clustersCSV, "--accept-oe", "0.9:1.1"}, exitUsage, []string{"--accept-oe"}},
		{"--min-cluster-events alone", []string{"--cohort", clustersCSV, "--min-cluster-events", "5"}, exitUsage, []string{"--min-cluster-events"}},
		{"the plan's clusters alone", []string{"--plan", clusters, "--cohort", clustersCSV}, exitUsage, []string{clusters + ": line 5: clusters:", "cluster_files"}},
		{"the plan's cohort and cluster files", []string{"--plan", both}, exitBadInput, []string{both + ": line 4: cohort:", "cluster_files (line 5)"}},
		{"the plan's cluster named twice", []string{"--plan", twice}, exitBadInput, []string{twice + ": line 4:", `"B" appears twice`}},
	} {
		t.Run(c.name, func(t *testing.T) {
			out := filepath.Join(t.TempDir(), "a")
			var stderr bytes.Buffer
			args := append(append([]string{"audit", "--out", out}, c.args...), predicted...)
			if code := run(context.Background(), args, &streams{out: io.Discard, err: &stderr}); code != c.code {
				t.Errorf("exit status %d, want %d (stderr %q)", code, c.code, stderr.String())
			}
			msg := stderr.String()
			if strings.Count(msg, "\n") != 1 {
				t.Errorf("stderr is not one line: %q", msg)
			}
			for _, w := range c.wants {
				if !strings.Contains(msg, w) {
					t.Errorf("stderr %q lacks %q", msg, w)
				}
			}
			if _, err := os.Stat(out); err == nil {
				t.Error("the output folder was written")
			}
		})
	}
	// The plan's clusters with --cluster on the command line is fine.
	out := filepath.Join(dir, "ok")
	if code := run(context.Background(), append([]string{"audit", "--plan", clusters, "--cohort", clustersCSV, "--cluster", "site", "--out", out, "-q"}, predicted...), &streams{out: io.Discard, err: io.Discard}); code != exitOK {
		t.Errorf("plan clusters with --cluster: exit status %d", code)
	}
}
