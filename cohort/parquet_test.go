package cohort

import (
	"context"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// writeParquet writes a table with a float column x (nulls where
// valid is false), an int column n, a string column g and a text column
// t holding numbers as text.
func writeParquet(t testing.TB, path string, x []float64, valid []bool, n []int64, g []string, txt []string) {
	t.Helper()
	writeParquetRows(t, path, 2, x, valid, n, g, txt)
}

// writeParquetRows is writeParquet in row groups of chunk rows.
func writeParquetRows(t testing.TB, path string, chunk int64, x []float64, valid []bool, n []int64, g []string, txt []string) {
	t.Helper()
	mem := memory.DefaultAllocator
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "x", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "n", Type: arrow.PrimitiveTypes.Int64},
		{Name: "g", Type: arrow.BinaryTypes.String, Nullable: true},
		{Name: "t", Type: arrow.BinaryTypes.String},
	}, nil)
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	b.Field(0).(*array.Float64Builder).AppendValues(x, valid)
	b.Field(1).(*array.Int64Builder).AppendValues(n, nil)
	gv := make([]bool, len(g))
	for i, s := range g {
		gv[i] = s != "<null>"
	}
	b.Field(2).(*array.StringBuilder).AppendValues(g, gv)
	b.Field(3).(*array.StringBuilder).AppendValues(txt, nil)
	rec := b.NewRecord()
	defer rec.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.Record{rec})
	defer tbl.Release()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := pqarrow.WriteTable(tbl, f, chunk, nil, pqarrow.DefaultWriterProps()); err != nil {
		t.Fatal(err)
	}
	f.Close()
}

func TestParquetTypedColumns(t *testing.T) {
	path := filepath.Join(t.TempDir(), "c.parquet")
	writeParquet(t, path, []float64{1.5, 0, math.NaN(), 4}, []bool{true, false, true, true},
		[]int64{10, 20, 30, 40}, []string{"a", "<null>", "b", "NA"}, []string{"1.25", "NA", "3", "x"})
	fr, err := Load(path, []Request{{Name: "x", Kind: Numeric}, {Name: "n", Kind: Numeric}, {Name: "g", Kind: Categorical}}, Options{})
	if err != nil {
		t.Fatal(err)
	}
	x, n, g := fr.Column("x"), fr.Column("n"), fr.Column("g")
	if x.Num[0] != 1.5 || !math.IsNaN(x.Num[1]) || !math.IsNaN(x.Num[2]) || x.Missing != 2 {
		t.Errorf("x %v missing %d", x.Num, x.Missing)
	}
	if n.Num[3] != 40 || fr.Rows != 4 || !fr.RowNumbered || fr.Line(2) != 3 {
		t.Errorf("n %v rows %d", n.Num, fr.Rows)
	}
	if g.Codes[1] != -1 || g.Codes[3] != -1 || g.Levels[g.Codes[2]] != "b" || g.Missing != 2 {
		t.Errorf("g %v %v", g.Codes, g.Levels)
	}
	// Numbers written as text are parsed like CSV fields, and a bad one
	// is named by row.
	_, err = Load(path, []Request{{Name: "t", Kind: Numeric}}, Options{})
	if err == nil || err.Error() != `c.parquet: row 4, column "t": value "x": not a number` && !strings.HasSuffix(err.Error(), `row 4, column "t": value "x": not a number`) {
		t.Errorf("got %v", err)
	}
	// NaN in a column of computed risks is an error.
	_, err = Load(path, []Request{{Name: "x", Kind: Numeric, NaNIsError: true}}, Options{})
	if err == nil || !strings.Contains(err.Error(), `row 3, column "x": value "NaN"`) {
		t.Errorf("got %v", err)
	}
	// A missing column lists those present.
	_, err = Load(path, []Request{{Name: "xx", Kind: Numeric}}, Options{})
	if err == nil || !strings.Contains(err.Error(), `no such column (did you mean "x"?)`) {
		t.Errorf("got %v", err)
	}
}

// TestParquetMatchesCSV: the same data as CSV and as Parquet give the
// same frame.
func TestParquetMatchesCSV(t *testing.T) {
	dir := t.TempDir()
	x := []float64{0.5, 1.25, -3, 8}
	n := []int64{1, 2, 3, 4}
	g := []string{"b", "a", "b", "c"}
	pq := filepath.Join(dir, "d.parquet")
	writeParquet(t, pq, x, nil, n, g, []string{"1", "2", "3", "4"})
	csv := filepath.Join(dir, "d.csv")
	os.WriteFile(csv, []byte("x,n,g,t\n0.5,1,b,1\n1.25,2,a,2\n-3,3,b,3\n8,4,c,4\n"), 0o644)
	reqs := []Request{{Name: "x", Kind: Numeric}, {Name: "n", Kind: Numeric}, {Name: "g", Kind: Categorical}}
	a, err := Load(csv, reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Load(pq, reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 4; i++ {
		if a.Column("x").Num[i] != b.Column("x").Num[i] || a.Column("n").Num[i] != b.Column("n").Num[i] ||
			a.Column("g").Levels[a.Column("g").Codes[i]] != b.Column("g").Levels[b.Column("g").Codes[i]] {
			t.Fatalf("row %d differs", i)
		}
	}
	if _, err := Load(pq, reqs, Options{Format: "csv"}); err == nil {
		t.Error("forcing csv on a Parquet file should fail")
	}
	// A rename applies to a Parquet file's columns as to a CSV header,
	// and both say so.
	opt := Options{Rename: map[string]string{"g": "group", "absent": "y"}}
	reqs[2].Name = "group"
	a, err = Load(csv, reqs, opt)
	if err != nil {
		t.Fatal(err)
	}
	b, err = Load(pq, reqs, opt)
	if err != nil {
		t.Fatal(err)
	}
	want := []RenamedColumn{{From: "g", To: "group"}}
	if !reflect.DeepEqual(a.Renamed, want) || !reflect.DeepEqual(b.Renamed, want) {
		t.Errorf("Renamed: CSV %v, Parquet %v, want %v", a.Renamed, b.Renamed, want)
	}
}

// TestArrowIPCMatchesParquet writes the same table as an Arrow IPC file
// and as Parquet and reads both.
func TestArrowIPCMatchesParquet(t *testing.T) {
	dir := t.TempDir()
	x := []float64{0.5, 1.25, -3, 8}
	valid := []bool{true, true, false, true}
	n := []int64{1, 2, 3, 4}
	g := []string{"b", "a", "<null>", "c"}
	pq := filepath.Join(dir, "d.parquet")
	writeParquet(t, pq, x, valid, n, g, []string{"1", "2", "3", "4"})
	ap := filepath.Join(dir, "d.arrow")
	writeArrow(t, ap, x, valid, n, g)
	reqs := []Request{{Name: "g", Kind: Categorical}, {Name: "x", Kind: Numeric}, {Name: "n", Kind: Numeric}}
	a, err := Load(ap, reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	p, err := Load(pq, reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	for i := 0; i < 4; i++ {
		ax, px := a.Column("x").Num[i], p.Column("x").Num[i]
		if !(ax == px || math.IsNaN(ax) && math.IsNaN(px)) || a.Column("n").Num[i] != p.Column("n").Num[i] ||
			a.Column("g").Codes[i] < 0 != (p.Column("g").Codes[i] < 0) {
			t.Fatalf("row %d differs", i)
		}
	}
	if a.Column("x").Missing != 1 || a.Column("g").Missing != 1 {
		t.Errorf("missing counts %d %d", a.Column("x").Missing, a.Column("g").Missing)
	}
}

// writeArrow writes the columns x (nulls where valid is false), n and g
// ("<null>" for a null) as an Arrow IPC file.
func writeArrow(t testing.TB, path string, x []float64, valid []bool, n []int64, g []string) {
	t.Helper()
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "x", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "n", Type: arrow.PrimitiveTypes.Int64},
		{Name: "g", Type: arrow.BinaryTypes.String, Nullable: true},
	}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	b.Field(0).(*array.Float64Builder).AppendValues(x, valid)
	b.Field(1).(*array.Int64Builder).AppendValues(n, nil)
	gv := make([]bool, len(g))
	for i, s := range g {
		gv[i] = s != "<null>"
	}
	b.Field(2).(*array.StringBuilder).AppendValues(g, gv)
	rec := b.NewRecord()
	defer rec.Release()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	w, err := ipc.NewFileWriter(f, ipc.WithSchema(schema))
	if err != nil {
		t.Fatal(err)
	}
	if err := w.Write(rec); err != nil {
		t.Fatal(err)
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	f.Close()
}

// TestAppendColumns: scored columns appended to a Parquet or Arrow file
// come back as written (NaN as missing), and the file's own columns are
// unchanged, types included.
func TestAppendColumns(t *testing.T) {
	dir := t.TempDir()
	x := []float64{0.5, 1.25, -3, 8}
	valid := []bool{true, true, false, true}
	n := []int64{1, 2, 3, 4}
	g := []string{"b", "a", "<null>", "c"}
	pq := filepath.Join(dir, "d.parquet")
	writeParquet(t, pq, x, valid, n, g, []string{"1", "2", "3", "4"})
	ap := filepath.Join(dir, "d.arrow")
	writeArrow(t, ap, x, valid, n, g)
	score := []float64{-1.5, 0.25, math.NaN(), 2}
	for _, tc := range []struct{ path, format string }{{pq, "parquet"}, {ap, "arrow"}} {
		if got := Format(tc.path, "auto"); got != tc.format {
			t.Fatalf("Format(%s) = %s", tc.path, got)
		}
		out, err := AppendColumns(tc.path, tc.format, []string{"s"}, [][]float64{score})
		if err != nil {
			t.Fatal(err)
		}
		dst := filepath.Join(dir, "scored."+tc.format)
		if err := os.WriteFile(dst, out, 0o644); err != nil {
			t.Fatal(err)
		}
		fr, err := Load(dst, []Request{{Name: "x", Kind: Numeric}, {Name: "n", Kind: Numeric}, {Name: "g", Kind: Categorical}, {Name: "s", Kind: Numeric}}, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if want := []string{"x", "n", "g", "s"}; tc.format == "arrow" && strings.Join(fr.Header, ",") != strings.Join(want, ",") {
			t.Errorf("%s: header %v", tc.format, fr.Header)
		}
		for i := range score {
			s, xs := fr.Column("s").Num[i], fr.Column("x").Num[i]
			if !(s == score[i] || math.IsNaN(s) && math.IsNaN(score[i])) || !(xs == x[i] || !valid[i] && math.IsNaN(xs)) ||
				fr.Column("n").Num[i] != float64(n[i]) || (fr.Column("g").Codes[i] < 0) != (g[i] == "<null>") {
				t.Errorf("%s row %d: s %v x %v n %v", tc.format, i, s, xs, fr.Column("n").Num[i])
			}
		}
		if fr.Column("s").Missing != 1 {
			t.Errorf("%s: %d missing scores, want 1", tc.format, fr.Column("s").Missing)
		}
		// The original column keeps its integer type.
		tbl, err := readAnyTable(dst, tc.format)
		if err != nil {
			t.Fatal(err)
		}
		if typ := tbl.Schema().Field(1).Type; typ.ID() != arrow.INT64 {
			t.Errorf("%s: column n is now %s", tc.format, typ)
		}
		tbl.Release()
	}
	if _, err := AppendColumns(pq, "parquet", []string{"s"}, [][]float64{score[:2]}); err == nil {
		t.Error("a short column should be refused")
	}
}

// readAnyTable reads every column of a Parquet file (through the Arrow
// library's own Parquet-to-Arrow reader, which the package does not
// link) or an Arrow IPC file.
func readAnyTable(path, format string) (arrow.Table, error) {
	if format != "parquet" {
		return readTable(path, format)
	}
	f, err := file.OpenParquetFile(path, false)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	fr, err := pqarrow.NewFileReader(f, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		return nil, err
	}
	return fr.ReadTable(context.Background())
}
