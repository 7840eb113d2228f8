package cohort

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// countdown is a context that reports itself cancelled from its n-th
// call of Err on, so a test can stop a read part-way, deterministically.
type countdown struct {
	context.Context
	n atomic.Int64
}

func newCountdown(n int64) *countdown {
	c := &countdown{Context: context.Background()}
	c.n.Store(n)
	return c
}

func (c *countdown) Err() error {
	if c.n.Add(-1) <= 0 {
		return context.Canceled
	}
	return nil
}

// TestLoadContextStopsPartWay: a context cancelled while a file is read
// stops the read with context.Canceled; the same read with a live context
// succeeds.
func TestLoadContextStopsPartWay(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,g\n")
	const rows = 300_000
	for i := 0; i < rows; i++ {
		fmt.Fprintf(&b, "%d,%c\n", i, 'a'+i%3)
	}
	csv := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(csv, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	x := make([]float64, rows)
	n := make([]int64, rows)
	g := make([]string, rows)
	for i := range x {
		x[i], n[i], g[i] = float64(i), int64(i), "a"
	}
	pq := filepath.Join(dir, "big.parquet")
	writeParquetChunked(t, pq, x, n, g, 50_000)
	reqs := []Request{{Name: "x", Kind: Numeric}, {Name: "g", Kind: Categorical}}
	for _, path := range []string{csv, pq} {
		fr, err := LoadContext(context.Background(), path, reqs, Options{Workers: 1})
		if err != nil || fr.Rows != rows {
			t.Fatalf("%s with a live context: %v", path, err)
		}
		// The first call is the check before reading; the later ones are
		// inside the read.
		for _, after := range []int64{1, 3} {
			fr, err = LoadContext(newCountdown(after), path, reqs, Options{Workers: 1})
			if !errors.Is(err, context.Canceled) || fr != nil {
				t.Errorf("%s cancelled at check %d: frame %v, error %v", filepath.Ext(path), after, fr != nil, err)
			}
		}
	}
}

// writeParquetChunked writes columns x (float), n (int) and g (string)
// in row groups of chunk rows.
func writeParquetChunked(t testing.TB, path string, x []float64, n []int64, g []string, chunk int64) {
	t.Helper()
	mem := memory.DefaultAllocator
	schema := arrow.NewSchema([]arrow.Field{
		{Name: "x", Type: arrow.PrimitiveTypes.Float64},
		{Name: "n", Type: arrow.PrimitiveTypes.Int64},
		{Name: "g", Type: arrow.BinaryTypes.String},
	}, nil)
	b := array.NewRecordBuilder(mem, schema)
	defer b.Release()
	b.Field(0).(*array.Float64Builder).AppendValues(x, nil)
	b.Field(1).(*array.Int64Builder).AppendValues(n, nil)
	b.Field(2).(*array.StringBuilder).AppendValues(g, nil)
	rec := b.NewRecord()
	defer rec.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.Record{rec})
	defer tbl.Release()
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	if err := pqarrow.WriteTable(tbl, f, chunk, nil, pqarrow.DefaultWriterProps()); err != nil {
		t.Fatal(err)
	}
}
