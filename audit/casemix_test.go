package audit_test

import (
	"context"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/scenario"
)

// withColumns returns the CSV text with two columns added to every row:
// site, constant 1, and age2 = 2·age + 1, aliased with age.
func withColumns(t *testing.T, csv []byte) []byte {
	t.Helper()
	lines := strings.Split(strings.TrimSpace(string(csv)), "\n")
	head := strings.Split(lines[0], ",")
	age := -1
	for j, h := range head {
		if h == "age" {
			age = j
		}
	}
	if age < 0 {
		t.Fatal("the demo extract has no age column")
	}
	var b strings.Builder
	b.WriteString(lines[0] + ",site,age2\n")
	for _, l := range lines[1:] {
		v, err := strconv.ParseFloat(strings.Split(l, ",")[age], 64)
		if err != nil {
			t.Fatal(err)
		}
		b.WriteString(l + ",1," + strconv.FormatFloat(2*v+1, 'g', -1, 64) + "\n")
	}
	return []byte(b.String())
}

// TestCaseMixWithAliasedTerms: an audit of a frozen model with a term
// constant in both cohorts and a term that is a linear function of
// another runs to the end (issue 11: the case-mix step aborted it with
// "the membership model: columns are linearly dependent"), and the
// report names the terms left out of the membership model and why.
func TestCaseMixWithAliasedTerms(t *testing.T) {
	dir := t.TempDir()
	dev, later, frozen := filepath.Join(dir, "dev.csv"), filepath.Join(dir, "later.csv"), filepath.Join(dir, "frozen.yaml")
	spec := `outcome: {column: ppc_30d, event: "yes", non_event: "no"}
intercept: -2.5
predictors:
  - column: age
    center: 65
    scale: 10
    coef: 0.4
  - column: site
    coef: 0.1
  - column: age2
    coef: 0.001
`
	for path, data := range map[string][]byte{dev: withColumns(t, scenario.Development.CSV()), later: withColumns(t, scenario.Later.CSV()), frozen: []byte(spec)} {
		if err := os.WriteFile(path, data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	res, err := audit.Run(context.Background(), audit.Config{Model: frozen, Cohort: audit.Input{Path: later}, Dev: audit.Input{Path: dev}, Tool: "riskaudit test"})
	if err != nil {
		t.Fatalf("the audit stopped: %v", err)
	}
	cm := res.Audit.CaseMix
	if cm == nil {
		t.Fatal("no case-mix comparison")
	}
	if len(cm.MembershipDropped) != 2 || cm.MembershipDropped[0].Term != "site" || cm.MembershipDropped[1].Term != "age2" {
		t.Fatalf("dropped %+v", cm.MembershipDropped)
	}
	if !(cm.MembershipC > 0.5 && cm.MembershipC <= 1) {
		t.Errorf("membership c %g", cm.MembershipC)
	}
	out := filepath.Join(dir, "audit")
	if _, err := audit.Write(out, res, audit.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	md, err := os.ReadFile(filepath.Join(out, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"Terms left out of the membership model", "- `site`: constant (1) in both cohorts, so aliased with the intercept.",
		"- `age2`: a linear combination of the intercept and age", "`site`: constant (1) in both cohorts: the standardised difference is 0 by definition."} {
		if !strings.Contains(string(md), want) {
			t.Errorf("report.md lacks %q", want)
		}
	}
	if strings.Contains(string(md), "NaN") {
		t.Error("report.md prints NaN")
	}
}
