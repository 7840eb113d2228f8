package cohort

import (
	"bytes"
	"context"
	"fmt"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// Format names the format of the file at path: the forced format when it
// is csv, parquet, arrow or xlsx, otherwise the one its first bytes show
// (Parquet, Arrow IPC, an Excel workbook, or delimited text).
func Format(path, forced string) string {
	switch forced {
	case "csv", "parquet", "arrow", "xlsx":
		return forced
	}
	switch {
	case isParquet(path):
		return "parquet"
	case isArrow(path):
		return "arrow"
	case isWorkbook(path):
		return "xlsx"
	}
	return "csv"
}

// AppendColumns returns the columnar file at path (format "parquet" or
// "arrow") with float64 columns added after its own: names[k] holding
// values[k], one value per row in file order, NaN written as null. Every
// column of the file is kept as it is, with its type. The file is read,
// never written; the caller writes the result.
func AppendColumns(path, format string, names []string, values [][]float64) (file []byte, err error) {
	defer recoverDecode(path, map[string]string{"parquet": "Parquet", "arrow": "Arrow IPC"}[format], &err)
	tbl, err := readTable(path, format)
	if err != nil {
		return nil, err
	}
	defer tbl.Release()
	rows := int(tbl.NumRows())
	fields := tbl.Schema().Fields()
	cols := make([]arrow.Column, 0, len(fields)+len(names))
	for i := range fields {
		cols = append(cols, *tbl.Column(i))
	}
	for k, name := range names {
		if len(values[k]) != rows {
			return nil, fmt.Errorf("cohort: %d values for column %q of a file with %d rows", len(values[k]), name, rows)
		}
		f := arrow.Field{Name: name, Type: arrow.PrimitiveTypes.Float64, Nullable: true}
		b := array.NewFloat64Builder(memory.DefaultAllocator)
		valid := make([]bool, rows)
		for i, v := range values[k] {
			valid[i] = !math.IsNaN(v)
		}
		b.AppendValues(values[k], valid)
		arr := b.NewArray()
		b.Release()
		ch := arrow.NewChunked(f.Type, []arrow.Array{arr})
		arr.Release()
		col := arrow.NewColumn(f, ch)
		ch.Release()
		defer col.Release()
		fields = append(fields, f)
		cols = append(cols, *col)
	}
	md := tbl.Schema().Metadata()
	out := array.NewTable(arrow.NewSchema(fields, &md), cols, int64(rows))
	defer out.Release()
	var buf bytes.Buffer
	switch format {
	case "parquet":
		props := parquet.NewWriterProperties(parquet.WithCompression(compress.Codecs.Snappy))
		if err := pqarrow.WriteTable(out, &buf, 1<<20, props, pqarrow.DefaultWriterProps()); err != nil {
			return nil, &Error{File: path, Msg: "cannot write the scored Parquet file: " + err.Error(), Kind: ErrFormat, Err: err}
		}
	case "arrow":
		w, err := ipc.NewFileWriter(&buf, ipc.WithSchema(out.Schema()))
		if err != nil {
			return nil, &Error{File: path, Msg: "cannot write the scored Arrow file: " + err.Error(), Kind: ErrFormat, Err: err}
		}
		tr := array.NewTableReader(out, 1<<16)
		defer tr.Release()
		for tr.Next() {
			if err := w.Write(tr.Record()); err != nil {
				return nil, &Error{File: path, Msg: "cannot write the scored Arrow file: " + err.Error(), Kind: ErrFormat, Err: err}
			}
		}
		if err := w.Close(); err != nil {
			return nil, &Error{File: path, Msg: "cannot write the scored Arrow file: " + err.Error(), Kind: ErrFormat, Err: err}
		}
	default:
		return nil, fmt.Errorf("cohort: AppendColumns writes parquet or arrow, not %q", format)
	}
	return buf.Bytes(), nil
}

// readTable reads every column of a Parquet or Arrow IPC file.
func readTable(path, format string) (arrow.Table, error) {
	switch format {
	case "parquet":
		fr, closeFile, err := openParquet(path, pqarrow.ArrowReadProperties{Parallel: true})
		if err != nil {
			return nil, err
		}
		defer closeFile()
		tbl, err := fr.ReadTable(context.Background())
		if err != nil {
			return nil, formatError(path, "Parquet", err)
		}
		return tbl, nil
	case "arrow":
		r, closeFile, err := openArrow(path)
		if err != nil {
			return nil, err
		}
		defer closeFile()
		var recs []arrow.Record
		for i := 0; i < r.NumRecords(); i++ {
			rec, err := r.Record(i)
			if err != nil {
				return nil, formatError(path, "Arrow IPC", err)
			}
			rec.Retain()
			defer rec.Release()
			recs = append(recs, rec)
		}
		return array.NewTableFromRecords(r.Schema(), recs), nil
	}
	return nil, fmt.Errorf("cohort: readTable reads parquet or arrow, not %q", format)
}
