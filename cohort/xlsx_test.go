package cohort

import (
	"archive/zip"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/xuri/excelize/v2"
)

// The workbooks of testdata/reference/xlsx are written by openpyxl
// (make_workbooks.py); types.json lists the values given to it.
const xlsxDir = "../testdata/reference/xlsx"

type typesRef struct {
	Sheet, Header string
	Numeric       map[string][]*float64
	SmokerNumeric []*float64 `json:"smoker_numeric"`
	Categorical   map[string][]*string
	Lines         []int
	Other         struct {
		Site []string
		N    []float64
	}
	Dates1904 []string
}

func readTypesRef(t *testing.T) typesRef {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(xlsxDir, "types.json"))
	if err != nil {
		t.Fatal(err)
	}
	var r typesRef
	if err := json.Unmarshal(b, &r); err != nil {
		t.Fatal(err)
	}
	return r
}

// levels returns the text of a categorical column, row by row ("" for
// missing, marked by ok false).
func levels(c *Column) []*string {
	out := make([]*string, len(c.Codes))
	for i, k := range c.Codes {
		if k >= 0 {
			out[i] = &c.Levels[k]
		}
	}
	return out
}

// TestXLSXTypes: every kind of cell openpyxl writes reads as the value
// it was given (types.json, from the Python values): numbers, numbers
// stored as text (spaces trimmed), missing markers, empty cells,
// booleans, dates of a custom and a built-in format, dates with times,
// times, formulas by their stored values, numbers read as categories;
// the header at B2, rows numbered as the sheet numbers them.
func TestXLSXTypes(t *testing.T) {
	ref := readTypesRef(t)
	var reqs []Request
	for name := range ref.Numeric {
		reqs = append(reqs, Request{Name: name, Kind: Numeric})
	}
	for name := range ref.Categorical {
		reqs = append(reqs, Request{Name: name, Kind: Categorical})
	}
	fr, err := Load(filepath.Join(xlsxDir, "types.xlsx"), reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	smoker, err := Load(filepath.Join(xlsxDir, "types.xlsx"), []Request{{Name: "smoker", Kind: Numeric}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for i, w := range ref.SmokerNumeric {
		if g := smoker.Columns[0].Num[i]; w == nil && !math.IsNaN(g) || w != nil && g != *w {
			t.Errorf("smoker as a number, row %d: %v, want %v", i, g, fmtPtr(w))
		}
	}
	if fr.Sheet != ref.Sheet || fr.Rows != len(ref.Lines) {
		t.Fatalf("sheet %q with %d rows, want %q with %d", fr.Sheet, fr.Rows, ref.Sheet, len(ref.Lines))
	}
	for i, l := range ref.Lines {
		if fr.Line(i) != l {
			t.Errorf("row %d is on sheet row %d, want %d", i, fr.Line(i), l)
		}
	}
	if got := fr.CellRef(fr.HeaderRow(), "id"); got != ref.Sheet+"!"+ref.Header {
		t.Errorf("the header's first cell is %s, want %s!%s", got, ref.Sheet, ref.Header)
	}
	for k, r := range reqs {
		c := fr.Columns[k]
		if r.Kind == Numeric {
			for i, w := range ref.Numeric[r.Name] {
				if g := c.Num[i]; w == nil && !math.IsNaN(g) || w != nil && g != *w {
					t.Errorf("%s row %d: %v, want %v", r.Name, i, g, fmtPtr(w))
				}
			}
			continue
		}
		for i, g := range levels(c) {
			if w := ref.Categorical[r.Name][i]; (g == nil) != (w == nil) || g != nil && *g != *w {
				t.Errorf("%s row %d: %s, want %s", r.Name, i, fmtPtr(g), fmtPtr(w))
			}
		}
	}
}

func fmtPtr[T any](p *T) string {
	if p == nil {
		return "missing"
	}
	return fmt.Sprint(*p)
}

// TestXLSXSheets: --sheet picks a sheet by name (ignoring case, as Excel
// does); an unknown one is refused with the sheets present; the 1904
// date system gives the same dates (types.json).
func TestXLSXSheets(t *testing.T) {
	ref := readTypesRef(t)
	for _, name := range []string{"Other", "other"} {
		fr, err := Load(filepath.Join(xlsxDir, "types.xlsx"), []Request{{Name: "site", Kind: Categorical}, {Name: "n"}}, Options{Sheet: name})
		if err != nil {
			t.Fatal(err)
		}
		if fr.Sheet != "Other" || fmt.Sprint(fr.Columns[0].Levels) != fmt.Sprint(ref.Other.Site) || fmt.Sprint(fr.Columns[1].Num) != fmt.Sprint(ref.Other.N) {
			t.Errorf("sheet %s: %s %v %v", name, fr.Sheet, fr.Columns[0].Levels, fr.Columns[1].Num)
		}
	}
	_, err := Load(filepath.Join(xlsxDir, "types.xlsx"), []Request{{Name: "site"}}, Options{Sheet: "Othr"})
	want := `types.xlsx: no sheet "Othr" (did you mean "Other"?); sheets present: "Visits", "Other"`
	if err == nil || !strings.HasSuffix(err.Error(), want) || !errors.Is(err, ErrNoColumn) {
		t.Errorf("got %v, want …%s", err, want)
	}
	fr, err := Load(filepath.Join(xlsxDir, "dates1904.xlsx"), []Request{{Name: "when", Kind: Categorical}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if got := fmt.Sprint(fr.Columns[0].Levels); got != fmt.Sprint(ref.Dates1904) {
		t.Errorf("1904 dates %s, want %v", got, ref.Dates1904)
	}
}

// TestXLSXErrors: bad cells are refused with one line naming the cell
// (quoted sheet names included), the column and the value, of the kind
// a CSV file's error has; the cells are those make_workbooks.py wrote.
func TestXLSXErrors(t *testing.T) {
	path := filepath.Join(xlsxDir, "bad.xlsx")
	x := []Request{{Name: "x"}}
	for _, tc := range []struct {
		sheet string
		reqs  []Request
		opt   Options
		want  string
		kind  error
	}{
		{"Visit data", []Request{{Name: "age"}}, Options{}, `cell 'Visit data'!D17, column "age": value "abc": not a number`, ErrNotNumber},
		{"errorvalue", x, Options{}, `cell errorvalue!B3, column "x": value "#DIV/0!": an error value of a formula, not data`, ErrNotNumber},
		{"nocache", x, Options{}, `cell nocache!B4, column "x": a formula the workbook holds no value for`, ErrFormat},
		{"outside", x, Options{}, `cell outside!E5: value "a note": a value outside the header's columns (A to C, row 1)`, ErrFormat},
		{"date", x, Options{}, `cell date!B3, column "x": value "2024-05-01": a date, not a number`, ErrNotNumber},
		{"dups", x, Options{}, `cell dups!C1, column "id": duplicate column name`, ErrDuplicateColumn},
		{"empty", x, Options{}, `sheet "empty" is empty`, ErrEmpty},
		{"headeronly", x, Options{}, `sheet "headeronly" has a header but no data rows`, ErrEmpty},
		{"errorvalue", []Request{{Name: "y"}}, Options{}, `column "y": no such column (did you mean "x"?); columns present: "id", "x" (the header of sheet "errorvalue", row 1)`, ErrNoColumn},
	} {
		_, err := Load(path, tc.reqs, Options{Sheet: tc.sheet})
		if err == nil || !strings.HasPrefix(err.Error(), path+": "+tc.want) || !errors.Is(err, tc.kind) {
			t.Errorf("%s: got %v, want %s: %s (%v)", tc.sheet, err, path, tc.want, tc.kind)
		}
	}
	// An error value listed as a missing-value marker is missing.
	fr, err := Load(path, x, Options{Sheet: "errorvalue", Missing: []string{"", "#DIV/0!"}})
	if err != nil || fr.Columns[0].Missing != 1 {
		t.Errorf("#DIV/0! as a marker: %v", err)
	}
}

// TestXLSXMatchesCSV: the Wisconsin rows as openpyxl wrote them (numbers
// stored as numbers, as text and as formulas with stored values, empty
// cells, dates, booleans) read as the CSV of the same rows does
// (make_workbooks.py writes both).
func TestXLSXMatchesCSV(t *testing.T) {
	reqs := []Request{{Name: "mean_radius"}, {Name: "mean_texture"}, {Name: "mean_smoothness"}, {Name: "mean_concave_points"},
		{Name: "mean_area"}, {Name: "diagnosis", Kind: Categorical}, {Name: "quarter", Kind: Categorical}, {Name: "reviewed", Kind: Categorical}}
	a, err := Load(filepath.Join(xlsxDir, "wdbc.csv"), reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Load(filepath.Join(xlsxDir, "wdbc.xlsx"), reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if a.Rows != b.Rows || a.Rows != 569 {
		t.Fatalf("%d and %d rows", a.Rows, b.Rows)
	}
	for k := range reqs {
		ca, cb := a.Columns[k], b.Columns[k]
		if ca.Missing != cb.Missing {
			t.Errorf("%s: %d and %d missing", ca.Name, ca.Missing, cb.Missing)
		}
		for i := 0; i < a.Rows; i++ {
			if ca.Kind == Numeric {
				if x, y := ca.Num[i], cb.Num[i]; x != y && !(math.IsNaN(x) && math.IsNaN(y)) {
					t.Errorf("%s row %d: CSV %v, workbook %v", ca.Name, i, x, y)
				}
			} else if x, y := ca.Levels[ca.Codes[i]], cb.Levels[cb.Codes[i]]; x != y {
				t.Errorf("%s row %d: CSV %q, workbook %q", ca.Name, i, x, y)
			}
		}
	}
	if a.Line(10)+0 != b.Line(10) {
		t.Errorf("row 10 on line %d of the CSV and row %d of the sheet", a.Line(10), b.Line(10))
	}
}

// writeExcelize writes a workbook with excelize (which stores text as
// shared strings, as Excel does, where openpyxl writes inline strings).
func writeExcelize(t testing.TB, path string, build func(f *excelize.File, sheet string)) {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	build(f, "Sheet1")
	if err := f.SaveAs(path); err != nil {
		t.Fatal(err)
	}
}

// TestXLSXSharedStrings: text stored in the shared string table, rich
// text in runs and a date of a style set by excelize read as they were
// written.
func TestXLSXSharedStrings(t *testing.T) {
	path := filepath.Join(t.TempDir(), "shared.xlsx")
	writeExcelize(t, path, func(f *excelize.File, s string) {
		f.SetSheetRow(s, "A1", &[]any{"clinic", "age", "when"})
		f.SetSheetRow(s, "A2", &[]any{"North & South", "61", time.Date(2022, 3, 4, 0, 0, 0, 0, time.UTC)})
		f.SetSheetRow(s, "A3", &[]any{"East", 70, time.Date(2022, 3, 5, 12, 30, 0, 0, time.UTC)})
		f.SetCellRichText(s, "A4", []excelize.RichTextRun{{Text: "We"}, {Text: "st", Font: &excelize.Font{Bold: true}}})
		f.SetCellValue(s, "B4", 72.5)
		style, _ := f.NewStyle(&excelize.Style{NumFmt: 14})
		f.SetCellStyle(s, "C2", "C2", style)
	})
	fr, err := Load(path, []Request{{Name: "clinic", Kind: Categorical}, {Name: "age"}, {Name: "when", Kind: Categorical}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	if got := fmt.Sprint(levels(fr.Columns[0])[0:3]); fmt.Sprint(fr.Columns[0].Levels) != "[North & South East West]" {
		t.Errorf("clinic %s %v", got, fr.Columns[0].Levels)
	}
	if got := fmt.Sprint(fr.Columns[1].Num); got != "[61 70 72.5]" {
		t.Errorf("age %s", got)
	}
	// excelize gives a time.Time its own date-and-time style unless one
	// is set; C2 was set to the built-in date format 14.
	if got := fmt.Sprint(fr.Columns[2].Levels); got != "[2022-03-04 2022-03-05T12:30:00]" {
		t.Errorf("when %s", got)
	}
}

// TestXLSXDamaged: damaged workbooks, zip bombs and files of other
// formats are refused with one line of kind ErrFormat.
func TestXLSXDamaged(t *testing.T) {
	dir := t.TempDir()
	good, err := os.ReadFile(filepath.Join(xlsxDir, "types.xlsx"))
	if err != nil {
		t.Fatal(err)
	}
	flipped := bytes.Clone(good)
	// A byte inside the first compressed part (after its local header).
	flipped[30+len("docProps/app.xml")+20] ^= 0x55
	bomb := func() []byte {
		var b bytes.Buffer
		w := zip.NewWriter(&b)
		for _, n := range []string{"[Content_Types].xml", "xl/workbook.xml"} {
			f, _ := w.Create(n)
			f.Write([]byte("<x/>"))
		}
		f, _ := w.Create("xl/worksheets/sheet1.xml")
		f.Write(bytes.Repeat([]byte{' '}, 300<<20))
		w.Close()
		return b.Bytes()
	}()
	ods := zipOf(t, "application/vnd.oasis.opendocument.spreadsheet", "content.xml")
	xlsm := func() []byte {
		var b bytes.Buffer
		w := zip.NewWriter(&b)
		f, _ := w.Create("[Content_Types].xml")
		f.Write([]byte(`<Types><Override PartName="/xl/workbook.xml" ContentType="application/vnd.ms-excel.sheet.macroEnabled.main+xml"/></Types>`))
		f, _ = w.Create("xl/workbook.xml")
		f.Write([]byte("<workbook/>"))
		w.Close()
		return b.Bytes()
	}()
	for _, tc := range []struct {
		name string
		data []byte
		want string
	}{
		{"cut.xlsx", good[:len(good)/2], "not a readable Excel workbook (.xlsx): zip: not a valid zip file"},
		{"flipped.xlsx", flipped, "not a readable Excel workbook (.xlsx): part docProps/app.xml: "},
		{"bomb.xlsx", bomb, "not read: its parts unpack to more than 268435456 bytes, over 100 times the file's size (a damaged file or a zip bomb)"},
		{"sheet.ods", ods, "is an OpenDocument file (such as .ods), which is not read: save it as an Excel workbook (.xlsx) or export the sheet as CSV"},
		{"macros.xlsm", xlsm, "is a macro-enabled Excel workbook (.xlsm), which is not read: save it as an Excel workbook (.xlsx) or export the sheet as CSV"},
		{"old.xls", append([]byte("\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"), []byte("W\x00o\x00r\x00k\x00b\x00o\x00o\x00k\x00")...), "looks like an Excel workbook (the legacy .xls format), not an Excel workbook (.xlsx), which is not read: save it as an Excel workbook (.xlsx) or export the sheet as CSV"},
		{"locked.xlsx", append([]byte("\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"), []byte("E\x00n\x00c\x00r\x00y\x00p\x00t\x00e\x00d\x00P\x00a\x00c\x00k\x00a\x00g\x00e\x00")...), "looks like a password-protected (encrypted) Office file, not an Excel workbook (.xlsx); save it without a password"},
	} {
		p := filepath.Join(dir, tc.name)
		if err := os.WriteFile(p, tc.data, 0o644); err != nil {
			t.Fatal(err)
		}
		_, err := Load(p, []Request{{Name: "age"}}, Options{Format: "xlsx"})
		if err == nil || !strings.HasPrefix(err.Error(), p+": "+tc.want) || !errors.Is(err, ErrFormat) || strings.Contains(err.Error(), "\n") {
			t.Errorf("%s: got %v, want %s: %s…", tc.name, err, p, tc.want)
		}
	}
}

// bigWorkbook writes a workbook of rows rows (x, a number; g, text;
// d, a date) with excelize's stream writer.
func bigWorkbook(t testing.TB, path string, rows int) {
	t.Helper()
	f := excelize.NewFile()
	defer f.Close()
	sw, err := f.NewStreamWriter("Sheet1")
	if err != nil {
		t.Fatal(err)
	}
	date, _ := f.NewStyle(&excelize.Style{NumFmt: 14})
	sw.SetRow("A1", []any{"x", "g", "d", "y"})
	groups := []string{"North", "South", "East", "West"}
	for i := 2; i <= rows+1; i++ {
		ref, _ := excelize.CoordinatesToCellName(1, i)
		if err := sw.SetRow(ref, []any{float64(i%977) / 7, groups[i%4], excelize.Cell{StyleID: date, Value: 45000 + i%365}, i % 2}); err != nil {
			t.Fatal(err)
		}
	}
	if err := sw.Flush(); err != nil {
		t.Fatal(err)
	}
	if err := f.SaveAs(path); err != nil {
		t.Fatal(err)
	}
}

// TestXLSXStopsPartWay: a context cancelled while a sheet is read stops
// the read within 65,536 rows; with a live context the read succeeds.
func TestXLSXStopsPartWay(t *testing.T) {
	if testing.Short() {
		t.Skip("writes and reads a 70,000-row workbook")
	}
	path := filepath.Join(t.TempDir(), "big.xlsx")
	bigWorkbook(t, path, 70000)
	reqs := []Request{{Name: "x"}, {Name: "d", Kind: Categorical}}
	if _, err := LoadContext(newCountdown(2), path, reqs, Options{}); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: got %v", err)
	}
	fr, err := Load(path, reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	// Serial day 45002 (row 2) in the 1900 date system, counted from
	// 1899-12-30 as the system does from 1 March 1900 on (common practice).
	want := time.Date(1899, 12, 30, 0, 0, 0, 0, time.UTC).AddDate(0, 0, 45002).Format(time.DateOnly)
	if fr.Rows != 70000 || fr.Columns[1].Levels[0] != want {
		t.Errorf("live: %d rows, first date %s, want 70000 and %s", fr.Rows, fr.Columns[1].Levels[0], want)
	}
}

// TestXLSXRename: a workbook's header is renamed as a CSV file's is, and
// Frame.Renamed lists the renames that applied (for the provenance).
func TestXLSXRename(t *testing.T) {
	ref := readTypesRef(t)
	fr, err := Load(filepath.Join(xlsxDir, "types.xlsx"), []Request{{Name: "centre", Kind: Categorical}},
		Options{Sheet: "Other", Rename: map[string]string{"site": "centre", "absent": "x"}})
	if err != nil {
		t.Fatal(err)
	}
	if fmt.Sprint(fr.Columns[0].Levels) != fmt.Sprint(ref.Other.Site) {
		t.Errorf("renamed column holds %v, want %v", fr.Columns[0].Levels, ref.Other.Site)
	}
	if want := []RenamedColumn{{From: "site", To: "centre"}}; !reflect.DeepEqual(fr.Renamed, want) {
		t.Errorf("Renamed = %v, want %v", fr.Renamed, want)
	}
}
