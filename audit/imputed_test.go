package audit_test

import (
	"context"
	"errors"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/scenario"
)

// TestImputedStackedEqualsFiles: the same three completed datasets,
// stacked in one file or given as three files, give the same pooled
// audit; the files are recorded among the inputs.
func TestImputedStackedEqualsFiles(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	lines := strings.Split(strings.TrimRight(string(scenario.LaterMissing.Stacked()), "\n"), "\n")
	var stacked strings.Builder
	stacked.WriteString(lines[0] + "\n")
	_, header, _ := strings.Cut(lines[0], ",")
	files := make([]strings.Builder, 3)
	for j := range files {
		files[j].WriteString(header + "\n")
	}
	first := map[string]int{"1": 0, "2": 1, "3": 2}
	for _, l := range lines[1:] {
		num, rest, _ := strings.Cut(l, ",")
		if k, ok := first[num]; ok {
			stacked.WriteString(l + "\n")
			files[k].WriteString(rest + "\n")
		}
	}
	dir := t.TempDir()
	path := filepath.Join(dir, "stacked.csv")
	if err := os.WriteFile(path, []byte(stacked.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	var inputs []audit.Input
	for j := range files {
		p := filepath.Join(dir, "imp"+string(rune('1'+j))+".csv")
		if err := os.WriteFile(p, []byte(files[j].String()), 0o644); err != nil {
			t.Fatal(err)
		}
		inputs = append(inputs, audit.Input{Path: p})
	}
	ctx := context.Background()
	a, err := audit.Run(ctx, audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: path}, Imputation: audit.ImputationConfig{Column: scenario.ImputationColumn}})
	if err != nil {
		t.Fatal(err)
	}
	b, err := audit.Run(ctx, audit.Config{Model: d.Frozen, Imputation: audit.ImputationConfig{Files: inputs}})
	if err != nil {
		t.Fatal(err)
	}
	ia, ib := a.Audit.Imputation, b.Audit.Imputation
	if ia.M != 3 || ib.M != 3 || ia.Rows != 3000 || ia.PatientsImputed != ib.PatientsImputed || ia.PatientsImputed < 500 {
		t.Fatalf("stacked %+v\nfiles %+v", ia, ib)
	}
	if ia.Pooled.AUC.Estimate != ib.Pooled.AUC.Estimate || ia.Pooled.Slope.TotalVariance != ib.Pooled.Slope.TotalVariance || ia.Pooled.Brier.DF != ib.Pooled.Brier.DF {
		t.Errorf("stacked and files differ: %+v / %+v", ia.Pooled.AUC, ib.Pooled.AUC)
	}
	if a.Audit.Discrimination.AUC != ia.Pooled.AUC.Estimate {
		t.Errorf("top-level AUC %g, pooled %g", a.Audit.Discrimination.AUC, ia.Pooled.AUC.Estimate)
	}
	roles := map[string]string{}
	for _, in := range b.Audit.Provenance.Inputs {
		roles[in.Role] = in.Path
	}
	if roles["cohort"] != inputs[0].Path || roles["imputation 2"] != inputs[1].Path || roles["imputation 3"] != inputs[2].Path {
		t.Errorf("inputs %v", roles)
	}
	// One file, or both ways at once, is a usage error.
	for _, cfg := range []audit.Config{
		{Model: d.Frozen, Imputation: audit.ImputationConfig{Files: inputs[:1]}},
		{Model: d.Frozen, Cohort: audit.Input{Path: path}, Imputation: audit.ImputationConfig{Column: "imputation", Files: inputs}},
		{Model: d.Frozen, Cohort: audit.Input{Path: path}, Imputation: audit.ImputationConfig{Column: "imputation"}, CIBootstrap: 50},
	} {
		var ce *audit.ConfigError
		if _, err := audit.Run(ctx, cfg); !errors.As(err, &ce) {
			t.Errorf("%+v: %v, want a *ConfigError", cfg.Imputation, err)
		}
	}
	// A completed dataset with a patient's outcome changed is bad input
	// on that patient's line.
	changed := flipFirstOutcome(t, files[1].String(), "ppc_30d")
	bad := filepath.Join(dir, "changed.csv")
	if err := os.WriteFile(bad, []byte(changed), 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = audit.Run(ctx, audit.Config{Model: d.Frozen, Imputation: audit.ImputationConfig{Files: []audit.Input{inputs[0], {Path: bad}}}})
	var coe *cohort.Error
	if !errors.As(err, &coe) || coe.File != bad || coe.Line < 2 || !errors.Is(err, cohort.ErrOutcome) {
		t.Errorf("changed outcome: %v", err)
	}
}

// flipFirstOutcome changes the first patient's outcome (column name,
// levels yes and no) in CSV text, wherever the column stands.
func flipFirstOutcome(t *testing.T, csv, name string) string {
	t.Helper()
	lines := strings.SplitAfter(csv, "\n")
	col := slices.Index(strings.Split(strings.TrimSpace(lines[0]), ","), name)
	if col < 0 || len(lines) < 2 {
		t.Fatalf("no column %s to change", name)
	}
	f := strings.Split(strings.TrimSuffix(lines[1], "\n"), ",")
	f[col] = map[string]string{"yes": "no", "no": "yes"}[f[col]]
	lines[1] = strings.Join(f, ",") + "\n"
	return strings.Join(lines, "")
}
