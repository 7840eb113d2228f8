package cohort

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// typedCohort writes the same 1M rows as a typed Parquet file (seven
// float64 columns, an int64 0/1 outcome, a text group; row groups of
// 2^20 rows) and as CSV, and returns both paths and the requests that
// read them.
func typedCohort(b *testing.B) (pq, csv string, reqs []Request) {
	const rows, nnum = 1_000_000, 7
	r := rand.New(rand.NewPCG(11, 12))
	var fields []arrow.Field
	for j := 0; j < nnum; j++ {
		fields = append(fields, arrow.Field{Name: fmt.Sprintf("c%d", j), Type: arrow.PrimitiveTypes.Float64, Nullable: true})
		reqs = append(reqs, Request{Name: fmt.Sprintf("c%d", j), Kind: Numeric})
	}
	fields = append(fields, arrow.Field{Name: "y", Type: arrow.PrimitiveTypes.Int64, Nullable: true},
		arrow.Field{Name: "g", Type: arrow.BinaryTypes.String, Nullable: true})
	reqs = append(reqs, Request{Name: "y", Kind: Categorical}, Request{Name: "g", Kind: Categorical})
	schema := arrow.NewSchema(fields, nil)
	bld := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer bld.Release()
	var text bytes.Buffer
	for j := 0; j < nnum; j++ {
		fmt.Fprintf(&text, "c%d,", j)
	}
	text.WriteString("y,g\n")
	buf := make([]byte, 0, 32)
	for i := 0; i < rows; i++ {
		for j := 0; j < nnum; j++ {
			v := math.Round(r.NormFloat64()*1000*10) / 100
			bld.Field(j).(*array.Float64Builder).Append(v)
			text.Write(strconv.AppendFloat(buf[:0], v, 'f', -1, 64))
			text.WriteByte(',')
		}
		y := int64(r.IntN(2))
		g := []string{"a", "b", "c"}[r.IntN(3)]
		bld.Field(nnum).(*array.Int64Builder).Append(y)
		bld.Field(nnum + 1).(*array.StringBuilder).Append(g)
		fmt.Fprintf(&text, "%d,%s\n", y, g)
	}
	rec := bld.NewRecord()
	defer rec.Release()
	dir := b.TempDir()
	pq, csv = filepath.Join(dir, "typed.parquet"), filepath.Join(dir, "typed.csv")
	f, err := os.Create(pq)
	if err != nil {
		b.Fatal(err)
	}
	w, err := pqarrow.NewFileWriter(schema, f, parquet.NewWriterProperties(parquet.WithMaxRowGroupLength(1<<20)), pqarrow.DefaultWriterProps())
	if err != nil {
		b.Fatal(err)
	}
	if err := w.Write(rec); err != nil {
		b.Fatal(err)
	}
	if err := w.Close(); err != nil {
		b.Fatal(err)
	}
	if err := os.WriteFile(csv, text.Bytes(), 0o600); err != nil {
		b.Fatal(err)
	}
	return pq, csv, reqs
}

// BenchmarkLoadTyped1M reads the same 1M rows (seven float64 columns,
// an integer outcome read as a categorical column, a text group) from
// a typed Parquet file and from CSV.
func BenchmarkLoadTyped1M(b *testing.B) {
	pq, csv, reqs := typedCohort(b)
	for _, c := range []struct{ name, path string }{{"parquet", pq}, {"csv", csv}} {
		b.Run(c.name, func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if _, err := Load(c.path, reqs, Options{}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
