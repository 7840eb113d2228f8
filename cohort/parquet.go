package cohort

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"strconv"
	"strings"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/arrow/memory"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/pqarrow"
)

// isParquet reports whether the file at path starts with the Parquet
// magic bytes.
func isParquet(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	var b [4]byte
	if _, err := io.ReadFull(f, b[:]); err != nil {
		return false
	}
	return bytes.Equal(b[:], []byte("PAR1"))
}

// LoadParquet reads the requested columns of an Apache Parquet file with
// the Apache Arrow Go library, in batches, so that memory holds the
// requested columns and one batch. Typed columns keep their types: a
// numeric request takes integer, floating-point and boolean columns (and
// text, parsed as in CSV); a categorical request takes text and
// dictionary columns (and numbers, as text). Nulls are missing values, as
// are the missing markers in text columns; NaN is a missing value (unless
// Request.NaNIsError) and an infinite value is an error. Errors name the
// file, the 1-based row, the column and the value.
func LoadParquet(path string, reqs []Request, opt Options) (*Frame, error) {
	return loadParquet(context.Background(), path, reqs, opt)
}

func loadParquet(ctx context.Context, path string, reqs []Request, opt Options) (*Frame, error) {
	fr, closeFile, err := openParquet(path, pqarrow.ArrowReadProperties{BatchSize: 1 << 16, Parallel: true})
	if err != nil {
		return nil, err
	}
	defer closeFile()
	pf := fr.ParquetReader()
	schema, err := fr.Schema()
	if err != nil {
		return nil, &Error{File: path, Msg: "cannot read the Parquet schema: " + err.Error(), Kind: ErrFormat, Err: err}
	}
	return fromBatches(path, schema, reqs, opt, int(pf.NumRows()), func(idx []int, each func(arrow.Record) error) error {
		rr, err := fr.GetRecordReader(ctx, idx, nil)
		if err != nil {
			return err
		}
		defer rr.Release()
		for rr.Next() {
			if err := ctx.Err(); err != nil {
				return err
			}
			if err := each(rr.Record()); err != nil {
				return err
			}
		}
		if err := rr.Err(); err != nil && !errors.Is(err, io.EOF) {
			return err
		}
		return nil
	}, true)
}

// LoadArrow reads the requested columns of an Arrow IPC file (the Arrow
// file format, also written as Feather version 2), batch by batch, with
// the rules of LoadParquet.
func LoadArrow(path string, reqs []Request, opt Options) (*Frame, error) {
	return loadArrow(context.Background(), path, reqs, opt)
}

func loadArrow(ctx context.Context, path string, reqs []Request, opt Options) (*Frame, error) {
	r, closeFile, err := openArrow(path)
	if err != nil {
		return nil, err
	}
	defer closeFile()
	return fromBatches(path, r.Schema(), reqs, opt, 0, func(idx []int, each func(arrow.Record) error) error {
		for i := 0; i < r.NumRecords(); i++ {
			if err := ctx.Err(); err != nil {
				return err
			}
			rec, err := r.Record(i)
			if err != nil {
				return err
			}
			if err := each(rec); err != nil {
				return err
			}
		}
		return nil
	}, false)
}

// openParquet opens a Parquet file for reading as Arrow data; close
// releases it.
func openParquet(path string, props pqarrow.ArrowReadProperties) (fr *pqarrow.FileReader, close func(), err error) {
	pf, err := file.OpenParquetFile(path, true)
	if err != nil {
		kind := ErrFormat
		if errors.As(err, new(*fs.PathError)) {
			kind = ErrRead // the file could not be opened or read
		}
		return nil, nil, &Error{File: path, Msg: "cannot read the Parquet file: " + err.Error(), Kind: kind, Err: err}
	}
	fr, err = pqarrow.NewFileReader(pf, props, memory.DefaultAllocator)
	if err != nil {
		pf.Close()
		return nil, nil, &Error{File: path, Msg: "cannot read the Parquet file: " + err.Error(), Kind: ErrFormat, Err: err}
	}
	return fr, func() { pf.Close() }, nil
}

// openArrow opens an Arrow IPC file; close releases it.
func openArrow(path string) (r *ipc.FileReader, close func(), err error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, &Error{File: path, Msg: "cannot read file: " + err.Error(), Kind: ErrRead, Err: err}
	}
	r, err = ipc.NewFileReader(f)
	if err != nil {
		f.Close()
		return nil, nil, &Error{File: path, Msg: "cannot read the Arrow file: " + err.Error(), Kind: ErrFormat, Err: err}
	}
	return r, func() { r.Close(); f.Close() }, nil
}

// fromBatches builds a frame from record batches. read hands every batch
// to its callback; when projected is true the batches hold only the
// columns idx, in that order, otherwise every column of the schema.
func fromBatches(path string, schema *arrow.Schema, reqs []Request, opt Options, hint int,
	read func(idx []int, each func(arrow.Record) error) error, projected bool) (*Frame, error) {
	header := make([]string, schema.NumFields())
	for i, f := range schema.Fields() {
		header[i] = f.Name
		if to, ok := opt.Rename[f.Name]; ok {
			header[i] = to
		}
	}
	if err := checkHeader(path, 0, header); err != nil {
		return nil, err
	}
	plan, err := planColumns(path, header, reqs)
	if err != nil {
		return nil, err
	}
	var idx []int
	for i, k := range plan {
		if k >= 0 {
			if _, nested := schema.Field(i).Type.(arrow.NestedType); nested {
				return nil, &Error{File: path, Column: header[i], Msg: "a nested column; give a flat column", Kind: ErrFormat}
			}
			idx = append(idx, i)
		}
	}
	missing := opt.Missing
	if missing == nil {
		missing = DefaultMissing
	}
	dec := byte('.')
	if opt.DecimalComma {
		dec = ','
	}
	cols := make([]*Column, len(reqs))
	for k, r := range reqs {
		c := &Column{Name: r.Name, Kind: r.Kind, Index: -1}
		for i, h := range header {
			if h == r.Name && c.Index < 0 {
				c.Index = i
			}
		}
		if r.Kind == Numeric {
			c.Num = make([]float64, 0, hint)
		} else {
			c.Codes = make([]int32, 0, hint)
		}
		cols[k] = c
	}
	levels := make([]map[string]int32, len(reqs))
	for k := range levels {
		levels[k] = map[string]int32{}
	}
	row := 0
	err = read(idx, func(rec arrow.Record) error {
		for j, i := range idx {
			k := plan[i]
			if cols[k].Index != i {
				continue
			}
			col := j
			if !projected {
				col = i
			}
			arr := rec.Column(col)
			var err error
			if cols[k].Kind == Numeric {
				err = appendNumbers(cols[k], arr, row, path, missing, dec, reqs[k].NaNIsError)
			} else {
				err = appendLevels(cols[k], arr, row, levels[k], missing)
			}
			if err != nil {
				return err
			}
		}
		row += int(rec.NumRows())
		return nil
	})
	if err != nil {
		var ce *Error
		if errors.As(err, &ce) {
			return nil, err
		}
		return nil, &Error{File: path, Msg: "reading the data: " + err.Error(), Kind: ErrFormat, Err: err}
	}
	if row == 0 {
		return nil, &Error{File: path, Msg: "the file has no rows", Kind: ErrEmpty}
	}
	out := &Frame{File: path, Header: header, Rows: row, RowNumbered: true, lines: make([]int32, row)}
	for i := range out.lines {
		out.lines[i] = int32(i + 1)
	}
	for k, c := range cols {
		if k0 := plan[c.Index]; k0 != k {
			src := cols[k0]
			*c = *src
			c.Name = reqs[k].Name
		}
	}
	out.Columns = cols
	return out, nil
}

// isArrow reports whether the file at path starts with the Arrow IPC
// file magic.
func isArrow(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	var b [6]byte
	if _, err := io.ReadFull(f, b[:]); err != nil {
		return false
	}
	return bytes.Equal(b[:], []byte("ARROW1"))
}

func rowError(path string, row int, col, value, msg string) *Error {
	return &Error{File: path, Line: row + 1, Row: true, Column: col, Value: value, HasValue: true, Msg: msg, Kind: ErrNotNumber}
}

func appendNumbers(c *Column, arr arrow.Array, row0 int, path string, missing []string, dec byte, nanErr bool) error {
	n := arr.Len()
	push := func(i int, v float64) error {
		if math.IsInf(v, 0) {
			return rowError(path, row0+i, c.Name, strconv.FormatFloat(v, 'g', -1, 64), "not a finite number")
		}
		if math.IsNaN(v) {
			if nanErr {
				return rowError(path, row0+i, c.Name, "NaN", "not a number (a computed value of NaN is an error here, not a missing value)")
			}
			c.Missing++
		}
		c.Num = append(c.Num, v)
		return nil
	}
	for i := 0; i < n; i++ {
		if arr.IsNull(i) {
			c.Num = append(c.Num, math.NaN())
			c.Missing++
			continue
		}
		var v float64
		switch a := arr.(type) {
		case *array.Float64:
			v = a.Value(i)
		case *array.Float32:
			v = float64(a.Value(i))
		case *array.Int64:
			v = float64(a.Value(i))
		case *array.Int32:
			v = float64(a.Value(i))
		case *array.Int16:
			v = float64(a.Value(i))
		case *array.Int8:
			v = float64(a.Value(i))
		case *array.Uint64:
			v = float64(a.Value(i))
		case *array.Uint32:
			v = float64(a.Value(i))
		case *array.Uint16:
			v = float64(a.Value(i))
		case *array.Uint8:
			v = float64(a.Value(i))
		case *array.Boolean:
			if a.Value(i) {
				v = 1
			}
		default:
			s, ok := textValue(arr, i)
			if !ok {
				return &Error{File: path, Column: c.Name, Msg: fmt.Sprintf("a Parquet column of type %s, which is not a number", arr.DataType()), Kind: ErrNotNumber}
			}
			s = strings.TrimSpace(s)
			if isToken(s, missing) {
				c.Num = append(c.Num, math.NaN())
				c.Missing++
				continue
			}
			x, ok := parseFloat([]byte(s), dec)
			if !ok {
				return rowError(path, row0+i, c.Name, s, "not a number")
			}
			v = x
		}
		if err := push(i, v); err != nil {
			return err
		}
	}
	return nil
}

func appendLevels(c *Column, arr arrow.Array, row0 int, index map[string]int32, missing []string) error {
	n := arr.Len()
	for i := 0; i < n; i++ {
		if arr.IsNull(i) {
			c.Codes = append(c.Codes, -1)
			c.Missing++
			continue
		}
		s, ok := textValue(arr, i)
		if !ok {
			s = arr.ValueStr(i)
		}
		if isToken(strings.TrimSpace(s), missing) {
			c.Codes = append(c.Codes, -1)
			c.Missing++
			continue
		}
		code, ok := index[s]
		if !ok {
			code = int32(len(c.Levels))
			index[s] = code
			c.Levels = append(c.Levels, s)
			c.LevelLine = append(c.LevelLine, row0+i+1)
		}
		c.Codes = append(c.Codes, code)
	}
	return nil
}

// textValue returns the text of a string, binary or dictionary-encoded
// value.
func textValue(arr arrow.Array, i int) (string, bool) {
	switch a := arr.(type) {
	case *array.String:
		return a.Value(i), true
	case *array.LargeString:
		return a.Value(i), true
	case *array.Binary:
		return string(a.Value(i)), true
	case *array.Dictionary:
		return textValue(a.Dictionary(), a.GetValueIndex(i))
	}
	return "", false
}

func isToken(s string, tokens []string) bool {
	for _, t := range tokens {
		if s == t {
			return true
		}
	}
	return false
}
