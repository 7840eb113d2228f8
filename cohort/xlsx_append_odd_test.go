package cohort

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"testing"
)

// oddWorkbook is a valid workbook of two sheets, the data on the second
// ("Data"): no dimension element, every text an inline string, rows with
// spans, a row and its cells without r attributes, a row missing, styled
// empty cells right of the header (in the columns to be added, one of
// them with a date format, and beyond them) and a row holding only a
// styled empty cell.
func oddWorkbook() []pkgEntry {
	const ct = "application/vnd.openxmlformats-officedocument.spreadsheetml."
	is := func(ref, s string) string { return `<c r="` + ref + `" t="inlineStr"><is><t>` + s + `</t></is></c>` }
	return []pkgEntry{
		{"[Content_Types].xml", `<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types">` +
			`<Default Extension="rels" ContentType="application/vnd.openxmlformats-package.relationships+xml"/><Default Extension="xml" ContentType="application/xml"/>` +
			`<Override PartName="/xl/workbook.xml" ContentType="` + ct + `sheet.main+xml"/>` +
			`<Override PartName="/xl/worksheets/sheet1.xml" ContentType="` + ct + `worksheet+xml"/>` +
			`<Override PartName="/xl/worksheets/sheet2.xml" ContentType="` + ct + `worksheet+xml"/>` +
			`<Override PartName="/xl/styles.xml" ContentType="` + ct + `styles+xml"/></Types>`},
		{"_rels/.rels", `<Relationships ` + nsRels + `><Relationship Id="rId1" Type="` + relDoc + `officeDocument" Target="xl/workbook.xml"/></Relationships>`},
		{"xl/workbook.xml", `<workbook ` + nsMain + ` xmlns:r="http://schemas.openxmlformats.org/officeDocument/2006/relationships"><sheets>` +
			`<sheet name="Notes" sheetId="1" r:id="rId1"/><sheet name="Data" sheetId="2" r:id="rId2"/></sheets></workbook>`},
		{"xl/_rels/workbook.xml.rels", `<Relationships ` + nsRels + `>` +
			`<Relationship Id="rId1" Type="` + relDoc + `worksheet" Target="worksheets/sheet1.xml"/>` +
			`<Relationship Id="rId2" Type="` + relDoc + `worksheet" Target="worksheets/sheet2.xml"/>` +
			`<Relationship Id="rId3" Type="` + relDoc + `styles" Target="styles.xml"/></Relationships>`},
		{"xl/styles.xml", `<styleSheet ` + nsMain + `><fonts count="1"><font/></fonts>` +
			`<fills count="2"><fill><patternFill patternType="none"/></fill><fill><patternFill patternType="gray125"/></fill></fills>` +
			`<borders count="1"><border/></borders><cellStyleXfs count="1"><xf numFmtId="0"/></cellStyleXfs>` +
			`<cellXfs count="3"><xf numFmtId="0" xfId="0"/><xf numFmtId="2" xfId="0" applyNumberFormat="1"/><xf numFmtId="14" xfId="0" applyNumberFormat="1"/></cellXfs></styleSheet>`},
		{"xl/worksheets/sheet1.xml", sheetOf(`<row r="1">` + is("A1", "notes") + `<c r="E1"><v>7</v></c></row>`)},
		{"xl/worksheets/sheet2.xml", sheetOf(
			`<row r="1" spans="1:3">` + is("A1", "id") + is("B1", "x") + is("C1", "g") + `</row>` +
				`<row r="2" spans="1:7">` + `<c r="A2"><v>1</v></c><c r="B2"><v>0.5</v></c>` + is("C2", "a") + `<c r="D2" s="1"/><c r="E2" s="2"/><c r="G2" s="1"/></row>` +
				`<row><c><v>2</v></c><c><v>1.5</v></c><c t="inlineStr"><is><t>b</t></is></c></row>` +
				`<row r="4" spans="1:3 5:5"><c r="A4"><v>3</v></c><c r="B4"><v>2.5</v></c>` + is("C4", "c") + `<c r="E4" s="1"/></row>` +
				`<row r="6"><c r="A6"><v>4</v></c><c r="B6"><v>3.5</v></c></row>` +
				`<row r="7"><c r="A7" s="1"/></row>`)},
	}
}

// TestAppendWorkbookOddOpenpyxl: the scored copy of oddWorkbook, read
// back by openpyxl (Debian's python3-openpyxl, an independent reader),
// has the new columns D and E right of the header (names as text,
// values as the same float64s, none where NaN, the number format of the
// styled empty cell replaced kept unless it is a date's) and every other cell of both sheets
// as it was; riskaudit's reader reads the new columns back too.
func TestAppendWorkbookOddOpenpyxl(t *testing.T) {
	dir := t.TempDir()
	in := filepath.Join(dir, "odd.xlsx")
	if err := os.WriteFile(in, zipBytes(t, oddWorkbook()), 0o644); err != nil {
		t.Fatal(err)
	}
	fr, err := Load(in, []Request{{Name: "x"}, {Name: "g", Kind: Categorical}}, Options{Sheet: "Data"})
	if err != nil {
		t.Fatal(err)
	}
	if fr.Rows != 4 {
		t.Fatalf("%d data rows, want 4", fr.Rows)
	}
	lp, risk := make([]float64, fr.Rows), make([]float64, fr.Rows)
	for i := range lp {
		lp[i] = fr.Columns[0].Num[i] * 2
		risk[i] = 1 / (1 + math.Exp(-lp[i]))
	}
	risk[1] = math.NaN()
	b, err := fr.AppendWorkbook([]string{"lp", "risk"}, [][]float64{lp, risk})
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "scored.xlsx")
	if err := os.WriteFile(out, b, 0o644); err != nil {
		t.Fatal(err)
	}
	if os.Getenv("PEEK") != "" {
		os.WriteFile("/tmp/xfuzz/scored.xlsx", b, 0o644)
	}
	var before, after map[string]openpyxlSheet
	if err := json.Unmarshal(openpyxl(t, "dump", in), &before); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(openpyxl(t, "dump", out), &after); err != nil {
		t.Fatal(err)
	}
	added := map[string]any{"D1": "lp", "E1": "risk"}
	for i := 0; i < fr.Rows; i++ {
		added[cellName(4, fr.Line(i))] = lp[i]
		if !math.IsNaN(risk[i]) {
			added[cellName(5, fr.Line(i))] = risk[i]
		}
	}
	if len(after) != 2 || !reflect.DeepEqual(before["Notes"], after["Notes"]) {
		t.Errorf("sheet Notes: %+v, scored %+v", before["Notes"], after["Notes"])
	}
	a, s := after["Data"], before["Data"]
	for ref, c := range a.Cells {
		o, had := s.Cells[ref]
		v, isNew := added[ref]
		if !isNew {
			if !had || !reflect.DeepEqual(o, c) {
				t.Errorf("Data!%s: %+v, scored %+v", ref, o, c)
			}
			continue
		}
		if x, ok := c.Value.(float64); !ok && fmt.Sprint(c.Value) != fmt.Sprint(v) || ok && x != v {
			t.Errorf("Data!%s: %v, want %v", ref, c.Value, v)
		}
		if had && o.Format != c.Format && ref != "E2" {
			t.Errorf("Data!%s: format %q, the cell replaced had %q", ref, c.Format, o.Format)
		}
		delete(added, ref)
	}
	for ref := range s.Cells {
		if _, ok := a.Cells[ref]; !ok {
			t.Errorf("Data!%s: lost", ref)
		}
	}
	if len(added) != 0 {
		t.Errorf("cells not found in the scored workbook: %v", added)
	}
	if c := a.Cells["D2"]; c.Format != "0.00" {
		t.Errorf("Data!D2 (a styled empty cell replaced): format %q, want 0.00", c.Format)
	}
	// A date style is not kept: the risk would show as a date.
	if c := a.Cells["E2"]; c.Format != "General" || s.Cells["E2"].Format != "mm-dd-yy" {
		t.Errorf("Data!E2 (a date-styled empty cell replaced): format %q, was %q; want General", c.Format, s.Cells["E2"].Format)
	}
	back, err := Load(out, []Request{{Name: "lp"}, {Name: "risk"}, {Name: "g", Kind: Categorical}}, Options{Sheet: "Data"})
	if err != nil {
		t.Fatal(err)
	}
	for i := range lp {
		if back.Columns[0].Num[i] != lp[i] || back.Columns[1].Num[i] != risk[i] && !math.IsNaN(risk[i]) || back.Line(i) != fr.Line(i) {
			t.Errorf("scored row %d read back: %v %v, want %v %v", i, back.Columns[0].Num[i], back.Columns[1].Num[i], lp[i], risk[i])
		}
	}
}
