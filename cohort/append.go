package cohort

import (
	"bytes"
	"fmt"
	"math"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/compress"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/metadata"
	"github.com/apache/arrow-go/v18/parquet/schema"
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
	if format == "parquet" {
		return appendParquet(path, names, values)
	}
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

// readTable reads every column of an Arrow IPC file.
func readTable(path, format string) (arrow.Table, error) {
	if format != "arrow" {
		return nil, fmt.Errorf("cohort: readTable reads arrow, not %q", format)
	}
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

// appendParquet is AppendColumns for a Parquet file. The file's schema
// is kept, with optional DOUBLE columns added at its end; every column
// chunk of the file is copied row group by row group, values with their
// definition and repetition levels, so each column keeps its physical
// and logical type, nested columns included. The file's key–value
// metadata is kept, except a stored Arrow schema ("ARROW:schema"),
// which would describe the file without the added columns.
func appendParquet(path string, names []string, values [][]float64) (out []byte, err error) {
	defer recoverDecode(path, "Parquet", &err)
	pf, err := openParquet(path)
	if err != nil {
		return nil, err
	}
	defer pf.Close()
	rows := pf.NumRows()
	for k, name := range names {
		if int64(len(values[k])) != rows {
			return nil, fmt.Errorf("cohort: %d values for column %q of a file with %d rows", len(values[k]), name, rows)
		}
	}
	md := pf.MetaData()
	copied, err := schema.FromParquet(schema.ToThrift(md.Schema.Root()))
	if err != nil {
		return nil, formatError(path, "Parquet", err)
	}
	root := copied.(*schema.GroupNode)
	fields := make(schema.FieldList, 0, root.NumFields()+len(names))
	for i := 0; i < root.NumFields(); i++ {
		fields = append(fields, root.Field(i))
	}
	for _, name := range names {
		n, err := schema.NewPrimitiveNode(name, parquet.Repetitions.Optional, parquet.Types.Double, -1, -1)
		if err != nil {
			return nil, fmt.Errorf("cohort: column %q: %w", name, err)
		}
		fields = append(fields, n)
	}
	sc, err := schema.NewGroupNode(root.Name(), parquet.Repetitions.Required, fields, -1)
	if err != nil {
		return nil, formatError(path, "Parquet", err)
	}
	var meta metadata.KeyValueMetadata
	for _, kv := range md.KeyValueMetadata().Keys() {
		if kv != "ARROW:schema" {
			meta.Append(kv, *md.KeyValueMetadata().FindValue(kv))
		}
	}
	var buf bytes.Buffer
	props := parquet.NewWriterProperties(parquet.WithCompression(compress.Codecs.Snappy))
	w, err := file.NewParquetWriterWithError(&buf, sc, file.WithWriterProps(props), file.WithWriteMetadata(meta))
	if err != nil {
		return nil, writeError(path, err)
	}
	ncols := md.Schema.NumColumns()
	var off int64
	for g := 0; g < pf.NumRowGroups(); g++ {
		rg := pf.RowGroup(g)
		rgw := w.AppendRowGroup()
		for c := 0; c < ncols; c++ {
			cr, err := rg.Column(c)
			if err != nil {
				return nil, formatError(path, "Parquet", err)
			}
			cw, err := rgw.NextColumn()
			if err != nil {
				return nil, writeError(path, err)
			}
			if err := copyChunk(cr, cw); err != nil {
				return nil, formatError(path, "Parquet", err)
			}
		}
		n := rg.NumRows()
		for k := range names {
			cw, err := rgw.NextColumn()
			if err != nil {
				return nil, writeError(path, err)
			}
			if err := writeDoubles(cw.(*file.Float64ColumnChunkWriter), values[k][off:off+n]); err != nil {
				return nil, writeError(path, err)
			}
		}
		if err := rgw.Close(); err != nil {
			return nil, writeError(path, err)
		}
		off += n
	}
	if err := w.Close(); err != nil {
		return nil, writeError(path, err)
	}
	return buf.Bytes(), nil
}

func writeError(path string, err error) error {
	return &Error{File: path, Msg: "cannot write the scored Parquet file: " + err.Error(), Kind: ErrFormat, Err: err}
}

// writeDoubles writes vals to an optional DOUBLE column, NaN as null.
func writeDoubles(w *file.Float64ColumnChunkWriter, vals []float64) error {
	defs := make([]int16, min(len(vals), batchRows))
	dense := make([]float64, 0, len(defs))
	for len(vals) > 0 {
		n := min(len(vals), batchRows)
		dense = dense[:0]
		for i, v := range vals[:n] {
			if math.IsNaN(v) {
				defs[i] = 0
			} else {
				defs[i] = 1
				dense = append(dense, v)
			}
		}
		if _, err := w.WriteBatch(dense, defs[:n], nil); err != nil {
			return err
		}
		vals = vals[n:]
	}
	return nil
}

// copyChunk copies the values and levels of one column chunk to a
// column writer of the same type.
func copyChunk(cr file.ColumnChunkReader, cw file.ColumnChunkWriter) error {
	d := cr.Descriptor()
	switch r := cr.(type) {
	case *file.BooleanColumnChunkReader:
		return copyValues(r, cw.(*file.BooleanColumnChunkWriter), d)
	case *file.Int32ColumnChunkReader:
		return copyValues(r, cw.(*file.Int32ColumnChunkWriter), d)
	case *file.Int64ColumnChunkReader:
		return copyValues(r, cw.(*file.Int64ColumnChunkWriter), d)
	case *file.Int96ColumnChunkReader:
		return copyValues(r, cw.(*file.Int96ColumnChunkWriter), d)
	case *file.Float32ColumnChunkReader:
		return copyValues(r, cw.(*file.Float32ColumnChunkWriter), d)
	case *file.Float64ColumnChunkReader:
		return copyValues(r, cw.(*file.Float64ColumnChunkWriter), d)
	case *file.ByteArrayColumnChunkReader:
		return copyValues(r, cw.(*file.ByteArrayColumnChunkWriter), d)
	case *file.FixedLenByteArrayColumnChunkReader:
		return copyValues(r, cw.(*file.FixedLenByteArrayColumnChunkWriter), d)
	}
	return fmt.Errorf("column %s: a column of type %s", d.Path(), d.PhysicalType())
}

// copyValues copies a column chunk batch by batch. A batch of byte
// arrays points into the reader's page, which stays valid until the next
// read; the writer has encoded it by then.
func copyValues[T any, R interface {
	ReadBatch(int64, []T, []int16, []int16) (int64, int, error)
}, W interface {
	WriteBatch([]T, []int16, []int16) (int64, error)
}](r R, w W, d *schema.Column) error {
	vals := make([]T, batchRows)
	var defs, reps []int16
	if d.MaxDefinitionLevel() > 0 {
		defs = make([]int16, batchRows)
	}
	if d.MaxRepetitionLevel() > 0 {
		reps = make([]int16, batchRows)
	}
	for {
		total, nv, err := r.ReadBatch(batchRows, vals, defs, reps)
		if err != nil {
			return err
		}
		if total == 0 {
			return nil
		}
		var dl, rl []int16
		if defs != nil {
			dl = defs[:total]
		}
		if reps != nil {
			rl = reps[:total]
		}
		if _, err := w.WriteBatch(vals[:nv], dl, rl); err != nil {
			return err
		}
	}
}
