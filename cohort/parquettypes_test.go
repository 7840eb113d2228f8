package cohort

import (
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// TestParquetTypesMatchArrow: every column type the reader takes gives
// the values the Arrow library's own Parquet-to-Arrow reader (pqarrow,
// the reference here) gives: numbers as its values, categories as its
// ValueStr text, nulls as missing. The file also holds a list column,
// which the reader leaves alone unless asked for, and AppendColumns
// keeps every column, the list included, as the reference reads it.
func TestParquetTypesMatchArrow(t *testing.T) {
	mem := memory.DefaultAllocator
	fields := []arrow.Field{
		{Name: "f64", Type: arrow.PrimitiveTypes.Float64, Nullable: true},
		{Name: "f32", Type: arrow.PrimitiveTypes.Float32, Nullable: true},
		{Name: "i8", Type: arrow.PrimitiveTypes.Int8, Nullable: true},
		{Name: "u8", Type: arrow.PrimitiveTypes.Uint8},
		{Name: "u32", Type: arrow.PrimitiveTypes.Uint32},
		{Name: "i64", Type: arrow.PrimitiveTypes.Int64, Nullable: true},
		{Name: "u64", Type: arrow.PrimitiveTypes.Uint64},
		{Name: "b", Type: arrow.FixedWidthTypes.Boolean, Nullable: true},
		{Name: "s", Type: arrow.BinaryTypes.String, Nullable: true},
		{Name: "d", Type: arrow.FixedWidthTypes.Date32, Nullable: true},
		{Name: "ts", Type: &arrow.TimestampType{Unit: arrow.Microsecond, TimeZone: "UTC"}},
		{Name: "l", Type: arrow.ListOf(arrow.PrimitiveTypes.Int32), Nullable: true},
	}
	schema := arrow.NewSchema(fields, nil)
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	const n = 5
	valid := []bool{true, false, true, true, true}
	b.Field(0).(*array.Float64Builder).AppendValues([]float64{1.5, 0, -2.25, 1e300, 0.1}, valid)
	b.Field(1).(*array.Float32Builder).AppendValues([]float32{1.5, 0, -2.25, 3.4e38, 0.1}, valid)
	b.Field(2).(*array.Int8Builder).AppendValues([]int8{-128, 0, 1, 127, 0}, valid)
	b.Field(3).(*array.Uint8Builder).AppendValues([]uint8{0, 1, 255, 1, 0}, nil)
	b.Field(4).(*array.Uint32Builder).AppendValues([]uint32{0, 4294967295, 7, 63, 64}, nil)
	b.Field(5).(*array.Int64Builder).AppendValues([]int64{-1, 0, 1 << 40, 64, 63}, valid)
	b.Field(6).(*array.Uint64Builder).AppendValues([]uint64{18446744073709551615, 0, 1, 2, 3}, nil)
	b.Field(7).(*array.BooleanBuilder).AppendValues([]bool{true, false, false, true, true}, valid)
	b.Field(8).(*array.StringBuilder).AppendValues([]string{" 1.5", "", "NA", "x", "2e3"}, valid)
	b.Field(9).(*array.Date32Builder).AppendValues([]arrow.Date32{19783, 0, -1, 19784, 19783}, valid)
	b.Field(10).(*array.TimestampBuilder).AppendValues([]arrow.Timestamp{1709281800123456, 0, 1, 1709281800000000, 1709281800000000}, nil)
	lb := b.Field(11).(*array.ListBuilder)
	for i := 0; i < n; i++ {
		lb.Append(i != 1)
		for j := 0; j < i; j++ {
			lb.ValueBuilder().(*array.Int32Builder).Append(int32(j))
		}
	}
	rec := b.NewRecord()
	defer rec.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.Record{rec})
	defer tbl.Release()
	dir := t.TempDir()
	path := filepath.Join(dir, "types.parquet")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := pqarrow.WriteTable(tbl, f, 2, nil, pqarrow.NewArrowWriterProperties(pqarrow.WithStoreSchema())); err != nil {
		t.Fatal(err)
	}
	f.Close()

	check := func(t *testing.T, path string) {
		ref, err := readAnyTable(path, "parquet")
		if err != nil {
			t.Fatal(err)
		}
		defer ref.Release()
		for ci, fl := range fields[:11] {
			col := ref.Column(ci).Data().Chunks()
			var want []arrow.Array
			for _, a := range col {
				want = append(want, a)
			}
			value := func(i int) (arrow.Array, int) {
				for _, a := range want {
					if i < a.Len() {
						return a, i
					}
					i -= a.Len()
				}
				t.Fatalf("row %d beyond the column", i)
				return nil, 0
			}
			cat, err := Load(path, []Request{{Name: fl.Name, Kind: Categorical}}, Options{Missing: []string{"NA", ""}})
			if err != nil {
				t.Fatalf("%s as categories: %v", fl.Name, err)
			}
			c := cat.Column(fl.Name)
			for i := 0; i < n; i++ {
				a, j := value(i)
				switch {
				case a.IsNull(j):
					if c.Codes[i] != -1 {
						t.Errorf("%s row %d: code %d for a null", fl.Name, i+1, c.Codes[i])
					}
				case c.Codes[i] < 0:
					if s := a.ValueStr(j); s != "NA" && s != "" {
						t.Errorf("%s row %d: missing, the reference reads %q", fl.Name, i+1, s)
					}
				case c.Levels[c.Codes[i]] != a.ValueStr(j):
					t.Errorf("%s row %d: level %q, the reference reads %q", fl.Name, i+1, c.Levels[c.Codes[i]], a.ValueStr(j))
				}
			}
			num, err := Load(path, []Request{{Name: fl.Name, Kind: Numeric}}, Options{Missing: []string{"NA", ""}})
			if fl.Name == "d" || fl.Name == "ts" {
				if err == nil {
					t.Errorf("%s read as numbers", fl.Name)
				}
				continue
			}
			if fl.Name == "s" {
				if err == nil || err.Error() != path+`: row 4, column "s": value "x": not a number` {
					t.Errorf("s as numbers: %v", err)
				}
				continue
			}
			if err != nil {
				t.Fatalf("%s as numbers: %v", fl.Name, err)
			}
			x := num.Column(fl.Name).Num
			for i := 0; i < n; i++ {
				a, j := value(i)
				var w float64
				switch a := a.(type) {
				case *array.Float64:
					w = a.Value(j)
				case *array.Float32:
					w = float64(a.Value(j))
				case *array.Int8:
					w = float64(a.Value(j))
				case *array.Uint8:
					w = float64(a.Value(j))
				case *array.Uint32:
					w = float64(a.Value(j))
				case *array.Int64:
					w = float64(a.Value(j))
				case *array.Uint64:
					w = float64(a.Value(j))
				case *array.Boolean:
					if a.Value(j) {
						w = 1
					}
				default:
					t.Fatalf("%s: reference type %T", fl.Name, a)
				}
				if a.IsNull(j) {
					w = math.NaN()
				}
				if !(x[i] == w || math.IsNaN(x[i]) && math.IsNaN(w)) {
					t.Errorf("%s row %d: %v, the reference %v", fl.Name, i+1, x[i], w)
				}
			}
		}
		if _, err := Load(path, []Request{{Name: "l", Kind: Numeric}}, Options{}); err == nil {
			t.Error("a list column read as numbers")
		}
	}
	t.Run("read", func(t *testing.T) { check(t, path) })

	// Appending keeps every column as the reference reads it.
	out, err := AppendColumns(path, "parquet", []string{"score"}, [][]float64{{1, math.NaN(), 3, 4, 5}})
	if err != nil {
		t.Fatal(err)
	}
	scored := filepath.Join(dir, "scored.parquet")
	if err := os.WriteFile(scored, out, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Run("appended", func(t *testing.T) { check(t, scored) })
	a, err := readAnyTable(path, "parquet")
	if err != nil {
		t.Fatal(err)
	}
	defer a.Release()
	s, err := readAnyTable(scored, "parquet")
	if err != nil {
		t.Fatal(err)
	}
	defer s.Release()
	if int(s.NumCols()) != len(fields)+1 || s.Schema().Field(len(fields)).Name != "score" {
		t.Fatalf("scored schema %v", s.Schema())
	}
	for ci := range fields {
		if !array.ChunkedEqual(a.Column(ci).Data(), s.Column(ci).Data()) {
			t.Errorf("column %s changed: %v, appended %v", fields[ci].Name, a.Column(ci).Data(), s.Column(ci).Data())
		}
	}
}
