package audit_test

import (
	"context"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/scenario"
	"github.com/riskaudit/riskaudit/validate"
)

// fixedClock is the clock of the tests that check dates.
func fixedClock() time.Time { return time.Date(2026, 4, 15, 10, 30, 0, 0, time.UTC) }

// TestAuditDateSources: the audit records its date and where the date
// came from in every case, and the history store files the audit under
// that date; a date that is not a calendar date is refused.
func TestAuditDateSources(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	ctx := context.Background()
	for _, c := range []struct{ date, source, wantDate, wantSource string }{
		{"", "", "2026-04-15", validate.DateToday},
		{"2026-03-31", "", "2026-03-31", validate.DateFromConfig},
		{"2026-03-31", validate.DateFromPlan, "2026-03-31", validate.DateFromPlan},
		{"2026-02-28", validate.DateFromFlag, "2026-02-28", validate.DateFromFlag},
	} {
		cfg := audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, Clock: fixedClock, AuditDate: c.date, AuditDateSource: c.source}
		res, err := audit.Run(ctx, cfg)
		if err != nil {
			t.Fatal(err)
		}
		pv := res.Audit.Provenance
		if pv.AuditDate != c.wantDate || pv.AuditDateSource != c.wantSource || pv.StartedAt != "2026-04-15T10:30:00Z" {
			t.Errorf("date %q from %q: recorded %q from %q (started %s)", c.date, c.source, pv.AuditDate, pv.AuditDateSource, pv.StartedAt)
		}
		store := filepath.Join(t.TempDir(), "h.sqlite")
		if err := audit.RecordHistory(store, "", res); err != nil {
			t.Fatal(err)
		}
		recs, err := history.Read(store)
		if err != nil {
			t.Fatal(err)
		}
		if len(recs) != 1 || recs[0].AuditDate != c.wantDate {
			t.Errorf("the history filed the audit of %s under %v", c.wantDate, recs)
		}
	}
	var ce *audit.ConfigError
	_, err := audit.Run(ctx, audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, AuditDate: "2026-02-30"})
	if !errors.As(err, &ce) || !strings.Contains(err.Error(), `"2026-02-30": give a date as YYYY-MM-DD`) {
		t.Errorf("an impossible date: %v", err)
	}
}

// TestRenamesInProvenance: every rename asked for is recorded with its
// source and the files that had the column, and the audit of a renamed
// extract is the audit of the original.
func TestRenamesInProvenance(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	ctx := context.Background()
	orig, err := os.ReadFile(d.Later)
	if err != nil {
		t.Fatal(err)
	}
	header, rest, _ := strings.Cut(string(orig), "\n")
	renamed := filepath.Join(d.Dir, "renamed.csv")
	if err := os.WriteFile(renamed, []byte(strings.Replace(header, "age", "age_years", 1)+"\n"+rest), 0o644); err != nil {
		t.Fatal(err)
	}
	cfg := demoAudit(d)
	want, err := audit.Run(ctx, cfg)
	if err != nil {
		t.Fatal(err)
	}
	cfg.Cohort = audit.Input{Path: renamed}
	cfg.Read = cohort.Options{Rename: map[string]string{"age_years": "age", "not_a_column": "bmi_band"}}
	cfg.RenameSources = map[string]string{"age_years": "plan"}
	got, err := audit.Run(ctx, cfg)
	if err != nil {
		t.Fatal(err)
	}
	wantRenames := []validate.Rename{
		{From: "age_years", To: "age", Source: "plan", AppliedTo: []string{"cohort"}},
		{From: "not_a_column", To: "bmi_band", Source: "config", AppliedTo: []string{}},
	}
	if !reflect.DeepEqual(got.Audit.Provenance.Renames, wantRenames) {
		t.Errorf("renames %+v, want %+v", got.Audit.Provenance.Renames, wantRenames)
	}
	if a, b := auditJSON(t, want.Audit), auditJSON(t, got.Audit); !reflect.DeepEqual(a, b) {
		t.Error("the audit of the renamed extract differs from the audit of the original")
	}
	if r := want.Audit.Provenance.Renames; r == nil || len(r) != 0 {
		t.Errorf("without renames the provenance lists %v, want an empty list", r)
	}
}

// recipeWithUpdate audits the demo recipe, fitted on the development
// data inside the audit, on the later extract, with a shrunken model and
// an update, and writes the folder.
func recipeWithUpdate(t *testing.T, d fixture.Demo, cfg audit.Config) (*audit.Result, string) {
	t.Helper()
	out := filepath.Join(t.TempDir(), "audit")
	cfg.Model, cfg.Cohort, cfg.Dev = d.Recipe, audit.Input{Path: d.Later}, audit.Input{Path: d.Development}
	cfg.Bootstrap, cfg.Shrunken = 10, filepath.Join(d.Dir, "shrunken.yaml")
	cfg.Update, cfg.UpdateBootstrap, cfg.OutDir, cfg.Tool, cfg.Clock = filepath.Join(d.Dir, "updated.yaml"), 0, out, "riskaudit test", fixedClock
	res, err := audit.Run(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := audit.Write(out, res, audit.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	return res, out
}

// TestPurposeThroughFitFreezeUpdate: the purpose a recipe states
// survives fitting (riskaudit fit and the fit inside an audit),
// shrinkage and updating: every frozen model written states it, and the
// audit reports it with its source; a plan's field replaces the spec's
// and the spec's text is kept beside it.
func TestPurposeThroughFitFreezeUpdate(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	recipe, err := model.ParseSpec("recipe.yaml", []byte(scenario.Recipe))
	if err != nil {
		t.Fatal(err)
	}
	want := recipe.Purpose
	if want.IntendedUse == "" || want.PredictionHorizon == "" {
		t.Fatalf("the demo recipe states no purpose: %+v", want)
	}
	res, out := recipeWithUpdate(t, d, audit.Config{Purpose: model.Purpose{Setting: "the plan's setting"}})
	for _, f := range []string{d.Frozen, filepath.Join(out, audit.FittedModelName), filepath.Join(d.Dir, "shrunken.yaml"), filepath.Join(d.Dir, "updated.yaml")} {
		sp, err := model.LoadSpec(f)
		if err != nil {
			t.Fatal(err)
		}
		if sp.Purpose != want {
			t.Errorf("%s states %+v, want %+v", f, sp.Purpose, want)
		}
	}
	pu := res.Audit.Model.Purpose
	if pu.Setting != "the plan's setting" || pu.From["setting"] != "plan" || pu.ReplacedFromModel["setting"] != want.Setting ||
		pu.IntendedUse != want.IntendedUse || pu.From["intended_use"] != "model" || len(pu.Missing) != 0 {
		t.Errorf("the audit's purpose: %+v", pu)
	}
	// A column of risks has no spec: the plan's purpose is all there is,
	// and the rest is listed as missing.
	pred := filepath.Join(d.Dir, "pred.csv")
	if err := os.WriteFile(pred, []byte("risk,y\n0.1,0\n0.8,1\n0.3,0\n0.6,1\n0.2,1\n0.4,0\n0.7,0\n0.9,1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	pr, err := audit.Run(context.Background(), audit.Config{Cohort: audit.Input{Path: pred}, Purpose: model.Purpose{Setting: "s"},
		Predicted: &audit.Predicted{Column: "risk", Outcome: "y", Event: "1"}})
	if err != nil {
		t.Fatal(err)
	}
	if pu := pr.Audit.Model.Purpose; pu.Setting != "s" || len(pu.Missing) != 4 || pu.From["setting"] != "plan" {
		t.Errorf("the purpose of a column of risks: %+v", pu)
	}
}

// TestParentModelFileAndHash: after an update the parent model is a file
// that exists and whose SHA-256 (computed here from its bytes) is the
// one the updated model and audit.json quote: the model fitted from the
// recipe inside the audit, written into the audit folder and listed in
// its manifest, or the frozen model given. The fitted model file is the
// model audited: auditing it gives the same measures.
func TestParentModelFileAndHash(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	res, out := recipeWithUpdate(t, d, audit.Config{})
	fitted := filepath.Join(out, audit.FittedModelName)
	sum := sha256File(t, fitted)
	u, fm := res.Audit.Update, res.Audit.Model.FittedModel
	updated, err := model.LoadSpec(filepath.Join(d.Dir, "updated.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	switch {
	case fm == nil || fm.Path != fitted || fm.SHA256 != sum:
		t.Errorf("model.fitted_model %+v, want %s with SHA-256 %s", fm, fitted, sum)
	case u.Parent != validate.ParentModel{Path: fitted, SHA256: sum, FittedInAudit: true}:
		t.Errorf("update.parent_model %+v, want %s with SHA-256 %s", u.Parent, fitted, sum)
	case updated.Provenance.ParentSHA256 != sum || updated.Provenance.ParentFile != fitted:
		t.Errorf("the updated model names its parent %s (%s), want %s (%s)", updated.Provenance.ParentFile, updated.Provenance.ParentSHA256, fitted, sum)
	}
	var man struct{ Files []string }
	b, err := os.ReadFile(filepath.Join(out, ".riskaudit.json"))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &man); err != nil || !slices.Contains(man.Files, audit.FittedModelName) {
		t.Errorf("the manifest does not list %s: %v %v", audit.FittedModelName, man.Files, err)
	}
	again, err := audit.Run(context.Background(), audit.Config{Model: fitted, Cohort: audit.Input{Path: d.Later}})
	if err != nil {
		t.Fatal(err)
	}
	if a, b := again.Audit.Discrimination.AUC, res.Audit.Discrimination.AUC; a != b || again.Audit.Calibration.CITL != res.Audit.Calibration.CITL {
		t.Errorf("the fitted model file audits to AUC %v, the audit measured %v", a, b)
	}
	// A frozen model given is its own parent.
	cfg := demoAudit(d)
	cfg.Update, cfg.UpdateBootstrap = filepath.Join(d.Dir, "updated2.yaml"), 0
	res, err = audit.Run(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	if p := res.Audit.Update.Parent; p != (validate.ParentModel{Path: d.Frozen, SHA256: sha256File(t, d.Frozen)}) || res.Audit.Model.FittedModel != nil || len(res.Folder) != 0 {
		t.Errorf("a frozen parent: %+v, fitted %+v", p, res.Audit.Model.FittedModel)
	}
}

// TestComparisonEqualsAudits: compare.json's calibration of each model
// equals the audit of that model on the same rows (the audit's own
// numbers are checked against statsmodels in the validate and metrics
// tests; here the comparison is held to them), its AUCs and Brier
// scores too, and its provenance names both models and the cohort with
// their SHA-256, computed here from the files' bytes.
func TestComparisonEqualsAudits(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	ctx := context.Background()
	// The demo's frozen model and its recalibration on the later extract
	// read the same columns, so both are measured on the same rows.
	cfg := demoAudit(d)
	second := filepath.Join(d.Dir, "updated.yaml")
	cfg.Update, cfg.UpdateBootstrap = second, 0
	res, err := audit.Run(ctx, cfg)
	if err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(second, res.Files[0].Data, 0o644); err != nil {
		t.Fatal(err)
	}
	const reps, seed = 200, 7
	cmp, err := audit.Compare(ctx, audit.CompareConfig{Models: []string{d.Frozen, second}, Cohort: audit.Input{Path: d.Later},
		Measures: validate.CompareOptions{Replicates: reps, Seed: seed}, Tool: "riskaudit test", CommandLine: "riskaudit compare …",
		Clock: fixedClock, AuditDate: "2026-03-31", AuditDateSource: validate.DateFromFlag})
	if err != nil {
		t.Fatal(err)
	}
	c := cmp.Comparison
	for i, m := range []string{d.Frozen, second} {
		one, err := audit.Run(ctx, audit.Config{Model: m, Cohort: audit.Input{Path: d.Later}, CIBootstrap: reps, Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		a := one.Audit
		got, auc, brier := c.Calibration.A, c.DeLong.AUCA, c.Brier.A
		if i == 1 {
			got, auc, brier = c.Calibration.B, c.DeLong.AUCB, c.Brier.B
		}
		k := a.Calibration
		for _, v := range []struct {
			name      string
			got, want float64
		}{
			{"citl", got.CITL, k.CITL}, {"citl_ci lower", got.CITLCI[0], k.CITLCI[0]}, {"citl_ci upper", got.CITLCI[1], k.CITLCI[1]},
			{"slope", got.Slope, k.Slope}, {"slope_ci lower", got.SlopeCI[0], k.SlopeCI[0]}, {"slope_ci upper", got.SlopeCI[1], k.SlopeCI[1]},
			{"oe", got.OE, k.OE}, {"oe_ci lower", got.OECI[0], k.OECI[0]}, {"oe_ci upper", got.OECI[1], k.OECI[1]},
			{"observed", got.Observed, k.Observed}, {"expected", got.Expected, k.Expected},
			{"ici", got.ICI, k.ICI}, {"ici_ci lower", got.ICICI[0], a.BootstrapCI.ICI[0]}, {"ici_ci upper", got.ICICI[1], a.BootstrapCI.ICI[1]},
			{"auc", auc, a.Discrimination.AUC}, {"brier", brier, a.Overall.Brier},
		} {
			if !(math.Abs(v.got-v.want) <= 1e-12*math.Abs(v.want)) {
				t.Errorf("model %d %s: comparison %v, audit %v", i, v.name, v.got, v.want)
			}
		}
	}
	if c.Calibration.Replicates != reps || c.Calibration.Seed != seed {
		t.Errorf("the ICI interval's bootstrap: %d replicates, seed %d", c.Calibration.Replicates, c.Calibration.Seed)
	}
	pv := c.Provenance
	wantInputs := []validate.InputFile{{Role: "model a", Path: d.Frozen, SHA256: sha256File(t, d.Frozen)},
		{Role: "model b", Path: second, SHA256: sha256File(t, second)}, {Role: "cohort", Path: d.Later, SHA256: sha256File(t, d.Later)}}
	if !reflect.DeepEqual(pv.Inputs, wantInputs) {
		t.Errorf("inputs %+v, want %+v", pv.Inputs, wantInputs)
	}
	if pv.AuditDate != "2026-03-31" || pv.AuditDateSource != validate.DateFromFlag || pv.StartedAt != "2026-04-15T10:30:00Z" ||
		pv.Tool != "riskaudit test" || pv.CommandLine != "riskaudit compare …" || pv.Renames == nil || pv.Plan != nil {
		t.Errorf("provenance %+v", pv)
	}
}
