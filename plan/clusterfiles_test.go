package plan

import (
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestClusterFiles reads cluster_files as a mapping and as a list, with
// paths taken from the plan's folder, and refuses what cannot be one
// cohort of cluster files, with the line.
func TestClusterFiles(t *testing.T) {
	dir := t.TempDir()
	for _, tt := range []struct {
		name, yaml string
		want       []ClusterFile // Path relative to dir
		line       int           // of the error, when want is nil
		msg        string
	}{
		{"mapping", "cluster_files:\n  north: x/n.csv\n  south: /abs/s.csv\n", []ClusterFile{{"north", "x/n.csv", 2}, {"south", "/abs/s.csv", 3}}, 0, ""},
		{"list", "cluster_files: [a.csv, b.parquet]\n", []ClusterFile{{"a", "a.csv", 1}, {"b", "b.parquet", 1}}, 0, ""},
		{"one file", "cluster_files: [a.csv]\n", nil, 1, "at least two files"},
		{"a name twice", "cluster_files:\n  - a.csv\n  - x/a.csv\n", nil, 3, `"a" appears twice (first on line 2)`},
		{"empty path", "cluster_files:\n  a: \"\"\n  b: b.csv\n", nil, 2, "empty"},
		{"a number", "cluster_files: 3\n", nil, 1, "a mapping of cluster names to files, or a list"},
		{"with cohort", "cohort: c.csv\ncluster_files: [a.csv, b.csv]\n", nil, 1, "cohort: the plan gives cluster_files (line 2)"},
		{"with cluster", "cluster_files: [a.csv, b.csv]\ncluster: site\n", nil, 2, "cluster: the plan gives cluster_files (line 1)"},
	} {
		path := filepath.Join(dir, "plan.yaml")
		if err := os.WriteFile(path, []byte(tt.yaml), 0o644); err != nil {
			t.Fatal(err)
		}
		pl, err := Load(path)
		if tt.want == nil {
			var pe *Error
			if !errors.As(err, &pe) || pe.Line != tt.line || !strings.Contains(pe.Msg, tt.msg) || !errors.Is(err, ErrValue) {
				t.Errorf("%s: %v; want line %d, %q", tt.name, err, tt.line, tt.msg)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%s: %v", tt.name, err)
		}
		if !pl.Set["cluster_files"] || len(pl.ClusterFiles) != len(tt.want) {
			t.Fatalf("%s: %+v", tt.name, pl.ClusterFiles)
		}
		for i, w := range tt.want {
			if !filepath.IsAbs(w.Path) {
				w.Path = filepath.Join(dir, w.Path)
			}
			if pl.ClusterFiles[i] != w {
				t.Errorf("%s: file %d %+v, want %+v", tt.name, i, pl.ClusterFiles[i], w)
			}
		}
		// The files do not exist: CheckClusterFiles names the first.
		var pe *Error
		if err := pl.CheckClusterFiles(); !errors.As(err, &pe) || pe.Line != tt.want[0].Line || !strings.Contains(pe.Msg, "cluster_files: "+tt.want[0].Name+": ") {
			t.Errorf("%s: CheckClusterFiles %v", tt.name, err)
		}
	}
}

// TestClusterOptionsNeedASource: a clusters section is refused, at its
// line, when the plan names neither cluster nor cluster_files.
func TestClusterOptionsNeedASource(t *testing.T) {
	for _, tt := range []struct {
		yaml string
		line int // 0: accepted
	}{
		{"clusters:\n  tau2_method: dl\n", 2},
		{"cohort: a.csv\nclusters: {min_events: 5}\n", 2},
		{"cluster: site\nclusters:\n  ci_method: wald\n", 0},
		{"cluster_files: [a.csv, b.csv]\nclusters:\n  accept_auc: 0.75\n", 0},
		{"cohort: a.csv\n", 0},
	} {
		path := filepath.Join(t.TempDir(), "plan.yaml")
		if err := os.WriteFile(path, []byte(tt.yaml), 0o644); err != nil {
			t.Fatal(err)
		}
		pl, err := Load(path)
		if err != nil {
			t.Fatalf("%q: %v", tt.yaml, err)
		}
		err = pl.CheckClusterOptions()
		var pe *Error
		switch {
		case tt.line == 0 && err != nil:
			t.Errorf("%q: %v", tt.yaml, err)
		case tt.line > 0 && (!errors.As(err, &pe) || pe.Line != tt.line || !strings.Contains(pe.Msg, "cluster_files")):
			t.Errorf("%q: %v, want a refusal on line %d", tt.yaml, err, tt.line)
		}
	}
}
