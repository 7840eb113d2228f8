package audit_test

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/validate"
)

// splitByHospital writes the demo's later extract into one file per
// hospital (in order of first appearance) and returns the files with
// their hospitals.
func splitByHospital(t *testing.T, later, dir string) (paths, names []string) {
	t.Helper()
	raw, err := os.ReadFile(later)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSuffix(string(raw), "\n"), "\n")
	head := strings.Split(lines[0], ",")
	col := -1
	for j, h := range head {
		if h == "hospital" {
			col = j
		}
	}
	if col < 0 {
		t.Fatal("the demo's later extract has no hospital column")
	}
	by := map[string]*strings.Builder{}
	for _, l := range lines[1:] {
		h := strings.Split(l, ",")[col]
		b, ok := by[h]
		if !ok {
			b = &strings.Builder{}
			b.WriteString(lines[0] + "\n")
			by[h] = b
			names = append(names, h)
		}
		b.WriteString(l + "\n")
	}
	for i, h := range names {
		p := filepath.Join(dir, "h"+string(rune('a'+i))+".csv")
		if err := os.WriteFile(p, []byte(by[h].String()), 0o644); err != nil {
			t.Fatal(err)
		}
		paths = append(paths, p)
	}
	return paths, names
}

// TestClusterFilesAsOneCohort audits the demo's later extract split into
// one file per hospital and checks that every analysis that does not
// depend on the row order (the measures, categorical and banded
// subgroups, the case-mix comparison, the update, the per-cluster
// measures and their pooling, the calibration by month) gives what the
// audit of the one file with --cluster hospital gives, and that an
// unknown level in one file is refused naming that file and its line.
func TestClusterFilesAsOneCohort(t *testing.T) {
	dir := t.TempDir()
	d := fixture.WriteDemo(t, dir)
	paths, names := splitByHospital(t, d.Later, dir)
	base := audit.Config{Model: d.Frozen, Dev: audit.Input{Path: d.Development}, Subgroups: []string{"sex", "smoker"},
		Bands: []validate.Banding{{Column: "age", Cuts: []float64{65, 75}}}, Update: filepath.Join(dir, "u.yaml"),
		OverTime: audit.OverTime{DateColumn: "admission_date", ARL: 500}}
	whole := base
	whole.Cohort = audit.Input{Path: d.Later}
	whole.Clusters = audit.ClusterConfig{Column: "hospital"}
	files := base
	for i, p := range paths {
		files.Clusters.Files = append(files.Clusters.Files, audit.ClusterFile{Name: names[i], Input: audit.Input{Path: p}})
	}
	ctx := context.Background()
	rw, err := audit.Run(ctx, whole)
	if err != nil {
		t.Fatal(err)
	}
	rf, err := audit.Run(ctx, files)
	if err != nil {
		t.Fatal(err)
	}
	aw, af := rw.Audit, rf.Audit
	same := func(what string, x, y any) {
		t.Helper()
		if p := differ(t, x, y); p != "" {
			t.Errorf("%s: %s", what, p)
		}
	}
	same("cohort", af.Cohort, aw.Cohort)
	same("discrimination", af.Discrimination, aw.Discrimination)
	same("calibration", af.Calibration, aw.Calibration)
	same("overall", af.Overall, aw.Overall)
	same("subgroups", af.Subgroups, aw.Subgroups)
	same("case-mix", af.CaseMix, aw.CaseMix)
	same("update steps", af.Update.Steps, aw.Update.Steps)
	same("periods", af.OverTime.Periods, aw.OverTime.Periods)
	same("pooled", af.Clusters.Pooled, aw.Clusters.Pooled)
	if af.Clusters.Column != audit.ClusterFilesLabel || len(af.Clusters.PerCluster) != len(aw.Clusters.PerCluster) {
		t.Fatalf("clusters %q (%d), want %q (%d)", af.Clusters.Column, len(af.Clusters.PerCluster), audit.ClusterFilesLabel, len(aw.Clusters.PerCluster))
	}
	for _, c := range af.Clusters.PerCluster {
		for _, w := range aw.Clusters.PerCluster {
			if w.Cluster == c.Cluster {
				same("cluster "+c.Cluster, c, w)
			}
		}
	}

	// A level the model does not know, in the third file only.
	raw, err := os.ReadFile(paths[2])
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitN(string(raw), "\n", 4)
	bad := strings.Replace(lines[2], ",never,", ",sometimes,", 1)
	bad = strings.Replace(strings.Replace(bad, ",former,", ",sometimes,", 1), ",current,", ",sometimes,", 1)
	if err := os.WriteFile(paths[2], []byte(lines[0]+"\n"+lines[1]+"\n"+bad+"\n"+lines[3]), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = audit.Run(ctx, files)
	var ce *cohort.Error
	if !errors.As(err, &ce) || ce.File != paths[2] || ce.Line != 3 {
		t.Errorf("an unknown level on line 3 of %s: %v", paths[2], err)
	}
}

// differ compares two results through their JSON, numbers to 1e-9
// relative (the rows are summed in another order), and returns the
// first difference.
func differ(t *testing.T, x, y any) string {
	t.Helper()
	var a, b any
	for _, v := range []struct {
		in  any
		out *any
	}{{x, &a}, {y, &b}} {
		raw, err := jsonout.Marshal(v.in)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(raw, v.out); err != nil {
			t.Fatal(err)
		}
	}
	return walkDiff(a, b, "")
}

func walkDiff(a, b any, path string) string {
	switch x := a.(type) {
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok || len(x) != len(y) {
			return path + ": keys differ"
		}
		for k := range x {
			if p := walkDiff(x[k], y[k], path+"."+k); p != "" {
				return p
			}
		}
	case []any:
		y, ok := b.([]any)
		if !ok || len(x) != len(y) {
			return path + ": lengths differ"
		}
		for i := range x {
			if p := walkDiff(x[i], y[i], path+"["+string(rune('0'+i%10))+"]"); p != "" {
				return p
			}
		}
	case float64:
		y, ok := b.(float64)
		if !ok || math.Abs(x-y) > 1e-9*math.Max(1, math.Abs(y)) {
			return path + ": numbers differ"
		}
	default:
		if a != b {
			return path + ": values differ"
		}
	}
	return ""
}
