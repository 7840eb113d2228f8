package cohort

import (
	"archive/zip"
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"testing"
)

// openpyxl runs testdata/xlsx_openpyxl.py with Debian's Python and
// openpyxl (python3-openpyxl) and returns what it prints. Without them
// the test is skipped, or fails when the environment variable CI is set.
func openpyxl(t *testing.T, args ...string) []byte {
	t.Helper()
	const python = "/usr/bin/python3"
	if err := exec.Command(python, "-c", "import openpyxl").Run(); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("openpyxl (Debian's python3-openpyxl) is needed: %v", err)
		}
		t.Skipf("no openpyxl (Debian's python3-openpyxl): %v", err)
	}
	out, err := exec.Command(python, append([]string{filepath.Join("testdata", "xlsx_openpyxl.py")}, args...)...).Output()
	if err != nil {
		var stderr []byte
		if ee, ok := err.(*exec.ExitError); ok {
			stderr = ee.Stderr
		}
		t.Fatalf("xlsx_openpyxl.py %v: %v\n%s", args, err, stderr)
	}
	return out
}

// openpyxlValues are the values xlsx_openpyxl.py gave openpyxl for the
// columns of a workbook: as numbers, and as text by row.
type openpyxlValues struct {
	Numeric map[string][]*float64
	Text    map[string][]*string
}

// openpyxlWorkbooks writes the script's workbooks into a new directory
// and returns it with the values they hold, by workbook.
func openpyxlWorkbooks(t *testing.T) (string, map[string]openpyxlValues) {
	dir := t.TempDir()
	openpyxl(t, "write", dir)
	b, err := os.ReadFile(filepath.Join(dir, "expected.json"))
	if err != nil {
		t.Fatal(err)
	}
	var want map[string]openpyxlValues
	if err := json.Unmarshal(b, &want); err != nil {
		t.Fatal(err)
	}
	return dir, want
}

// TestXLSXOpenpyxl: workbooks openpyxl writes, in the 1900 and the 1904
// date systems, read as the Python values given to it: numbers; text
// held in the shared string table, as plain items and as rich-text runs
// with a phonetic guide (left out); dates of a custom and a built-in
// format (days before 1 March 1900 included), dates and times, times;
// booleans; an error value listed as a missing-value marker; empty
// cells; the header at C3. Each is read twice: its sheet unpacked whole
// before it is parsed (as sheets up to 64 MiB are) and parsed as a
// stream from the zip (as larger ones are).
func TestXLSXOpenpyxl(t *testing.T) {
	dir, want := openpyxlWorkbooks(t)
	for _, mode := range []string{"whole", "stream"} {
		load := Load
		if mode == "stream" {
			load = loadStreamed
		}
		for _, name := range []string{"read.xlsx", "read1904.xlsx"} {
			checkOpenpyxlRead(t, load, filepath.Join(dir, name), want[name])
		}
	}
}

// loadStreamed is LoadXLSX with the sheet parsed as a stream whatever
// its size.
func loadStreamed(path string, reqs []Request, opt Options) (*Frame, error) {
	wb, err := openWorkbook(path)
	if err != nil {
		return nil, err
	}
	defer wb.close()
	wb.whole = 0
	sh, err := wb.sheet(opt.Sheet)
	if err != nil {
		return nil, err
	}
	return wb.read(context.Background(), sh, reqs, opt)
}

// checkOpenpyxlRead checks the columns of an xlsx_openpyxl.py workbook
// read by load against the values the script gave openpyxl.
func checkOpenpyxlRead(t *testing.T, load func(string, []Request, Options) (*Frame, error), path string, w openpyxlValues) {
	t.Helper()
	name := filepath.Base(path)
	var reqs []Request
	for col := range w.Numeric {
		reqs = append(reqs, Request{Name: col})
	}
	for col := range w.Text {
		reqs = append(reqs, Request{Name: col + "@", Kind: Categorical})
	}
	rename := map[string]string{}
	for col := range w.Text {
		rename[col] = col + "@"
	}
	// Each column is read as a number and as text: two loads, the
	// second with the text columns renamed.
	num, err := load(path, reqs[:len(w.Numeric)], Options{Missing: []string{"", "#N/A"}})
	if err != nil {
		t.Fatal(err)
	}
	text, err := load(path, reqs[len(w.Numeric):], Options{Rename: rename})
	if err != nil {
		t.Fatal(err)
	}
	if num.Rows != 40 || num.HeaderRow() != 3 || num.CellRef(3, "num") != "Data!C3" {
		t.Errorf("%s: %d rows, header %s, want 40 and Data!C3", name, num.Rows, num.CellRef(num.HeaderRow(), "num"))
	}
	for _, c := range num.Columns {
		for i, x := range w.Numeric[c.Name] {
			if g := c.Num[i]; x == nil && !math.IsNaN(g) || x != nil && g != *x {
				t.Errorf("%s %s row %d: %v, want %s", name, c.Name, i, g, fmtPtr(x))
			}
		}
	}
	for _, c := range text.Columns {
		got := levels(c)
		for i, s := range w.Text[c.Name[:len(c.Name)-1]] {
			if (got[i] == nil) != (s == nil) || s != nil && *got[i] != *s {
				t.Errorf("%s %s row %d: %s, want %s", name, c.Name, i, fmtPtr(got[i]), fmtPtr(s))
			}
		}
	}
}

// openpyxlSheet is a sheet as xlsx_openpyxl.py dumps it.
type openpyxlSheet struct {
	Cells map[string]struct {
		Value  any
		Format string
		Bold   bool
		Fill   *string
	}
	Merged    []string
	Dimension string
	Widths    map[string]float64
}

// TestAppendWorkbookOpenpyxl: the scored workbook, read back by openpyxl,
// has the columns added right of the header (the names as text, the
// values as the same float64s, no value where one is NaN, the style of
// a styled empty cell that was there kept) and every other cell of
// every sheet as it was: value, number format, font, fill; the merged
// ranges and column widths as they were, the dimension widened. Every
// other part of the package is the same bytes.
func TestAppendWorkbookOpenpyxl(t *testing.T) {
	dir, _ := openpyxlWorkbooks(t)
	in := filepath.Join(dir, "append.xlsx")
	fr, err := Load(in, []Request{{Name: "id", Kind: Categorical}, {Name: "x"}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	lp, risk := make([]float64, fr.Rows), make([]float64, fr.Rows)
	for i := range lp {
		lp[i] = fr.Columns[1].Num[i]/3 + 0.1
		risk[i] = 1 / (1 + math.Exp(-lp[i]))
	}
	lp[5], risk[2], risk[3] = math.NaN(), 5e-324, 1e300
	names := []string{"lp", " risk & <more> "}
	b, err := fr.AppendWorkbook(names, [][]float64{lp, risk})
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "scored.xlsx")
	if err := os.WriteFile(out, b, 0o644); err != nil {
		t.Fatal(err)
	}
	var before, after map[string]openpyxlSheet
	if err := json.Unmarshal(openpyxl(t, "dump", in), &before); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(openpyxl(t, "dump", out), &after); err != nil {
		t.Fatal(err)
	}
	added := map[string]any{"E2": names[0], "F2": names[1]}
	for i := 0; i < fr.Rows; i++ {
		for k, v := range [][]float64{lp, risk} {
			if !math.IsNaN(v[i]) {
				added[cellName(5+k, fr.Line(i))] = v[i]
			}
		}
	}
	if len(before) != 2 || len(after) != len(before) {
		t.Fatalf("sheets %d, scored %d", len(before), len(after))
	}
	for name, s := range before {
		a := after[name]
		if !reflect.DeepEqual(s.Merged, a.Merged) || !reflect.DeepEqual(s.Widths, a.Widths) {
			t.Errorf("%s: merged %v widths %v, scored %v %v", name, s.Merged, s.Widths, a.Merged, a.Widths)
		}
		for ref, c := range a.Cells {
			o, had := s.Cells[ref]
			v, isNew := added[ref]
			if name != "Scores" || !isNew {
				if !had || !reflect.DeepEqual(o, c) {
					t.Errorf("%s!%s: %+v, scored %+v", name, ref, o, c)
				}
				continue
			}
			if x, ok := c.Value.(float64); !ok && fmt.Sprint(c.Value) != fmt.Sprint(v) || ok && x != v {
				t.Errorf("%s!%s: %v, want %v", name, ref, c.Value, v)
			}
			if had && (o.Fill == nil) != (c.Fill == nil) {
				t.Errorf("%s!%s: the added cell lost the fill of the cell it replaced", name, ref)
			}
			delete(added, ref)
		}
		for ref := range s.Cells {
			if _, ok := a.Cells[ref]; !ok {
				t.Errorf("%s!%s: lost", name, ref)
			}
		}
	}
	if len(added) != 0 {
		t.Errorf("cells not found in the scored workbook: %v", added)
	}
	samePartsBut(t, in, out, "xl/worksheets/sheet1.xml")
	// The dimension openpyxl wrote (B2:E42), widened to the new columns.
	zr, err := zip.OpenReader(out)
	if err != nil {
		t.Fatal(err)
	}
	defer zr.Close()
	for _, e := range zr.File {
		if e.Name == "xl/worksheets/sheet1.xml" && !bytes.Contains(content(t, e), []byte(`<dimension ref="B2:F42"/>`)) {
			t.Errorf("the scored sheet's dimension is not B2:F42: %.300s", content(t, e))
		}
	}
}

// samePartsBut checks that the zips at a and b hold the same entries, in
// the same order, with the same contents except the one named.
func samePartsBut(t *testing.T, a, b, except string) {
	t.Helper()
	za, err := zip.OpenReader(a)
	if err != nil {
		t.Fatal(err)
	}
	defer za.Close()
	zb, err := zip.OpenReader(b)
	if err != nil {
		t.Fatal(err)
	}
	defer zb.Close()
	if len(za.File) != len(zb.File) {
		t.Fatalf("%d entries, scored %d", len(za.File), len(zb.File))
	}
	for i, e := range za.File {
		if f := zb.File[i]; f.Name != e.Name || e.Name != except && (f.CRC32 != e.CRC32 || !bytes.Equal(content(t, e), content(t, f))) {
			t.Errorf("entry %d: %s, scored %s (changed)", i, e.Name, f.Name)
		}
	}
}

func content(t *testing.T, e *zip.File) []byte {
	r, err := e.Open()
	if err != nil {
		t.Fatal(err)
	}
	defer r.Close()
	b, err := io.ReadAll(r)
	if err != nil {
		t.Fatal(err)
	}
	return b
}
