package cohort

import (
	"archive/zip"
	"bytes"
	"io"
	"math"
	"os"
	"path/filepath"
	"testing"
)

// xlsxFuzzReqs are the columns of the seed workbook (small.xlsx, a copy
// of testdata/reference/xlsx/types.xlsx) the workbook fuzz target asks
// for: numbers, text, dates, booleans, a formula, a column of risks.
var xlsxFuzzReqs = []Request{{Name: "age"}, {Name: "sex", Kind: Categorical}, {Name: "visit", Kind: Categorical},
	{Name: "smoker"}, {Name: "double"}, {Name: "sbp", NaNIsError: true}}

// withSheet returns the workbook wb with its first worksheet's XML
// replaced by sheet, as a well-formed zip (so that fuzzing reaches the
// cell reader instead of stopping at the zip's checksums).
func withSheet(t *testing.T, wb, sheet []byte) []byte {
	t.Helper()
	zr, err := zip.NewReader(bytes.NewReader(wb), int64(len(wb)))
	if err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	zw := zip.NewWriter(&out)
	for _, e := range zr.File {
		w, err := zw.Create(e.Name)
		if err != nil {
			t.Fatal(err)
		}
		if e.Name == "xl/worksheets/sheet1.xml" {
			w.Write(sheet)
			continue
		}
		r, err := e.Open()
		if err != nil {
			t.Fatal(err)
		}
		io.Copy(w, r)
		r.Close()
	}
	if err := zw.Close(); err != nil {
		t.Fatal(err)
	}
	return out.Bytes()
}

// FuzzLoadXLSX: a damaged workbook never panics, and a frame read
// without error is consistent. Each input is read twice: as the whole
// file, and as the XML of the seed workbook's first sheet inside an
// otherwise sound package.
func FuzzLoadXLSX(f *testing.F) {
	seed, err := os.ReadFile(filepath.Join(seedDir, "small.xlsx"))
	if err != nil {
		f.Fatal(err)
	}
	f.Add(seed)
	zr, err := zip.NewReader(bytes.NewReader(seed), int64(len(seed)))
	if err != nil {
		f.Fatal(err)
	}
	for _, e := range zr.File {
		if e.Name == "xl/worksheets/sheet1.xml" {
			r, _ := e.Open()
			b, _ := io.ReadAll(r)
			r.Close()
			f.Add(b)
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		dir := t.TempDir()
		for name, b := range map[string][]byte{"file.xlsx": data, "sheet.xlsx": withSheet(t, seed, data)} {
			path := filepath.Join(dir, name)
			if err := os.WriteFile(path, b, 0o644); err != nil {
				t.Fatal(err)
			}
			for _, reqs := range [][]Request{xlsxFuzzReqs, {{Name: "sex"}, {Name: "age", Kind: Categorical}}} {
				fr, err := Load(path, reqs, Options{Format: "xlsx"})
				if err == nil {
					checkFrame(t, fr)
				}
			}
		}
	})
}

// BenchmarkLoadXLSX100k reads a 100,000-row workbook of four columns
// (a number, text in the shared string table, a date, a 0/1 outcome)
// written by excelize's stream writer.
func BenchmarkLoadXLSX100k(b *testing.B) {
	path := filepath.Join(b.TempDir(), "big.xlsx")
	bigWorkbook(b, path, 100000)
	st, _ := os.Stat(path)
	reqs := []Request{{Name: "x"}, {Name: "g", Kind: Categorical}, {Name: "d", Kind: Categorical}, {Name: "y"}}
	b.SetBytes(st.Size())
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		fr, err := Load(path, reqs, Options{})
		if err != nil || fr.Rows != 100000 {
			b.Fatal(err)
		}
	}
}

// FuzzAppendWorkbook: whenever a sheet is read, the workbook with two
// columns added to it reads back with every column it had, cell for
// cell on the same rows, and the new columns holding the values given
// (NaN as empty). Each input is the XML of the seed workbook's first
// sheet; the seeds are that sheet and the unusual sheet of
// TestAppendWorkbookOddOpenpyxl.
func FuzzAppendWorkbook(f *testing.F) {
	seed, err := os.ReadFile(filepath.Join(seedDir, "small.xlsx"))
	if err != nil {
		f.Fatal(err)
	}
	zr, err := zip.NewReader(bytes.NewReader(seed), int64(len(seed)))
	if err != nil {
		f.Fatal(err)
	}
	for _, e := range zr.File {
		if e.Name == "xl/worksheets/sheet1.xml" {
			r, _ := e.Open()
			b, _ := io.ReadAll(r)
			r.Close()
			f.Add(b)
		}
	}
	for _, e := range oddWorkbook() {
		if e.name == "xl/worksheets/sheet2.xml" {
			f.Add([]byte(e.data))
		}
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		path := filepath.Join(t.TempDir(), "in.xlsx")
		if err := os.WriteFile(path, withSheet(t, seed, data), 0o644); err != nil {
			t.Fatal(err)
		}
		fr0, err := Load(path, nil, Options{Format: "xlsx"})
		if err != nil {
			return
		}
		var reqs []Request
		for i, h := range fr0.Header {
			if h != "" && index(fr0.Header, h) == i {
				reqs = append(reqs, Request{Name: h, Kind: Categorical})
			}
		}
		fr, err := Load(path, reqs, Options{Format: "xlsx"})
		if err != nil {
			t.Fatalf("read with no columns, not with all: %v", err)
		}
		names := []string{"fuzz appended lp", "fuzz appended risk"}
		vals := [][]float64{make([]float64, fr.Rows), make([]float64, fr.Rows)}
		for i := range fr.Rows {
			vals[0][i], vals[1][i] = float64(i)+0.25, 1/float64(i+3)
			if i%3 == 1 {
				vals[1][i] = math.NaN()
			}
		}
		out, err := fr.AppendWorkbook(names, vals)
		if err != nil {
			t.Fatalf("a sheet read but not appended to: %v", err)
		}
		scored := filepath.Join(filepath.Dir(path), "scored.xlsx")
		if err := os.WriteFile(scored, out, 0o644); err != nil {
			t.Fatal(err)
		}
		back, err := Load(scored, append(reqs, Request{Name: names[0]}, Request{Name: names[1]}), Options{Format: "xlsx"})
		if err != nil {
			t.Fatalf("the scored workbook does not read back: %v", err)
		}
		if back.Rows != fr.Rows {
			t.Fatalf("%d rows read back, want %d", back.Rows, fr.Rows)
		}
		for i := range fr.Rows {
			if back.Line(i) != fr.Line(i) {
				t.Fatalf("row %d on sheet row %d, was %d", i, back.Line(i), fr.Line(i))
			}
			for k, c := range fr.Columns {
				if got, want := levelOf(back.Columns[k], i), levelOf(c, i); got != want {
					t.Fatalf("column %s row %d: %q, was %q", c.Name, i, got, want)
				}
			}
			for k := range names {
				if g, w := back.Columns[len(reqs)+k].Num[i], vals[k][i]; g != w && !(math.IsNaN(g) && math.IsNaN(w)) {
					t.Fatalf("new column %s row %d: %v, want %v", names[k], i, g, w)
				}
			}
		}
	})
}

// levelOf is row i's text in a categorical column, "\x00" when missing.
func levelOf(c *Column, i int) string {
	if c.Codes[i] < 0 {
		return "\x00"
	}
	return c.Levels[c.Codes[i]]
}
