package report

import (
	"bytes"
	"regexp"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// provenanceAudit is a small audit whose provenance and purpose the
// tests set.
func provenanceAudit(t *testing.T, pv validate.Provenance, purpose *validate.Purpose) *validate.Audit {
	t.Helper()
	perf, err := validate.Assess([]float64{0, 1, 0, 1, 1, 0, 0, 1}, []float64{0.1, 0.8, 0.3, 0.6, 0.9, 0.2, 0.4, 0.5}, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return validate.NewAudit(validate.ModelInfo{Name: "m", Source: "frozen model", Spec: "m.yaml", Outcome: "y", Event: "1", Purpose: purpose}, pv, perf, nil, "")
}

// render writes the report with every run of spaces made one, so that
// the tests do not depend on the tables' padding.
func render(t *testing.T, a *validate.Audit) string {
	t.Helper()
	var b bytes.Buffer
	if err := Write(&b, a, nil); err != nil {
		t.Fatal(err)
	}
	return spaces.ReplaceAllString(b.String(), " ")
}

var spaces = regexp.MustCompile(` {2,}`)

// TestPurposeSection: the stated purpose heads the report, each field
// with where it came from; the fields nobody stated are named in a
// note, and a report without any purpose says so in bold.
func TestPurposeSection(t *testing.T) {
	spec := model.Purpose{IntendedUse: "review before surgery", Setting: "clinics", PredictionHorizon: "30 days"}
	plan := model.Purpose{Setting: "day units"}
	for _, c := range []struct {
		name       string
		purpose    *validate.Purpose
		want, not  []string
		beforeVerd bool
	}{
		{"spec and plan", validate.NewPurpose(spec, plan),
			[]string{"## Stated purpose", "| intended use | review before surgery | the model's spec", "day units", "the audit plan (in place of the spec's: clinics)",
				"Note: the target population and outcome definition are not stated"}, []string{"neither the model's spec"}, true},
		{"nothing stated", validate.NewPurpose(model.Purpose{}, model.Purpose{}),
			[]string{"**Note: neither the model's spec nor the audit plan states the model's purpose** (intended use, target population, setting, outcome definition and prediction horizon)"}, []string{"| intended use"}, true},
		{"all stated", validate.NewPurpose(model.Purpose{IntendedUse: "a", TargetPopulation: "b", Setting: "c", OutcomeDefinition: "d", PredictionHorizon: "e"}, model.Purpose{}),
			[]string{"| prediction horizon | e |"}, []string{"are not stated in the model", "**not stated**"}, true},
	} {
		t.Run(c.name, func(t *testing.T) {
			md := render(t, provenanceAudit(t, validate.Provenance{AuditDate: "2026-01-31", AuditDateSource: validate.DateToday}, c.purpose))
			for _, w := range c.want {
				if !strings.Contains(md, w) {
					t.Errorf("report lacks %q", w)
				}
			}
			for _, w := range c.not {
				if strings.Contains(md, w) {
					t.Errorf("report has %q", w)
				}
			}
			if c.beforeVerd && strings.Index(md, "## Stated purpose") > strings.Index(md, "## Summary") {
				t.Error("the stated purpose must come before the summary")
			}
		})
	}
}

// TestAuditDateSources: the header and the provenance give the audit
// date and where it came from, for every source.
func TestAuditDateSources(t *testing.T) {
	for source, words := range map[string]string{
		validate.DateFromFlag:   "given by --audit-date",
		validate.DateFromPlan:   "from the audit plan",
		validate.DateToday:      "the day the audit was run",
		validate.DateFromConfig: "set by the program that ran the audit",
	} {
		md := render(t, provenanceAudit(t, validate.Provenance{AuditDate: "2026-02-28", AuditDateSource: source}, nil))
		want := "Audit date 2026-02-28 (" + words + ")."
		if strings.Count(md, want) != 2 {
			t.Errorf("%s: %q should appear in the header and the provenance:\n%s", source, want, md[:400])
		}
	}
}

// TestProvenancePlanRenamesFittedModel: the plan is an input row with
// its name and SHA-256, every rename is listed with where it came from
// and what it applied to, and the model fitted inside the audit is
// named with its hash.
func TestProvenancePlanRenamesFittedModel(t *testing.T) {
	pv := validate.Provenance{AuditDate: "2026-02-28", AuditDateSource: validate.DateFromPlan,
		Plan:    &validate.PlanFile{Path: "monthly.yaml", Name: "monthly", SHA256: "c0ffee"},
		Renames: []validate.Rename{{From: "age_years", To: "age", Source: "plan", AppliedTo: []string{"cohort", "development"}}, {From: "x", To: "y", Source: "flag", AppliedTo: []string{}}}}
	a := provenanceAudit(t, pv, nil)
	a.Model.FittedModel = &validate.OutputFile{Path: "out/fitted_model.yaml", SHA256: "beef"}
	md := render(t, a)
	for _, w := range []string{"| audit plan | `monthly.yaml` (monthly) | `c0ffee` |", "| `age_years` | `age` | the audit plan | cohort, development |",
		"| `x` | `y` | --rename | no file had this column |", "written beside this report as `out/fitted_model.yaml` (SHA-256 `beef`)"} {
		if !strings.Contains(md, w) {
			t.Errorf("report lacks %q", w)
		}
	}
	md = render(t, provenanceAudit(t, validate.Provenance{AuditDate: "2026-02-28", AuditDateSource: validate.DateToday}, nil))
	if !strings.Contains(md, "Column renames: none.") || strings.Contains(md, "| audit plan") {
		t.Error("without a plan or renames the report should list neither")
	}
}

// TestTripodAppendix: the appendix follows the caution, and what it
// says the report covers follows the analyses that ran.
func TestTripodAppendix(t *testing.T) {
	a := provenanceAudit(t, validate.Provenance{AuditDate: "2026-02-28", AuditDateSource: validate.DateToday}, validate.NewPurpose(model.Purpose{}, model.Purpose{}))
	md := render(t, a)
	if i, j := strings.Index(md, "## Caution"), strings.Index(md, "## Appendix: reporting checklist (TRIPOD+AI)"); j < 0 || j < i {
		t.Fatalf("the appendix must follow the caution (%d, %d)", i, j)
	}
	row := func(md, item string) string {
		for _, line := range strings.Split(md, "\n") {
			if strings.HasPrefix(line, "| "+item+" ") {
				return line
			}
		}
		t.Fatalf("no row for item %s", item)
		return ""
	}
	if r := row(md, "24"); !strings.Contains(r, "none was done in this audit") {
		t.Errorf("without updating, item 24: %s", r)
	}
	if r := row(md, "6b"); !strings.Contains(r, "| —") || !strings.Contains(r, "eligibility criteria of the cohort") {
		t.Errorf("item 6b is the team's alone: %s", r)
	}
	if r := row(md, "3b"); !strings.Contains(r, "the target population, intended use and setting (a `purpose` section") {
		t.Errorf("item 3b without a purpose: %s", r)
	}
	a.Update = &validate.Update{Chosen: "recalibration in the large"}
	a.Subgroups = []validate.Subgroup{{Column: "sex", Level: "F"}}
	a.Model.Purpose = validate.NewPurpose(model.Purpose{TargetPopulation: "adults", IntendedUse: "review", Setting: "clinics"}, model.Purpose{})
	md = render(t, a)
	if r := row(md, "24"); !strings.Contains(r, "Model updating") {
		t.Errorf("with updating, item 24: %s", r)
	}
	if r := row(md, "23a"); !strings.Contains(r, "Subgroups | —") {
		t.Errorf("with subgroups, item 23a is covered: %s", r)
	}
	if r := row(md, "3b"); !strings.Contains(r, "Stated purpose: target population, intended use, setting") || strings.Contains(r, "`purpose` section") {
		t.Errorf("item 3b with a purpose: %s", r)
	}
	a.Model.Source, a.Model.Column = "predicted risks", "risk"
	if r := row(render(t, a), "12g"); !strings.Contains(r, "how the risks in that column were computed") {
		t.Errorf("for a column of risks, item 12g: %s", r)
	}
	if !strings.Contains(md, "Covered by this report: ") || !strings.Contains(md, "For the team alone: ") {
		t.Error("the appendix should end with the items by who supplies them")
	}
}
