package main

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestAuditProvenanceFromPlan runs audits from a plan and checks what
// audit.json and report.md record: the plan with its name and its
// SHA-256 (computed here with crypto/sha256 from the plan's bytes), the
// audit date with its source in each case (the plan's, a flag over the
// plan, today by SOURCE_DATE_EPOCH), and the renames of the plan and of
// --rename.
func TestAuditProvenanceFromPlan(t *testing.T) {
	t.Setenv("SOURCE_DATE_EPOCH", "1767225600") // 2026-01-01T00:00:00Z
	dir := t.TempDir()
	s := &streams{out: io.Discard, err: io.Discard}
	ctx := context.Background()
	if err := runDemo(ctx, filepath.Join(dir, "d"), s); err != nil {
		t.Fatal(err)
	}
	later, err := os.ReadFile(filepath.Join(dir, "d", "later.csv"))
	if err != nil {
		t.Fatal(err)
	}
	header, rest, _ := strings.Cut(string(later), "\n")
	header = strings.Replace(strings.Replace(header, "age", "age_years", 1), "bmi", "bmi_kg_m2", 1)
	if err := os.WriteFile(filepath.Join(dir, "renamed.csv"), []byte(header+"\n"+rest), 0o644); err != nil {
		t.Fatal(err)
	}
	planText := []byte("name: quarterly audit\nmodel: d/frozen.yaml\ncohort: renamed.csv\nout: out/q\naudit_date: 2026-03-31\nrename:\n  age_years: age\n")
	planFile := filepath.Join(dir, "quarterly.yaml")
	if err := os.WriteFile(planFile, planText, 0o644); err != nil {
		t.Fatal(err)
	}
	noDate := filepath.Join(dir, "nodate.yaml")
	if err := os.WriteFile(noDate, []byte("model: d/frozen.yaml\ncohort: d/later.csv\nout: out/n\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256(planText)
	planSHA := hex.EncodeToString(sum[:])
	type renameRec struct {
		From, To, Source string
		AppliedTo        []string `json:"applied_to"`
	}
	type prov struct {
		AuditDate       string `json:"audit_date"`
		AuditDateSource string `json:"audit_date_source"`
		CommandLine     string `json:"command_line"`
		Plan            *struct{ Path, Name, SHA256 string }
		Renames         []renameRec
	}
	for _, c := range []struct {
		name         string
		args         []string
		out          string
		date, source string
		words        string
		plan         bool
		renames      []renameRec
	}{
		{"date from the plan", []string{"--plan", planFile, "--rename", "bmi_kg_m2=bmi"}, "out/q", "2026-03-31", "plan", "from the audit plan", true,
			[]renameRec{{"age_years", "age", "plan", []string{"cohort"}}, {"bmi_kg_m2", "bmi", "flag", []string{"cohort"}}}},
		{"a flag over the plan's date and rename", []string{"--plan", planFile, "--audit-date", "2026-02-28", "--rename", "age_years=age", "--rename", "bmi_kg_m2=bmi", "--out", filepath.Join(dir, "out/f")},
			"out/f", "2026-02-28", "flag", "given by --audit-date", true,
			[]renameRec{{"age_years", "age", "flag", []string{"cohort"}}, {"bmi_kg_m2", "bmi", "flag", []string{"cohort"}}}},
		{"today", []string{"--plan", noDate}, "out/n", "2026-01-01", "today", "the day the audit was run", false, []renameRec{}},
	} {
		t.Run(c.name, func(t *testing.T) {
			if code := run(ctx, append([]string{"audit", "-q"}, c.args...), s); code != exitOK && code != exitCriterion {
				t.Fatalf("exit status %d", code)
			}
			b, err := os.ReadFile(filepath.Join(dir, c.out, "audit.json"))
			if err != nil {
				t.Fatal(err)
			}
			var doc struct{ Provenance prov }
			if err := json.Unmarshal(b, &doc); err != nil {
				t.Fatal(err)
			}
			pv := doc.Provenance
			if pv.AuditDate != c.date || pv.AuditDateSource != c.source {
				t.Errorf("date %s from %s, want %s from %s", pv.AuditDate, pv.AuditDateSource, c.date, c.source)
			}
			switch {
			case c.plan && (pv.Plan == nil || pv.Plan.SHA256 != planSHA || pv.Plan.Name != "quarterly audit" || pv.Plan.Path != planFile):
				t.Errorf("plan %+v, want %s, quarterly audit, %s", pv.Plan, planFile, planSHA)
			case !c.plan && pv.Plan != nil && pv.Plan.SHA256 == planSHA:
				t.Errorf("the other plan recorded: %+v", pv.Plan)
			}
			if !jsonEqual(t, pv.Renames, c.renames) {
				t.Errorf("renames %+v, want %+v", pv.Renames, c.renames)
			}
			if !strings.HasPrefix(pv.CommandLine, "riskaudit audit -q --plan ") {
				t.Errorf("command line %q", pv.CommandLine)
			}
			md, err := os.ReadFile(filepath.Join(dir, c.out, "report.md"))
			if err != nil {
				t.Fatal(err)
			}
			if want := "Audit date " + c.date + " (" + c.words + ")."; strings.Count(string(md), want) != 2 {
				t.Errorf("report.md should say %q in its header and its provenance", want)
			}
			if c.plan && !strings.Contains(string(md), "`"+planSHA+"`") {
				t.Error("report.md does not give the plan's SHA-256")
			}
		})
	}
}

// jsonEqual compares two values by their JSON.
func jsonEqual(t *testing.T, a, b any) bool {
	t.Helper()
	x, err := json.Marshal(a)
	if err != nil {
		t.Fatal(err)
	}
	y, err := json.Marshal(b)
	if err != nil {
		t.Fatal(err)
	}
	return string(x) == string(y)
}

// TestCommandLineMasksSecrets: the command line recorded in the outputs
// keeps every argument as typed but passwords (package redact).
func TestCommandLineMasksSecrets(t *testing.T) {
	s := &streams{args: []string{"audit", "--cohort", "postgres://auditor:s3cret@db/registry", "--db", "host=db password=s3cret",
		"--db-password", "s3cret", "--out", "out dir"}}
	got := s.commandLine()
	want := `riskaudit audit --cohort 'postgres://auditor:***@db/registry' --db 'host=db password=***' --db-password '***' --out 'out dir'`
	if got != want {
		t.Errorf("command line\n%s\nwant\n%s", got, want)
	}
}
