package audit_test

import (
	"context"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/xuri/excelize/v2"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
)

// sameJSON reports every difference between two audit.json trees:
// numbers beyond 1e-12 relative, other values unequal; strings naming
// the input files, and their SHA-256, are left out.
func sameJSON(t *testing.T, where string, a, b any) {
	t.Helper()
	switch x := a.(type) {
	case map[string]any:
		y, ok := b.(map[string]any)
		if !ok || len(x) != len(y) {
			t.Errorf("%s: %v and %v", where, a, b)
			return
		}
		for k := range x {
			sameJSON(t, where+"."+k, x[k], y[k])
		}
	case []any:
		y, ok := b.([]any)
		if !ok || len(x) != len(y) {
			t.Errorf("%s: %d items and %v", where, len(x), b)
			return
		}
		for i := range x {
			sameJSON(t, fmt.Sprintf("%s[%d]", where, i), x[i], y[i])
		}
	case float64:
		y, ok := b.(float64)
		if !ok || math.Abs(x-y) > 1e-12*math.Max(1, math.Abs(x)) {
			t.Errorf("%s: CSV %v, workbook %v", where, a, b)
		}
	case string:
		if y, ok := b.(string); !ok || x != y && !strings.Contains(x, "wdbc.") && !strings.HasSuffix(where, "sha256") {
			t.Errorf("%s: CSV %q, workbook %q", where, a, b)
		}
	default:
		if a != b {
			t.Errorf("%s: CSV %v, workbook %v", where, a, b)
		}
	}
}

// TestWorkbookAuditMatchesCSV: the audit of the Wisconsin rows as
// openpyxl wrote them into a workbook (numbers, numbers stored as text,
// formulas with stored values, empty cells, a date column and a boolean
// column; testdata/reference/make_workbooks.py) is the audit of the CSV
// of the same rows: the recipe fitted inside, 20 bootstrap replicates,
// and subgroups by the visit quarter (dates read as ISO text) and by
// the reviewed flag (TRUE and FALSE).
func TestWorkbookAuditMatchesCSV(t *testing.T) {
	dir := filepath.Join("..", "testdata", "reference")
	var got [2]map[string]any
	for k, in := range []string{"wdbc.csv", "wdbc.xlsx"} {
		cfg := audit.Config{Model: filepath.Join(dir, "recipes", "wdbc_linear.yaml"), Dev: audit.Input{Path: filepath.Join(dir, "xlsx", in)},
			Subgroups: []string{"quarter", "reviewed"}, MinSubgroupEvents: 5, Bootstrap: 20, Seed: 3, Tool: "riskaudit test"}
		res, err := audit.Run(context.Background(), cfg)
		if err != nil {
			t.Fatalf("%s: %v", in, err)
		}
		got[k] = auditJSON(t, res.Audit)
		// The provenance names the worksheet read (make_workbooks.py
		// titles it "Cohort"), and a CSV file has none.
		wantSheet := map[string]string{"wdbc.csv": "", "wdbc.xlsx": "Cohort"}[in]
		for _, f := range res.Audit.Provenance.Inputs {
			if f.Role != "model" && f.Sheet != wantSheet {
				t.Errorf("%s: provenance sheet %q, want %q", in, f.Sheet, wantSheet)
			}
		}
	}
	sameJSON(t, "audit", got[0], got[1])
	sub := fmt.Sprint(got[1]["subgroups"])
	for _, level := range []string{"2021-01-01", "2021-04-01", "2021-07-01", "TRUE", "FALSE"} {
		if !strings.Contains(sub, level) {
			t.Errorf("no subgroup %s in %s", level, sub)
		}
	}
}

// TestScoreWorkbook: score on a workbook keeps every sheet and cell
// (values, formulas, styles, merged cells, as excelize reads both files)
// and adds the two columns right of the header of the sheet read, with
// the values scoring the CSV of the same rows gives; the sheet as CSV
// holds the same rows and scores.
func TestScoreWorkbook(t *testing.T) {
	dir := filepath.Join("..", "testdata", "reference")
	in := filepath.Join(dir, "xlsx", "wdbc.xlsx")
	fit, err := audit.Fit(context.Background(), audit.FitConfig{Model: filepath.Join(dir, "recipes", "wdbc_linear.yaml"), Data: audit.Input{Path: in}})
	if err != nil {
		t.Fatal(err)
	}
	score := func(path string) *audit.Scores {
		opt := cohort.Options{KeepRecords: cohort.Format(path, "") == "csv"}
		sc, err := audit.Score(context.Background(), audit.ScoreConfig{Spec: fit.Frozen, Data: audit.Input{Path: path}, Read: opt})
		if err != nil {
			t.Fatal(err)
		}
		return sc
	}
	fromCSV, fromXLSX := score(filepath.Join(dir, "xlsx", "wdbc.csv")), score(in)
	b, err := fromXLSX.File(in, "xlsx", false)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "scored.xlsx")
	if err := os.WriteFile(out, b, 0o644); err != nil {
		t.Fatal(err)
	}
	orig, err := excelize.OpenFile(in)
	if err != nil {
		t.Fatal(err)
	}
	defer orig.Close()
	scored, err := excelize.OpenFile(out)
	if err != nil {
		t.Fatal(err)
	}
	defer scored.Close()
	if a, b := orig.GetSheetList(), scored.GetSheetList(); fmt.Sprint(a) != fmt.Sprint(b) {
		t.Fatalf("sheets %v, scored %v", a, b)
	}
	for _, sh := range orig.GetSheetList() {
		rows, _ := orig.GetRows(sh, excelize.Options{RawCellValue: true})
		srows, _ := scored.GetRows(sh, excelize.Options{RawCellValue: true})
		if len(rows) != len(srows) {
			t.Fatalf("%s: %d rows, scored %d", sh, len(rows), len(srows))
		}
		for r, row := range rows {
			for c, v := range row {
				ref, _ := excelize.CoordinatesToCellName(c+1, r+1)
				f1, _ := orig.GetCellFormula(sh, ref)
				f2, _ := scored.GetCellFormula(sh, ref)
				s1, _ := orig.GetCellStyle(sh, ref)
				s2, _ := scored.GetCellStyle(sh, ref)
				if srows[r][c] != v || f1 != f2 || s1 != s2 {
					t.Errorf("%s!%s: %q %q %d, scored %q %q %d", sh, ref, v, f1, s1, srows[r][c], f2, s2)
				}
			}
			added := 0
			if sh == "Cohort" && (r == 0 || !math.IsNaN(fromXLSX.LP[r-1])) {
				added = 2 // the header, and scored rows (not those missing a value)
			}
			if len(srows[r]) != len(row)+added {
				t.Errorf("%s row %d: %d cells, scored %d", sh, r+1, len(row), len(srows[r]))
			}
		}
		m1, _ := orig.GetMergeCells(sh)
		m2, _ := scored.GetMergeCells(sh)
		if len(m1) != len(m2) {
			t.Errorf("%s: %d merged ranges, scored %d", sh, len(m1), len(m2))
		}
	}
	fr, err := cohort.Load(out, []cohort.Request{{Name: audit.LPColumn}, {Name: audit.RiskColumn}}, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	text, err := fromXLSX.WorkbookText(',')
	if err != nil {
		t.Fatal(err)
	}
	csvOut := filepath.Join(t.TempDir(), "scored.csv")
	if err := os.WriteFile(csvOut, text, 0o644); err != nil {
		t.Fatal(err)
	}
	asText, err := cohort.Load(csvOut, []cohort.Request{{Name: audit.LPColumn}, {Name: "mean_texture"}, {Name: "quarter", Kind: cohort.Categorical}}, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	risks := model.Risks(fromCSV.LP)
	for i, lp := range fromCSV.LP {
		if !same(fr.Columns[0].Num[i], lp) || !same(fr.Columns[1].Num[i], risks[i]) || !same(asText.Columns[0].Num[i], lp) {
			t.Fatalf("row %d: scored workbook %v %v, as text %v; the CSV's scores %v %v", i, fr.Columns[0].Num[i], fr.Columns[1].Num[i], asText.Columns[0].Num[i], lp, risks[i])
		}
	}
	if asText.Rows != 569 || asText.Columns[2].Levels[0] == "" {
		t.Errorf("the sheet as text: %d rows, quarters %v", asText.Rows, asText.Columns[2].Levels)
	}
}

// same reports whether two values are equal or both missing.
func same(a, b float64) bool { return a == b || math.IsNaN(a) && math.IsNaN(b) }
