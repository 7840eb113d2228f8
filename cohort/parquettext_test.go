package cohort

import (
	"context"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// TestParquetTextLevelsEveryEncoding reads a text column of more
// distinct levels than the reader's memos hold (missing markers, an
// untrimmed marker, the empty text and nulls among them), written with
// a dictionary and without one, in small pages and row groups that do
// not line up with the reader's batches. The reference is the Arrow
// library's own Parquet-to-Arrow reader (pqarrow): each row's code must
// be the index of its text among the texts in order of first
// appearance, −1 for a null or a missing marker, as that reader gives
// the texts.
func TestParquetTextLevelsEveryEncoding(t *testing.T) {
	const rows = 200_000
	texts := []string{"a", "b", "c", "NA", " NA ", "", "dd", "ee", "ff", "gg", "hh", "ii", "jj", "kk"}
	r := rand.New(rand.NewPCG(3, 4))
	vals := make([]string, rows)
	valid := make([]bool, rows)
	for i := range vals {
		// Runs of one text as well as random texts, so batches meet
		// both.
		if i > 0 && r.IntN(4) == 0 {
			vals[i], valid[i] = vals[i-1], valid[i-1]
			continue
		}
		vals[i], valid[i] = texts[r.IntN(len(texts))], r.IntN(20) != 0
	}
	schema := arrow.NewSchema([]arrow.Field{{Name: "g", Type: arrow.BinaryTypes.String, Nullable: true}}, nil)
	b := array.NewRecordBuilder(memory.DefaultAllocator, schema)
	defer b.Release()
	b.Field(0).(*array.StringBuilder).AppendValues(vals, valid)
	rec := b.NewRecord()
	defer rec.Release()
	tbl := array.NewTableFromRecords(schema, []arrow.Record{rec})
	defer tbl.Release()
	for _, dict := range []bool{true, false} {
		path := filepath.Join(t.TempDir(), "text.parquet")
		f, err := os.Create(path)
		if err != nil {
			t.Fatal(err)
		}
		props := parquet.NewWriterProperties(parquet.WithDictionaryDefault(dict), parquet.WithDataPageSize(4096))
		if err := pqarrow.WriteTable(tbl, f, 70_000, props, pqarrow.DefaultWriterProps()); err != nil {
			t.Fatal(err)
		}
		f.Close()
		want := referenceLevels(t, path)
		fr, err := Load(path, []Request{{Name: "g", Kind: Categorical}}, Options{})
		if err != nil {
			t.Fatal(err)
		}
		g := fr.Column("g")
		if !reflect.DeepEqual(g.Levels, want.Levels) || !reflect.DeepEqual(g.LevelLine, want.LevelLine) || g.Missing != want.Missing {
			t.Errorf("dictionary %v: levels %q (rows %v), %d missing; want %q (rows %v), %d", dict, g.Levels, g.LevelLine, g.Missing,
				want.Levels, want.LevelLine, want.Missing)
		}
		if i := firstDiff(g.Codes, want.Codes); i >= 0 {
			t.Errorf("dictionary %v: row %d has code %d, want %d", dict, i+1, g.Codes[i], want.Codes[i])
		}
	}
}

// referenceLevels codes the text column g of the Parquet file at path as
// pqarrow reads it: levels in order of first appearance, nulls and the
// default missing markers (trimmed) missing.
func referenceLevels(t *testing.T, path string) *Column {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	tbl, err := pqarrow.ReadTable(context.Background(), f, nil, pqarrow.ArrowReadProperties{}, memory.DefaultAllocator)
	if err != nil {
		t.Fatal(err)
	}
	defer tbl.Release()
	c := &Column{}
	index := map[string]int32{}
	row := 0
	for _, chunk := range tbl.Column(0).Data().Chunks() {
		a := chunk.(*array.String)
		for i := 0; i < a.Len(); i++ {
			row++
			if a.IsNull(i) || slices.Contains(DefaultMissing, strings.TrimSpace(a.Value(i))) {
				c.Codes = append(c.Codes, -1)
				c.Missing++
				continue
			}
			code, ok := index[a.Value(i)]
			if !ok {
				code = int32(len(c.Levels))
				index[a.Value(i)] = code
				c.Levels = append(c.Levels, a.Value(i))
				c.LevelLine = append(c.LevelLine, row)
			}
			c.Codes = append(c.Codes, code)
		}
	}
	return c
}

// firstDiff is the first index where a and b differ, or −1.
func firstDiff(a, b []int32) int {
	for i := range max(len(a), len(b)) {
		if i >= len(a) || i >= len(b) || a[i] != b[i] {
			return i
		}
	}
	return -1
}
