package audit_test

import (
	"context"
	"encoding/csv"
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/validate"
)

// recodeOutcome copies the demo's later extract with its outcome column
// ppc_30d renamed to column and its codes yes/no replaced as codes says.
func recodeOutcome(t *testing.T, from, to, column string, codes map[string]string) {
	t.Helper()
	f, err := os.Open(from)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	k := -1
	for j, h := range rows[0] {
		if h == "ppc_30d" {
			k = j
		}
	}
	if k < 0 {
		t.Fatal("the demo extract has no ppc_30d column")
	}
	rows[0][k] = column
	for _, r := range rows[1:] {
		if c, ok := codes[r[k]]; ok {
			r[k] = c
		}
	}
	var b strings.Builder
	w := csv.NewWriter(&b)
	if err := w.WriteAll(rows); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(to, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}

// TestCohortOutcomeCoding: a frozen model (outcome ppc_30d, event "yes",
// non-event "no") audited on an extract that codes the same outcome
// otherwise, told how by Config.Outcome, measures exactly what it
// measures on the extract in the model's own codes (the reference: the
// same audit of the demo's later extract), names the coding in the
// audit, and leaves the model's identity alone; codings that cannot
// apply are refused with the reason.
func TestCohortOutcomeCoding(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	ctx := context.Background()
	ref, err := audit.Run(ctx, demoAudit(d))
	if err != nil {
		t.Fatal(err)
	}
	numeric := filepath.Join(d.Dir, "numeric.csv")
	recodeOutcome(t, d.Later, numeric, "complication", map[string]string{"yes": "1", "no": "0"})
	sameColumn := filepath.Join(d.Dir, "same_column.csv")
	recodeOutcome(t, d.Later, sameColumn, "ppc_30d", map[string]string{"yes": "Y", "no": "N"})
	third := filepath.Join(d.Dir, "third.csv")
	recodeOutcome(t, d.Later, third, "complication", map[string]string{"yes": "1", "no": "9"})
	modelSHA := sha256File(t, d.Frozen)
	for _, tc := range []struct {
		name   string
		cohort string
		dev    bool
		coding *audit.CohortOutcome
		// want is the coding the audit records; nil with wantErr.
		want *validate.CohortOutcome
		// wantErr, when set, is in the error's message, of kind kind
		// (nil: a *ConfigError).
		wantErr string
		kind    error
	}{
		{"column, event and non-event: the reference's numbers", numeric, true, &audit.CohortOutcome{Column: "complication", Event: "1", NonEvent: "0"},
			&validate.CohortOutcome{Column: "complication", Event: "1", NonEvent: "0", ModelColumn: "ppc_30d", ModelEvent: "yes", ModelNonEvent: "no"}, "", nil},
		{"event alone: every other value a non-event", numeric, false, &audit.CohortOutcome{Column: "complication", Event: "1"},
			&validate.CohortOutcome{Column: "complication", Event: "1", ModelColumn: "ppc_30d", ModelEvent: "yes", ModelNonEvent: "no"}, "", nil},
		{"the model's column, other codes", sameColumn, true, &audit.CohortOutcome{Event: "Y", NonEvent: "N"},
			&validate.CohortOutcome{Column: "ppc_30d", Event: "Y", NonEvent: "N", ModelColumn: "ppc_30d", ModelEvent: "yes", ModelNonEvent: "no"}, "", nil},
		{"a third value with a non-event given is still an error", third, false, &audit.CohortOutcome{Column: "complication", Event: "1", NonEvent: "0"},
			nil, `neither the event "1" nor the non-event "0"`, cohort.ErrOutcome},
		{"without the coding, the error hints at it first", sameColumn, false, nil,
			nil, `neither the event "yes" nor the non-event "no"; values seen: "N", "Y" (the model names its outcome's codes: if this cohort codes the outcome otherwise, say how with --outcome, --event and --non-event beside --model`, cohort.ErrOutcome},
		{"a predictor is not the outcome", numeric, false, &audit.CohortOutcome{Column: "age", Event: "1"}, nil, `--outcome "age" is a predictor of the model`, nil},
		{"event and non-event the same", numeric, false, &audit.CohortOutcome{Column: "complication", Event: "1", NonEvent: "1"}, nil, `--event and --non-event are the same value "1"`, nil},
		{"a non-event equal to the model's event", sameColumn, false, &audit.CohortOutcome{NonEvent: "yes"}, nil, `--non-event "yes" is the model's event value`, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			cfg := audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: tc.cohort}, Outcome: tc.coding, Tool: "riskaudit test"}
			if tc.dev {
				// The development data keep the model's own codes.
				cfg.Dev = audit.Input{Path: d.Development}
			}
			res, err := audit.Run(ctx, cfg)
			if tc.wantErr != "" {
				var ce *audit.ConfigError
				switch {
				case err == nil || !strings.Contains(err.Error(), tc.wantErr):
					t.Fatalf("got %v, want %q", err, tc.wantErr)
				case tc.kind == nil && !errors.As(err, &ce):
					t.Errorf("%v is not a *ConfigError", err)
				case tc.kind != nil && !errors.Is(err, tc.kind):
					t.Errorf("%v is not of kind %v", err, tc.kind)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if got := res.Audit.Model.CohortOutcome; !reflect.DeepEqual(got, tc.want) {
				t.Errorf("coding recorded %+v, want %+v", got, tc.want)
			}
			if m := res.Audit.Model; m.Outcome != "ppc_30d" || m.Event != "yes" {
				t.Errorf("the model's outcome became %s = %s", m.Outcome, m.Event)
			}
			if in := res.Audit.Provenance.Inputs[0]; in.Role != "model" || in.SHA256 != modelSHA {
				t.Errorf("model input %+v, want the file's SHA-256 %s", in, modelSHA)
			}
			got, want := auditJSON(t, res.Audit), auditJSON(t, ref.Audit)
			for _, k := range []string{"discrimination", "calibration", "overall", "net_benefit"} {
				if !reflect.DeepEqual(got[k], want[k]) {
					t.Errorf("%s differs from the audit in the model's own codes", k)
				}
			}
			if tc.dev && !reflect.DeepEqual(res.Audit.Development.Apparent, ref.Audit.Development.Apparent) {
				t.Error("the development data's measures changed")
			}
		})
	}
}

// TestCohortOutcomeNeedsCohort: without a cohort the coding has nothing
// to apply to (the development data keep the model's codes), and a
// column of risks names its outcome itself.
func TestCohortOutcomeNeedsCohort(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	for _, tc := range []struct {
		name string
		cfg  audit.Config
		want string
	}{
		{"development data only", audit.Config{Model: d.Recipe, Dev: audit.Input{Path: d.Development}, Outcome: &audit.CohortOutcome{Event: "1"}},
			"the development data (--dev) are read with the model's own codes"},
		{"a column of risks", audit.Config{Predicted: &audit.Predicted{Column: "p", Outcome: "y", Event: "1"}, Cohort: audit.Input{Path: d.Later}, Outcome: &audit.CohortOutcome{Event: "1"}},
			"the cohort's outcome coding goes with --model"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := audit.Run(context.Background(), tc.cfg)
			var ce *audit.ConfigError
			if !errors.As(err, &ce) || !strings.Contains(err.Error(), tc.want) {
				t.Errorf("got %v, want a *ConfigError with %q", err, tc.want)
			}
		})
	}
}

// TestCompareCohortOutcome: compare reads both models with the cohort's
// coding, so the comparison of the demo's model with itself on the
// recoded extract gives the AUC of the audit in the model's own codes
// (the reference), and records the coding; without it the outcome error
// hints at the flags.
func TestCompareCohortOutcome(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	ctx := context.Background()
	ref, err := audit.Run(ctx, demoAudit(d))
	if err != nil {
		t.Fatal(err)
	}
	sameColumn := filepath.Join(d.Dir, "same_column.csv")
	recodeOutcome(t, d.Later, sameColumn, "ppc_30d", map[string]string{"yes": "Y", "no": "N"})
	cfg := audit.CompareConfig{Models: []string{d.Frozen, d.Frozen}, Cohort: audit.Input{Path: sameColumn}, Outcome: &audit.CohortOutcome{Event: "Y", NonEvent: "N"},
		Measures: validate.CompareOptions{Replicates: 100, Seed: 1}}
	res, err := audit.Compare(ctx, cfg)
	if err != nil {
		t.Fatal(err)
	}
	want := &validate.CohortOutcome{Column: "ppc_30d", Event: "Y", NonEvent: "N", ModelColumn: "ppc_30d", ModelEvent: "yes", ModelNonEvent: "no"}
	if got := res.Comparison.CohortOutcome; !reflect.DeepEqual(got, want) {
		t.Errorf("coding %+v, want %+v", got, want)
	}
	if a, b := res.Comparison.DeLong.AUCA, ref.Audit.Discrimination.AUC; a != b {
		t.Errorf("AUC %v, want the audit's %v", a, b)
	}
	cfg.Outcome = nil
	if _, err := audit.Compare(ctx, cfg); err == nil || !errors.Is(err, cohort.ErrOutcome) || !strings.Contains(err.Error(), "say how with --outcome, --event and --non-event") {
		t.Errorf("without the coding: %v", err)
	}
	cfg.Outcome = &audit.CohortOutcome{Event: "Y", NonEvent: "Y"}
	var ce *audit.ConfigError
	if _, err := audit.Compare(ctx, cfg); !errors.As(err, &ce) {
		t.Errorf("event and non-event the same: %v, want a *ConfigError", err)
	}
}
