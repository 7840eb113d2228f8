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
	"runtime"
	"strconv"
	"strings"
	"sync"

	"github.com/apache/arrow-go/v18/arrow"
	"github.com/apache/arrow-go/v18/arrow/array"
	"github.com/apache/arrow-go/v18/arrow/ipc"
	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
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
// the typed column readers of the Apache Arrow Go library's Parquet
// package, column by column in batches (columns in parallel), so that
// memory holds the requested columns and one batch of each. Typed
// columns keep their types: a numeric request takes integer,
// floating-point and boolean columns (and text, parsed as in CSV); a
// categorical request takes text, integer, boolean, date, timestamp and
// integer-backed decimal columns (numbers as their text, a date as
// "2024-03-01", a timestamp as "2024-03-01T08:30:00Z"). Nulls are
// missing values, as are the missing markers in text columns; NaN is a
// missing value (unless Request.NaNIsError) and an infinite value is an
// error. Errors name the file, the 1-based row, the column and the
// value.
//
// A damaged or truncated file is an *Error of kind ErrFormat ("not a
// readable Parquet file: …"), never a panic: the footer's row groups
// and column chunks are checked against the file's size, pages are
// decoded within memory limits set by the file's size, and the decoding
// runs inside recover boundaries, in goroutines of this package only.
func LoadParquet(path string, reqs []Request, opt Options) (*Frame, error) {
	return loadParquet(context.Background(), path, reqs, opt)
}

// batchRows is the number of rows a columnar reader decodes at a time.
const batchRows = 1 << 16

func loadParquet(ctx context.Context, path string, reqs []Request, opt Options) (out *Frame, err error) {
	defer recoverDecode(path, "Parquet", &err)
	pf, err := openParquet(path)
	if err != nil {
		return nil, err
	}
	defer pf.Close()
	header, pcols := parquetColumns(pf.MetaData().Schema)
	nested := make([]bool, len(pcols))
	for i, c := range pcols {
		nested[i] = c.nested
	}
	nrows := pf.NumRows()
	l, err := newLayoutOf(path, "Parquet", header, nested, reqs, opt, int(min(nrows, 1<<24)))
	if err != nil {
		return nil, err
	}
	var jobs []int // the file columns read, one job each
	for _, i := range l.idx {
		if k := l.plan[i]; l.cols[k].Index == i {
			jobs = append(jobs, i)
		}
	}
	errs := make([]error, len(jobs))
	rows := make([]int, len(jobs))
	workers := opt.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	sem := make(chan struct{}, workers)
	var wg sync.WaitGroup
	for j, i := range jobs {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			defer recoverDecode(path, "Parquet", &errs[j])
			k := l.plan[i]
			rows[j], errs[j] = l.readParquetColumn(pf, k, pcols[i], reqs[k].NaNIsError, ctx.Err)
		}()
	}
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return nil, err
		}
	}
	for _, r := range rows {
		if int64(r) != nrows {
			return nil, formatError(path, "Parquet", fmt.Errorf("a column holds %d values, but the file says %d rows", r, nrows))
		}
	}
	return l.frame(int(nrows), reqs)
}

// LoadArrow reads the requested columns of an Arrow IPC file (the Arrow
// file format, also written as Feather version 2), batch by batch, with
// the rules of LoadParquet: every record batch is validated before it is
// read, and a damaged file is an *Error of kind ErrFormat ("not a
// readable Arrow IPC file: …"), never a panic.
func LoadArrow(path string, reqs []Request, opt Options) (*Frame, error) {
	return loadArrow(context.Background(), path, reqs, opt)
}

func loadArrow(ctx context.Context, path string, reqs []Request, opt Options) (out *Frame, err error) {
	defer recoverDecode(path, "Arrow IPC", &err)
	r, closeFile, err := openArrow(path)
	if err != nil {
		return nil, err
	}
	defer closeFile()
	l, err := newLayout(path, "Arrow IPC", r.Schema(), reqs, opt, 0)
	if err != nil {
		return nil, err
	}
	row := 0
	for b := 0; b < r.NumRecords(); b++ {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		rec, err := r.Record(b)
		if err != nil {
			return nil, formatError(path, "Arrow IPC", err)
		}
		if int(rec.NumCols()) != len(l.header) {
			return nil, formatError(path, "Arrow IPC", fmt.Errorf("record batch %d has %d columns, the schema %d", b, rec.NumCols(), len(l.header)))
		}
		n := int(rec.NumRows())
		for _, i := range l.idx {
			k := l.plan[i]
			if l.cols[k].Index != i {
				continue
			}
			arr := rec.Column(i)
			if arr.Len() != n {
				return nil, formatError(path, "Arrow IPC", fmt.Errorf("record batch %d: column %q holds %d values for %d rows", b, l.header[i], arr.Len(), n))
			}
			if err := l.append(k, arr, row, reqs[k].NaNIsError); err != nil {
				return nil, err
			}
		}
		row += n
	}
	return l.frame(row, reqs)
}

// openParquet opens a Parquet file for reading, memory-mapped, after
// checking its footer against the file's size; its pages are decoded
// into memory with the limits of newLimitedAllocator.
func openParquet(path string) (pf *file.Reader, err error) {
	defer recoverDecode(path, "Parquet", &err)
	// Column chunks are read through a buffer of their own rather than
	// copied whole into fresh memory (the library's default): a 10M-row
	// column chunk is 80 MB of first-touched pages. The buffer (one per
	// chunk, never reused by the library) is 256 KiB, which holds the
	// pages of common writers whole (it grows for a larger page): 1 MiB
	// buffers left 49 MB of garbage in a 10M-row load, 256 KiB 12 MB,
	// for the same instructions. The page buffers come from the file's
	// allocator, which reuses them chunk after chunk.
	props := parquet.NewReaderProperties(newLimitedAllocator(path, true))
	props.BufferedStreamEnabled = true
	props.BufferSize = 256 << 10
	pf, err = file.OpenParquetFile(path, true, file.WithReadProps(props))
	if err != nil {
		if errors.As(err, new(*fs.PathError)) {
			return nil, &Error{File: path, Msg: "cannot read the Parquet file: " + err.Error(), Kind: ErrRead, Err: err}
		}
		return nil, formatError(path, "Parquet", err)
	}
	err = checkFooter(path, pf)
	if err == nil {
		err = checkStoredSchema(pf.MetaData().KeyValueMetadata())
	}
	if err != nil {
		pf.Close()
		return nil, formatError(path, "Parquet", err)
	}
	return pf, nil
}

// checkFooter checks what a Parquet footer says against the file: row
// counts that are not negative and add up, and every column chunk inside
// the file.
func checkFooter(path string, pf *file.Reader) error {
	st, err := os.Stat(path)
	if err != nil {
		return err
	}
	size := st.Size()
	md := pf.MetaData()
	if md.NumRows < 0 {
		return fmt.Errorf("the footer says %d rows", md.NumRows)
	}
	var rows int64
	for g := 0; g < md.NumRowGroups(); g++ {
		rg := md.RowGroup(g)
		if rg.NumRows() < 0 {
			return fmt.Errorf("row group %d says %d rows", g, rg.NumRows())
		}
		rows += rg.NumRows()
		for c := 0; c < rg.NumColumns(); c++ {
			cc, err := rg.ColumnChunk(c)
			if err != nil {
				return err
			}
			start := cc.DataPageOffset()
			if cc.HasDictionaryPage() && cc.DictionaryPageOffset() > 0 {
				start = min(start, cc.DictionaryPageOffset())
			}
			if n := cc.TotalCompressedSize(); start < 0 || n < 0 || start > size || n > size-start {
				return fmt.Errorf("row group %d, column %d lies outside the file (offset %d, %d bytes, file %d bytes)", g, c, start, n, size)
			}
			if cc.NumValues() < 0 {
				return fmt.Errorf("row group %d, column %d says %d values", g, c, cc.NumValues())
			}
		}
	}
	if rows != md.NumRows {
		return fmt.Errorf("the row groups hold %d rows, the footer says %d", rows, md.NumRows)
	}
	return nil
}

// openArrow opens an Arrow IPC file; close releases it.
func openArrow(path string) (r *ipc.FileReader, close func(), err error) {
	defer recoverDecode(path, "Arrow IPC", &err)
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, &Error{File: path, Msg: "cannot read file: " + err.Error(), Kind: ErrRead, Err: err}
	}
	if err := checkArrowFooter(path); err != nil {
		f.Close()
		return nil, nil, formatError(path, "Arrow IPC", err)
	}
	r, err = ipc.NewFileReader(f, ipc.WithAllocator(newLimitedAllocator(path, false)))
	if err != nil {
		f.Close()
		return nil, nil, formatError(path, "Arrow IPC", err)
	}
	return r, func() { r.Close(); f.Close() }, nil
}

// formatError is a columnar file its reader refuses: kind ErrFormat. An
// error that already is an *Error, or a cancelled read, is kept.
func formatError(path, format string, err error) error {
	if errors.As(err, new(*Error)) || errors.Is(err, context.Canceled) || errors.Is(err, context.DeadlineExceeded) {
		return err
	}
	return &Error{File: path, Msg: "not a readable " + format + " file: " + firstLine(err.Error()), Kind: ErrFormat, Err: err}
}

// firstLine is the first line of s, at most 200 bytes of it.
func firstLine(s string) string {
	if i := strings.IndexByte(s, '\n'); i >= 0 {
		s = s[:i]
	}
	if len(s) > 200 {
		s = s[:200] + "…"
	}
	return s
}

// recoverDecode turns a panic in a third-party decoder (or in this
// package's reading of what it decoded) into an *Error of kind
// ErrFormat in *err. Deferred at the top of every function that decodes
// a columnar file and of every goroutine that does.
func recoverDecode(path, format string, err *error) {
	if p := recover(); p != nil {
		*err = &Error{File: path, Msg: fmt.Sprintf("not a readable %s file: the reader failed (%v)", format, firstLine(fmt.Sprint(p))), Kind: ErrFormat,
			Err: fmt.Errorf("panic while decoding: %v", p)}
	}
}

// layout is how a columnar file's columns map to the requests, and the
// columns being filled.
type layout struct {
	path    string
	format  string
	header  []string
	renamed []RenamedColumn
	plan    []int // request index by file column, −1 for none
	idx     []int // the file columns read
	cols    []*Column
	levels  []map[string]int32
	// intLevels[k] caches request k's codes by integer value (see
	// appendLevels).
	intLevels []map[int64]int32
	missing   []string
	dec       byte
}

// newLayout checks the schema against the requests and makes the
// columns to fill, with room for hint rows.
func newLayout(path, format string, schema *arrow.Schema, reqs []Request, opt Options, hint int) (*layout, error) {
	header := make([]string, schema.NumFields())
	nested := make([]bool, len(header))
	for i, f := range schema.Fields() {
		header[i] = f.Name
		_, nested[i] = f.Type.(arrow.NestedType)
	}
	return newLayoutOf(path, format, header, nested, reqs, opt, hint)
}

// newLayoutOf is newLayout for a file of columns header, the nested
// ones marked in nested.
func newLayoutOf(path, format string, header []string, nested []bool, reqs []Request, opt Options, hint int) (*layout, error) {
	l := &layout{path: path, format: format, header: header, missing: opt.Missing, dec: '.'}
	l.renamed = RenameHeader(l.header, opt.Rename)
	if err := checkHeader(path, 0, l.header); err != nil {
		return nil, err
	}
	var err error
	if l.plan, err = planColumns(path, l.header, reqs); err != nil {
		return nil, err
	}
	for i, k := range l.plan {
		if k >= 0 {
			if nested[i] {
				return nil, &Error{File: path, Column: l.header[i], Msg: "a nested column; give a flat column", Kind: ErrFormat}
			}
			l.idx = append(l.idx, i)
		}
	}
	if l.missing == nil {
		l.missing = DefaultMissing
	}
	if opt.DecimalComma {
		l.dec = ','
	}
	hint = max(hint, 0)
	l.cols = make([]*Column, len(reqs))
	l.levels = make([]map[string]int32, len(reqs))
	l.intLevels = make([]map[int64]int32, len(reqs))
	for k, r := range reqs {
		c := &Column{Name: r.Name, Kind: r.Kind, Index: -1}
		for i, h := range l.header {
			if h == r.Name && c.Index < 0 {
				c.Index = i
			}
		}
		if r.Kind == Numeric {
			c.Num = make([]float64, 0, hint)
		} else {
			c.Codes = make([]int32, 0, hint)
		}
		l.cols[k] = c
		l.levels[k] = map[string]int32{}
		l.intLevels[k] = map[int64]int32{}
	}
	return l, nil
}

// append adds the values of arr, the rows from row0 of request k's
// column, after checking that the array is well formed.
func (l *layout) append(k int, arr arrow.Array, row0 int, nanErr bool) error {
	if err := validArray(arr); err != nil {
		return formatError(l.path, l.format, fmt.Errorf("column %q, rows from %d: %w", l.cols[k].Name, row0+1, err))
	}
	if l.cols[k].Kind == Numeric {
		return appendNumbers(l.cols[k], arr, row0, l.path, l.missing, l.dec, nanErr)
	}
	return appendLevels(l.cols[k], arr, row0, l.levels[k], l.intLevels[k], l.missing)
}

// frame makes the frame of rows rows from the filled columns; a request
// for a column another request also reads shares its values.
func (l *layout) frame(rows int, reqs []Request) (*Frame, error) {
	if rows == 0 {
		return nil, &Error{File: l.path, Msg: "the file has no rows", Kind: ErrEmpty}
	}
	// Row i is row i+1 of the file: Line needs no list of lines.
	out := &Frame{File: l.path, Header: l.header, Renamed: l.renamed, Rows: rows, RowNumbered: true}
	for k, c := range l.cols {
		if k0 := l.plan[c.Index]; k0 != k {
			src := l.cols[k0]
			*c = *src
			c.Name = reqs[k].Name
		}
	}
	out.Columns = l.cols
	return out, nil
}

// validArray checks what reading arr relies on: a validity bitmap long
// enough for its rows, offsets of text that run forwards within the
// data, and dictionary indices within the dictionary.
func validArray(arr arrow.Array) error {
	d := arr.Data()
	if d.Len() < 0 || d.Offset() < 0 {
		return fmt.Errorf("an array of length %d at offset %d", d.Len(), d.Offset())
	}
	bufs := d.Buffers()
	if arr.NullN() > 0 && d.DataType().ID() != arrow.NULL && (len(bufs) == 0 || bufs[0] == nil || bufs[0].Len()*8 < d.Offset()+d.Len()) {
		return errors.New("a validity bitmap shorter than its rows")
	}
	if fw, ok := d.DataType().(arrow.FixedWidthDataType); ok {
		need := ((d.Offset()+d.Len())*fw.BitWidth() + 7) / 8
		if len(bufs) < 2 || bufs[1] == nil && d.Len() > 0 || bufs[1] != nil && bufs[1].Len() < need {
			return fmt.Errorf("a values buffer shorter than its %d rows", d.Len())
		}
	}
	switch a := arr.(type) {
	case *array.String:
		return a.ValidateFull()
	case *array.LargeString:
		return a.ValidateFull()
	case *array.Binary:
		return a.ValidateFull()
	case *array.Dictionary:
		if err := validArray(a.Dictionary()); err != nil {
			return err
		}
		n := a.Dictionary().Len()
		for i := 0; i < a.Len(); i++ {
			if a.IsValid(i) {
				if j := a.GetValueIndex(i); j < 0 || j >= n {
					return fmt.Errorf("dictionary index %d of a dictionary of %d values", j, n)
				}
			}
		}
	}
	return nil
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

// appendNumbers appends the values of arr to numeric column c. The
// array's type is looked at once: typed values are converted from the
// array's own values slice, and only text is read value by value.
func appendNumbers(c *Column, arr arrow.Array, row0 int, path string, missing []string, dec byte, nanErr bool) error {
	switch a := arr.(type) {
	case *array.Float64:
		return appendFloats(c, arr, a.Float64Values(), row0, path, nanErr)
	case *array.Float32:
		return appendFloats(c, arr, a.Float32Values(), row0, path, nanErr)
	case *array.Int64:
		appendInts(c, arr, a.Int64Values())
	case *array.Int32:
		appendInts(c, arr, a.Int32Values())
	case *array.Int16:
		appendInts(c, arr, a.Int16Values())
	case *array.Int8:
		appendInts(c, arr, a.Int8Values())
	case *array.Uint64:
		appendInts(c, arr, a.Uint64Values())
	case *array.Uint32:
		appendInts(c, arr, a.Uint32Values())
	case *array.Uint16:
		appendInts(c, arr, a.Uint16Values())
	case *array.Uint8:
		appendInts(c, arr, a.Uint8Values())
	case *array.Boolean:
		for i := 0; i < a.Len(); i++ {
			switch {
			case a.IsNull(i):
				c.Num = append(c.Num, math.NaN())
				c.Missing++
			case a.Value(i):
				c.Num = append(c.Num, 1)
			default:
				c.Num = append(c.Num, 0)
			}
		}
	default:
		return appendNumberText(c, arr, row0, path, missing, dec, nanErr)
	}
	return nil
}

// integer is an Arrow integer type.
type integer interface {
	~int8 | ~int16 | ~int32 | ~int64 | ~uint8 | ~uint16 | ~uint32 | ~uint64
}

// appendInts appends integer values (nulls missing) to c.
func appendInts[T integer](c *Column, arr arrow.Array, vals []T) {
	vals = vals[:arr.Len()]
	if arr.NullN() == 0 {
		for _, v := range vals {
			c.Num = append(c.Num, float64(v))
		}
		return
	}
	for i, v := range vals {
		if arr.IsNull(i) {
			c.Num = append(c.Num, math.NaN())
			c.Missing++
			continue
		}
		c.Num = append(c.Num, float64(v))
	}
}

// appendFloats appends floating-point values to c: nulls and NaN are
// missing (NaN an error when nanErr), an infinite value is an error.
func appendFloats[T float32 | float64](c *Column, arr arrow.Array, vals []T, row0 int, path string, nanErr bool) error {
	vals = vals[:arr.Len()]
	nulls := arr.NullN() > 0
	for i, x := range vals {
		if nulls && arr.IsNull(i) {
			c.Num = append(c.Num, math.NaN())
			c.Missing++
			continue
		}
		v := float64(x)
		if v-v != 0 { // ±Inf or NaN
			if math.IsInf(v, 0) {
				return rowError(path, row0+i, c.Name, strconv.FormatFloat(v, 'g', -1, 64), "not a finite number")
			}
			if nanErr {
				return rowError(path, row0+i, c.Name, "NaN", "not a number (a computed value of NaN is an error here, not a missing value)")
			}
			c.Missing++
		}
		c.Num = append(c.Num, v)
	}
	return nil
}

// appendNumberText appends a text column's values to numeric column c,
// parsed as in CSV.
func appendNumberText(c *Column, arr arrow.Array, row0 int, path string, missing []string, dec byte, nanErr bool) error {
	n := arr.Len()
	for i := 0; i < n; i++ {
		if arr.IsNull(i) {
			c.Num = append(c.Num, math.NaN())
			c.Missing++
			continue
		}
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
		v, ok := parseFloat([]byte(s), dec)
		if !ok {
			return rowError(path, row0+i, c.Name, s, notNumber([]byte(s), dec))
		}
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
	}
	return nil
}

// appendLevels appends the values of arr to categorical column c. The
// levels of an integer column are its values as text (as
// arrow.Array.ValueStr writes them), made once per distinct value
// through cache (the value's code, −1 for a missing marker), so that an
// integer outcome is not formatted as text row by row.
func appendLevels(c *Column, arr arrow.Array, row0 int, index map[string]int32, cache map[int64]int32, missing []string) error {
	switch a := arr.(type) {
	case *array.Int64:
		appendIntLevels(c, arr, a.Int64Values(), row0, index, cache, missing)
		return nil
	case *array.Int32:
		appendIntLevels(c, arr, a.Int32Values(), row0, index, cache, missing)
		return nil
	case *array.Int16:
		appendIntLevels(c, arr, a.Int16Values(), row0, index, cache, missing)
		return nil
	case *array.Int8:
		appendIntLevels(c, arr, a.Int8Values(), row0, index, cache, missing)
		return nil
	case *array.Uint32:
		appendIntLevels(c, arr, a.Uint32Values(), row0, index, cache, missing)
		return nil
	case *array.Uint16:
		appendIntLevels(c, arr, a.Uint16Values(), row0, index, cache, missing)
		return nil
	case *array.Uint8:
		appendIntLevels(c, arr, a.Uint8Values(), row0, index, cache, missing)
		return nil
	}
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
		c.Codes = append(c.Codes, c.level(s, row0+i, index, missing))
	}
	return nil
}

// level is the code of text s first seen at 0-based row (−1, counted
// missing, for a missing marker), adding it as a new level if need be.
//
// A level already seen is looked up first: no missing marker is ever a
// level, so only text not seen before is trimmed and checked against
// the markers.
func (c *Column) level(s string, row int, index map[string]int32, missing []string) int32 {
	if code, ok := index[s]; ok {
		return code
	}
	if isToken(strings.TrimSpace(s), missing) {
		c.Missing++
		return -1
	}
	code := int32(len(c.Levels))
	index[s] = code
	c.Levels = append(c.Levels, s)
	c.LevelLine = append(c.LevelLine, row+1)
	return code
}

// appendIntLevels is appendLevels for an integer column of values vals
// (uint64 is left to the text path: its values do not all fit the
// cache's int64 keys).
func appendIntLevels[T integer](c *Column, arr arrow.Array, vals []T, row0 int, index map[string]int32, cache map[int64]int32, missing []string) {
	vals = vals[:arr.Len()]
	nulls := arr.NullN() > 0
	for i, v := range vals {
		if nulls && arr.IsNull(i) {
			c.Codes = append(c.Codes, -1)
			c.Missing++
			continue
		}
		code, ok := cache[int64(v)]
		if !ok {
			code = c.level(arr.ValueStr(i), row0+i, index, missing)
			cache[int64(v)] = code
		} else if code < 0 {
			c.Missing++
		}
		c.Codes = append(c.Codes, code)
	}
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
