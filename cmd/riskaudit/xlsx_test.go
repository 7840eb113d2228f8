package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestWorkbookCommands: the commands read workbooks (openpyxl's, from
// testdata/reference/xlsx), with --sheet or a plan's data.sheet; score
// writes a workbook or CSV as --out says and refuses other names; bad
// workbooks and other formats exit with status 3 and one line.
func TestWorkbookCommands(t *testing.T) {
	ref, err := filepath.Abs(filepath.Join("..", "..", "testdata", "reference"))
	if err != nil {
		t.Fatal(err)
	}
	wdbc, bad := filepath.Join(ref, "xlsx", "wdbc.xlsx"), filepath.Join(ref, "xlsx", "bad.xlsx")
	recipe := filepath.Join(ref, "recipes", "wdbc_linear.yaml")
	dir := t.TempDir()
	frozen := filepath.Join(dir, "frozen.yaml")
	good, err := os.ReadFile(wdbc)
	if err != nil {
		t.Fatal(err)
	}
	cut, xls, text := filepath.Join(dir, "cut.xlsx"), filepath.Join(dir, "old.xls"), filepath.Join(dir, "extract.csv")
	os.WriteFile(cut, good[:len(good)-100], 0o644)
	os.WriteFile(xls, append([]byte("\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"), []byte("W\x00o\x00r\x00k\x00b\x00o\x00o\x00k\x00")...), 0o644)
	os.WriteFile(text, []byte("mean_radius\n1\n"), 0o644)
	plan := func(name, sheet string) string {
		p := filepath.Join(dir, name)
		yml := "model: " + recipe + "\ndev: " + wdbc + "\nout: " + filepath.Join(dir, name+".out") + "\ndata:\n  sheet: " + sheet + "\n"
		if err := os.WriteFile(p, []byte(yml), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	for _, tc := range []struct {
		args   []string
		status []int
		stderr string
	}{
		{[]string{"fit", "--model", recipe, "--data", wdbc, "--out", frozen}, []int{0}, ""},
		{[]string{"score", "--model", frozen, "--data", wdbc, "--out", filepath.Join(dir, "scored.xlsx")}, []int{0}, ""},
		{[]string{"score", "--model", frozen, "--data", wdbc, "--sheet", "cohort", "--out", filepath.Join(dir, "scored.tsv")}, []int{0}, ""},
		{[]string{"score", "--model", frozen, "--data", wdbc, "--out", filepath.Join(dir, "scored.parquet")}, []int{2}, "keeps the input's format (an Excel workbook, or CSV)"},
		{[]string{"score", "--model", frozen, "--data", wdbc, "--sheet", "Nope", "--out", filepath.Join(dir, "x.xlsx")}, []int{3}, `no sheet "Nope"; sheets present: "Cohort", "About"`},
		{[]string{"score", "--model", frozen, "--data", bad, "--out", filepath.Join(dir, "y.xlsx")}, []int{3}, `no such column`},
		{[]string{"score", "--model", frozen, "--data", cut, "--out", filepath.Join(dir, "z.xlsx")}, []int{3}, "not a readable Excel workbook (.xlsx)"},
		{[]string{"score", "--model", frozen, "--data", xls, "--out", filepath.Join(dir, "z.csv")}, []int{3}, "legacy .xls format"},
		{[]string{"score", "--model", frozen, "--data", text, "--format", "xlsx", "--out", filepath.Join(dir, "w.csv")}, []int{3}, "not an Excel workbook (.xlsx)"},
		{[]string{"audit", "--plan", plan("good.yaml", "Cohort"), "--subgroups", "quarter", "--min-subgroup-events", "5"}, []int{0, 1}, ""},
		{[]string{"audit", "--plan", plan("nosheet.yaml", "Elsewhere")}, []int{3}, `no sheet "Elsewhere"`},
	} {
		var out, errb bytes.Buffer
		code := run(context.Background(), tc.args, &streams{out: &out, err: &errb})
		ok := false
		for _, s := range tc.status {
			ok = ok || code == s
		}
		msg := errb.String()
		if !ok || !strings.Contains(msg, tc.stderr) || tc.stderr != "" && strings.Count(msg, "\n") != 1 {
			t.Errorf("%v: exit status %d, stderr %q; want %v and %q", tc.args, code, msg, tc.status, tc.stderr)
		}
	}
	for _, f := range []string{"scored.xlsx", "scored.tsv", filepath.Join("good.yaml.out", "report.md")} {
		if _, err := os.Stat(filepath.Join(dir, f)); err != nil {
			t.Errorf("not written: %v", err)
		}
	}
	for _, f := range []string{"scored.parquet", "x.xlsx", "y.xlsx", "z.xlsx", "z.csv", "w.csv"} {
		if _, err := os.Stat(filepath.Join(dir, f)); err == nil {
			t.Errorf("%s written by a command that failed", f)
		}
	}
	tsv, _ := os.ReadFile(filepath.Join(dir, "scored.tsv"))
	if first, _, _ := strings.Cut(string(tsv), "\n"); first != "mean_radius\tmean_texture\tmean_smoothness\tmean_concave_points\tmean_area\tdiagnosis\tquarter\treviewed\tra_linear_predictor\tra_predicted_risk" {
		t.Errorf("scored.tsv header %q", first)
	}
	report, _ := os.ReadFile(filepath.Join(dir, "good.yaml.out", "report.md"))
	if !bytes.Contains(report, []byte("2021-04-01")) {
		t.Errorf("the report has no subgroup of the visit quarter 2021-04-01")
	}
}
