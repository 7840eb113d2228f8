package cohort

import (
	"bytes"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/apache/arrow-go/v18/parquet"
	"github.com/apache/arrow-go/v18/parquet/file"
	"github.com/apache/arrow-go/v18/parquet/schema"
)

// A Parquet file is read with the library's column chunk readers
// (package parquet/file), not through its Arrow bridge (pqarrow): the
// typed readers decode a column's values straight into a slice of the
// column's own physical type, so a float64 column is decoded into the
// frame's column itself, an integer outcome is read as integers, and a
// batch allocates nothing. It also keeps the Arrow bridge, and the RPC
// packages it links, out of the binary (see DEVELOPERS.md, "Startup").

// pqKind is how the values of a flat Parquet column are read: by their
// physical type, refined by the logical type where it changes what the
// numbers mean.
type pqKind int

const (
	pqDouble pqKind = iota
	pqFloat
	pqInt32   // INT32: signed integers of up to 32 bits
	pqUint32  // INT32 holding unsigned integers
	pqInt64   // INT64: signed integers
	pqUint64  // INT64 holding unsigned integers
	pqBool    // BOOLEAN
	pqText    // BYTE_ARRAY: text or bytes
	pqDate    // INT32 days since 1970-01-01
	pqTime    // INT64 timestamp (unit in pqColumn.unit)
	pqDecimal // INT32 or INT64 decimal (scale in pqColumn.scale)
	pqOther   // anything else: not a number, and not read as text
)

// pqColumn is one top-level column of a Parquet file.
type pqColumn struct {
	leaf   int // its leaf index in the file's schema
	nested bool
	desc   *schema.Column
	kind   pqKind
	unit   time.Duration // of a timestamp
	scale  int32         // of a decimal
	typ    string        // the type, for messages
}

// parquetColumns lists the top-level columns of a file's schema: a
// group, or a repeated field, is a nested column.
func parquetColumns(sc *schema.Schema) (names []string, cols []pqColumn) {
	root := sc.Root()
	leaf := 0
	for i := 0; i < root.NumFields(); i++ {
		n := root.Field(i)
		names = append(names, n.Name())
		c := pqColumn{leaf: leaf}
		if n.Type() == schema.Group || n.RepetitionType() == parquet.Repetitions.Repeated {
			c.nested = true
			leaf += countLeaves(n)
		} else {
			c.desc = sc.Column(leaf)
			c.kind, c.unit, c.scale, c.typ = pqKindOf(c.desc)
			leaf++
		}
		cols = append(cols, c)
	}
	return names, cols
}

// countLeaves is the number of primitive columns under n.
func countLeaves(n schema.Node) int {
	g, ok := n.(*schema.GroupNode)
	if !ok {
		return 1
	}
	k := 0
	for i := 0; i < g.NumFields(); i++ {
		k += countLeaves(g.Field(i))
	}
	return k
}

// pqKindOf classifies a leaf column by its physical and logical type.
func pqKindOf(d *schema.Column) (kind pqKind, unit time.Duration, scale int32, typ string) {
	lt := d.LogicalType()
	typ = strings.ToLower(d.PhysicalType().String())
	if lt != nil && !lt.Equals(schema.NoLogicalType{}) {
		typ += " (" + lt.String() + ")"
	}
	switch d.PhysicalType() {
	case parquet.Types.Double:
		return pqDouble, 0, 0, typ
	case parquet.Types.Float:
		return pqFloat, 0, 0, typ
	case parquet.Types.Boolean:
		return pqBool, 0, 0, typ
	case parquet.Types.ByteArray:
		switch lt.(type) {
		case schema.DecimalLogicalType:
			return pqOther, 0, 0, typ
		}
		return pqText, 0, 0, typ
	case parquet.Types.Int32, parquet.Types.Int64:
		is64 := d.PhysicalType() == parquet.Types.Int64
		switch t := lt.(type) {
		case schema.IntLogicalType:
			if !t.IsSigned() {
				if is64 {
					return pqUint64, 0, 0, typ
				}
				return pqUint32, 0, 0, typ
			}
		case schema.DateLogicalType:
			if !is64 {
				return pqDate, 0, 0, typ
			}
			return pqOther, 0, 0, typ
		case schema.TimestampLogicalType:
			if !is64 {
				return pqOther, 0, 0, typ
			}
			switch t.TimeUnit() {
			case schema.TimeUnitMillis:
				return pqTime, time.Millisecond, 0, typ
			case schema.TimeUnitMicros:
				return pqTime, time.Microsecond, 0, typ
			case schema.TimeUnitNanos:
				return pqTime, time.Nanosecond, 0, typ
			}
			return pqOther, 0, 0, typ
		case schema.DecimalLogicalType:
			return pqDecimal, 0, t.Scale(), typ
		case nil, schema.NoLogicalType:
		default:
			return pqOther, 0, 0, typ
		}
		if is64 {
			return pqInt64, 0, 0, typ
		}
		return pqInt32, 0, 0, typ
	}
	return pqOther, 0, 0, typ
}

// pqReader reads one requested column of a Parquet file, row group by
// row group, into its Column, with scratch buffers of one batch made
// once.
type pqReader struct {
	l      *layout
	k      int
	col    pqColumn
	nanErr bool
	row    int // rows read so far
	defs   []int16
	// scratch values of one batch, by physical type
	f64 []float64
	f32 []float32
	i32 []int32
	i64 []int64
	b   []bool
	ba  []parquet.ByteArray
	// small caches the codes of integer levels 0–63 (−2 for none yet);
	// others go through the layout's map.
	small [64]int32
	// cache remembers the codes of the last texts of a categorical
	// column.
	cache levelCache
}

// readParquetColumn reads request k's column from every row group of pf
// and returns the rows read.
func (l *layout) readParquetColumn(pf *file.Reader, k int, col pqColumn, nanErr bool, cancelled func() error) (int, error) {
	r := &pqReader{l: l, k: k, col: col, nanErr: nanErr, defs: make([]int16, batchRows)}
	for i := range r.small {
		r.small[i] = -2
	}
	c := l.cols[k]
	if c.Kind == Numeric && (col.kind == pqOther || col.kind == pqDate || col.kind == pqTime || col.kind == pqDecimal) {
		return 0, &Error{File: l.path, Column: c.Name, Msg: fmt.Sprintf("a Parquet column of type %s, which is not a number", col.typ), Kind: ErrNotNumber}
	}
	if c.Kind == Categorical && col.kind == pqOther {
		return 0, &Error{File: l.path, Column: c.Name, Msg: fmt.Sprintf("a Parquet column of type %s, which is not read as categories; give it as text or integers", col.typ), Kind: ErrFormat}
	}
	for g := 0; g < pf.NumRowGroups(); g++ {
		if err := cancelled(); err != nil {
			return r.row, err
		}
		rg := pf.RowGroup(g)
		cr, err := rg.Column(col.leaf)
		if err != nil {
			return r.row, formatError(l.path, "Parquet", err)
		}
		// Closing the chunk's reader frees its page buffers to the
		// file's allocator, which hands them to the next chunk.
		err = r.chunk(cr, rg.NumRows())
		if cerr := cr.Close(); err == nil && cerr != nil {
			err = formatError(l.path, "Parquet", cerr)
		}
		if err != nil {
			return r.row, err
		}
	}
	return r.row, nil
}

// chunk reads the rows of one column chunk.
func (r *pqReader) chunk(cr file.ColumnChunkReader, rows int64) error {
	for rows > 0 {
		n := min(rows, batchRows)
		var total int64
		var nv int
		var err error
		switch cr := cr.(type) {
		case *file.Float64ColumnChunkReader:
			if r.l.cols[r.k].Kind == Numeric {
				total, err = r.doubles(cr, n)
				break
			}
			r.f64 = grow(r.f64)
			total, nv, err = cr.ReadBatch(n, r.f64, r.defs, nil)
			if err == nil {
				c := r.l.cols[r.k]
				codes(r, total, nv, r.f64, func(v float64, row int) int32 {
					return c.level(strconv.FormatFloat(v, 'g', -1, 64), row, r.l.levels[r.k], r.l.missing)
				})
			}
		case *file.Float32ColumnChunkReader:
			r.f32 = grow(r.f32)
			total, nv, err = cr.ReadBatch(n, r.f32, r.defs, nil)
			if err == nil {
				err = r.floats32(total, nv)
			}
		case *file.Int32ColumnChunkReader:
			r.i32 = grow(r.i32)
			total, nv, err = cr.ReadBatch(n, r.i32, r.defs, nil)
			if err == nil {
				err = r.ints32(total, nv)
			}
		case *file.Int64ColumnChunkReader:
			r.i64 = grow(r.i64)
			total, nv, err = cr.ReadBatch(n, r.i64, r.defs, nil)
			if err == nil {
				err = r.ints64(total, nv)
			}
		case *file.BooleanColumnChunkReader:
			r.b = grow(r.b)
			total, nv, err = cr.ReadBatch(n, r.b, r.defs, nil)
			if err == nil {
				err = r.bools(total, nv)
			}
		case *file.ByteArrayColumnChunkReader:
			// One page at a time: the values point into the page (or
			// its dictionary) until the next read, which is all texts
			// needs, whereas ReadBatch copies every value into fresh
			// memory (100 MB of garbage for four text columns of 10M
			// rows).
			r.ba = grow(r.ba)
			total, nv, err = cr.ReadBatchInPage(n, r.ba, r.defs, nil)
			if err == nil {
				err = r.texts(total, nv)
			}
		default:
			return &Error{File: r.l.path, Column: r.l.cols[r.k].Name, Msg: fmt.Sprintf("a Parquet column of type %s, which is not read", r.col.typ), Kind: ErrFormat}
		}
		if err != nil {
			return formatError(r.l.path, "Parquet", err)
		}
		if total == 0 {
			return formatError(r.l.path, "Parquet", fmt.Errorf("column %q ends %d rows before its row group", r.l.cols[r.k].Name, rows))
		}
		r.row += int(total)
		rows -= total
	}
	return nil
}

// grow is a scratch slice of one batch.
func grow[T any](s []T) []T {
	if len(s) < batchRows {
		return make([]T, batchRows)
	}
	return s
}

// valid reports whether level i of the batch holds a value.
func (r *pqReader) valid(i int) bool {
	return r.col.desc.MaxDefinitionLevel() == 0 || r.defs[i] == r.col.desc.MaxDefinitionLevel()
}

// doubles decodes up to n float64 values straight into the tail of the
// column, spreads them over their rows when some are null (NaN,
// missing), and checks them.
func (r *pqReader) doubles(cr *file.Float64ColumnChunkReader, n int64) (int64, error) {
	c := r.l.cols[r.k]
	start := len(c.Num)
	c.Num = slices.Grow(c.Num, int(n))[:start+int(n)]
	dst := c.Num[start:]
	total, nv, err := cr.ReadBatch(n, dst, r.defs, nil)
	c.Num = c.Num[:start+int(total)]
	if err != nil || total == 0 {
		return total, err
	}
	dst = dst[:total]
	if nv < int(total) {
		// Spread the nv values over the rows, from the end, so that
		// no value is overwritten before it moves.
		max := r.col.desc.MaxDefinitionLevel()
		j := nv - 1
		for i := int(total) - 1; i >= 0; i-- {
			if r.defs[i] == max {
				dst[i] = dst[j]
				j--
			} else {
				dst[i] = math.NaN()
				c.Missing++
			}
		}
		for i, v := range dst {
			if v-v != 0 && r.valid(i) {
				if err := r.checkFloat(v, i); err != nil {
					return total, err
				}
			}
		}
		return total, nil
	}
	for i, v := range dst {
		if v-v != 0 { // ±Inf or NaN
			if err := r.checkFloat(v, i); err != nil {
				return total, err
			}
		}
	}
	return total, nil
}

// checkFloat handles a value that is not finite at batch index i: an
// infinite value is an error, NaN is missing (an error when nanErr).
func (r *pqReader) checkFloat(v float64, i int) error {
	c := r.l.cols[r.k]
	if math.IsInf(v, 0) {
		return rowError(r.l.path, r.row+i, c.Name, strconv.FormatFloat(v, 'g', -1, 64), "not a finite number")
	}
	if r.nanErr {
		return rowError(r.l.path, r.row+i, c.Name, "NaN", "not a number (a computed value of NaN is an error here, not a missing value)")
	}
	c.Missing++
	return nil
}

// spread appends a batch of total rows, whose nv values are vals, to
// numeric column c through conv, a null as NaN (missing).
func spread[T any](r *pqReader, total int64, nv int, vals []T, conv func(T) float64) {
	c := r.l.cols[r.k]
	if nv == int(total) {
		for _, v := range vals[:nv] {
			c.Num = append(c.Num, conv(v))
		}
		return
	}
	j := 0
	for i := 0; i < int(total); i++ {
		if r.valid(i) {
			c.Num = append(c.Num, conv(vals[j]))
			j++
		} else {
			c.Num = append(c.Num, math.NaN())
			c.Missing++
		}
	}
}

// codes appends a batch of total rows, whose nv values are vals, to
// categorical column c, each value's code from code(v, row), a null as
// −1 (missing).
func codes[T any](r *pqReader, total int64, nv int, vals []T, code func(T, int) int32) {
	c := r.l.cols[r.k]
	j := 0
	for i := 0; i < int(total); i++ {
		if nv == int(total) || r.valid(i) {
			c.Codes = append(c.Codes, code(vals[j], r.row+i))
			j++
		} else {
			c.Codes = append(c.Codes, -1)
			c.Missing++
		}
	}
}

// intCode is the code of integer level v, its text made by text the
// first time v is seen, at 0-based row.
func (r *pqReader) intCode(v int64, row int, text func(int64) string) int32 {
	c := r.l.cols[r.k]
	var code int32
	var ok bool
	if v >= 0 && v < int64(len(r.small)) {
		code = r.small[v]
		ok = code != -2
	} else {
		code, ok = r.l.intLevels[r.k][v]
	}
	if !ok {
		code = c.level(text(v), row, r.l.levels[r.k], r.l.missing)
		if v >= 0 && v < int64(len(r.small)) {
			r.small[v] = code
		} else {
			r.l.intLevels[r.k][v] = code
		}
		return code
	}
	if code < 0 {
		c.Missing++
	}
	return code
}

func signedText(v int64) string   { return strconv.FormatInt(v, 10) }
func unsignedText(v int64) string { return strconv.FormatUint(uint64(v), 10) }

func (r *pqReader) floats32(total int64, nv int) error {
	c := r.l.cols[r.k]
	if c.Kind == Categorical {
		codes(r, total, nv, r.f32, func(v float32, row int) int32 {
			return c.level(strconv.FormatFloat(float64(v), 'g', -1, 32), row, r.l.levels[r.k], r.l.missing)
		})
		return nil
	}
	start := len(c.Num)
	spread(r, total, nv, r.f32, func(v float32) float64 { return float64(v) })
	for i, v := range c.Num[start:] {
		if v-v != 0 && r.valid(i) {
			if err := r.checkFloat(v, i); err != nil {
				return err
			}
		}
	}
	return nil
}

func (r *pqReader) ints32(total int64, nv int) error {
	c := r.l.cols[r.k]
	kind := r.col.kind
	if c.Kind == Numeric {
		if kind == pqUint32 {
			spread(r, total, nv, r.i32, func(v int32) float64 { return float64(uint32(v)) })
		} else {
			spread(r, total, nv, r.i32, func(v int32) float64 { return float64(v) })
		}
		return nil
	}
	switch kind {
	case pqUint32:
		codes(r, total, nv, r.i32, func(v int32, row int) int32 { return r.intCode(int64(uint32(v)), row, signedText) })
	case pqDate:
		codes(r, total, nv, r.i32, func(v int32, row int) int32 { return r.intCode(int64(v), row, dateText) })
	case pqDecimal:
		codes(r, total, nv, r.i32, func(v int32, row int) int32 {
			return r.intCode(int64(v), row, func(v int64) string { return decimalText(v, r.col.scale) })
		})
	default:
		codes(r, total, nv, r.i32, func(v int32, row int) int32 { return r.intCode(int64(v), row, signedText) })
	}
	return nil
}

func (r *pqReader) ints64(total int64, nv int) error {
	c := r.l.cols[r.k]
	kind := r.col.kind
	if c.Kind == Numeric {
		if kind == pqUint64 {
			spread(r, total, nv, r.i64, func(v int64) float64 { return float64(uint64(v)) })
		} else {
			spread(r, total, nv, r.i64, func(v int64) float64 { return float64(v) })
		}
		return nil
	}
	switch kind {
	case pqUint64:
		codes(r, total, nv, r.i64, func(v int64, row int) int32 { return r.intCode(v, row, unsignedText) })
	case pqTime:
		unit := r.col.unit
		codes(r, total, nv, r.i64, func(v int64, row int) int32 {
			return r.intCode(v, row, func(v int64) string { return timestampText(v, unit) })
		})
	case pqDecimal:
		codes(r, total, nv, r.i64, func(v int64, row int) int32 {
			return r.intCode(v, row, func(v int64) string { return decimalText(v, r.col.scale) })
		})
	default:
		codes(r, total, nv, r.i64, func(v int64, row int) int32 { return r.intCode(v, row, signedText) })
	}
	return nil
}

func (r *pqReader) bools(total int64, nv int) error {
	c := r.l.cols[r.k]
	if c.Kind == Numeric {
		spread(r, total, nv, r.b, func(v bool) float64 {
			if v {
				return 1
			}
			return 0
		})
		return nil
	}
	codes(r, total, nv, r.b, func(v bool, row int) int32 {
		return c.level(strconv.FormatBool(v), row, r.l.levels[r.k], r.l.missing)
	})
	return nil
}

// texts reads a batch of text: levels of a categorical column, or
// numbers parsed as in CSV.
func (r *pqReader) texts(total int64, nv int) error {
	c := r.l.cols[r.k]
	if c.Kind == Categorical {
		r.textCodes(total, nv)
		return nil
	}
	j := 0
	for i := 0; i < int(total); i++ {
		if !(nv == int(total) || r.valid(i)) {
			c.Num = append(c.Num, math.NaN())
			c.Missing++
			continue
		}
		b := bytes.TrimSpace(r.ba[j])
		j++
		if isTokenBytes(b, r.l.missing) {
			c.Num = append(c.Num, math.NaN())
			c.Missing++
			continue
		}
		v, ok := parseFloat(b, r.l.dec)
		if !ok {
			return rowError(r.l.path, r.row+i, c.Name, string(b), notNumber(b, r.l.dec))
		}
		if math.IsInf(v, 0) {
			return rowError(r.l.path, r.row+i, c.Name, strconv.FormatFloat(v, 'g', -1, 64), "not a finite number")
		}
		if math.IsNaN(v) {
			if r.nanErr {
				return rowError(r.l.path, r.row+i, c.Name, "NaN", "not a number (a computed value of NaN is an error here, not a missing value)")
			}
			c.Missing++
		}
		c.Num = append(c.Num, v)
	}
	return nil
}

// textCodes appends the codes of a batch of text levels. A batch is
// read from one page, and the values of a dictionary-encoded page point
// into its dictionary: a value that starts at the same byte as an
// earlier value of the batch, with the same length, is the same text,
// so its code is found by comparing two pointers, without reading the
// text (batchMemo remembers the last few). Only within a batch: the next
// read may put other text in the same memory.
func (r *pqReader) textCodes(total int64, nv int) {
	c := r.l.cols[r.k]
	start := len(c.Codes)
	c.Codes = slices.Grow(c.Codes, int(total))[:start+int(total)]
	dst := c.Codes[start:]
	var memo batchMemo
	if nv == int(total) {
		for i, v := range r.ba[:nv] {
			code, ok := memo.get(v)
			if !ok {
				code = r.memoCode(&memo, v, r.row+i)
			} else if code < 0 {
				c.Missing++
			}
			dst[i] = code
		}
		return
	}
	j := 0
	for i := range dst {
		if !r.valid(i) {
			dst[i] = -1
			c.Missing++
			continue
		}
		v := r.ba[j]
		j++
		code, ok := memo.get(v)
		if !ok {
			code = r.memoCode(&memo, v, r.row+i)
		} else if code < 0 {
			c.Missing++
		}
		dst[i] = code
	}
}

// memoCode is the code of text level v at 0-based row that the batch's
// memo does not hold, which it then does.
func (r *pqReader) memoCode(memo *batchMemo, v []byte, row int) int32 {
	code := r.textCode(v, row)
	memo.put(v, code)
	return code
}

// textCode is the code of text level v first seen at 0-based row,
// through the column's cache of its last levels and then its index (a
// missing marker, −1, counted missing).
func (r *pqReader) textCode(v []byte, row int) int32 {
	c := r.l.cols[r.k]
	if code, ok := r.cache.get(v); ok {
		if code < 0 {
			c.Missing++
		}
		return code
	}
	index := r.l.levels[r.k]
	code, ok := index[string(v)]
	if ok {
		if code < 0 {
			c.Missing++
		}
	} else {
		code = c.level(string(v), row, index, r.l.missing)
	}
	r.cache.put(v, code)
	return code
}

// batchMemo remembers the codes of the last few values of a batch by
// where their bytes are (see textCodes).
type batchMemo struct {
	at   [4]*byte
	n    [4]int
	code [4]int32
	used int // entries filled
	next int // the entry to replace when full
}

// get returns the code of an earlier value whose bytes are v's own; an
// empty v is never remembered.
func (m *batchMemo) get(v []byte) (int32, bool) {
	if len(v) == 0 {
		return 0, false
	}
	p := &v[0]
	for k := 0; k < m.used; k++ {
		if m.at[k] == p && m.n[k] == len(v) {
			return m.code[k], true
		}
	}
	return 0, false
}

// put remembers code for the bytes of v.
func (m *batchMemo) put(v []byte, code int32) {
	if len(v) == 0 {
		return
	}
	k := m.used
	if k < len(m.at) {
		m.used++
	} else {
		k = m.next
		m.next = (m.next + 1) % len(m.at)
	}
	m.at[k], m.n[k], m.code[k] = &v[0], len(v), code
}

func isTokenBytes(b []byte, tokens []string) bool {
	for _, t := range tokens {
		if string(b) == t {
			return true
		}
	}
	return false
}

// dateText is a date of days since 1970-01-01 as ISO 8601 text.
func dateText(days int64) string {
	return time.Unix(days*86400, 0).UTC().Format("2006-01-02")
}

// timestampText is a timestamp of v units since 1970-01-01 UTC as text,
// as the Arrow library writes one ("2024-03-01T08:30:00Z").
func timestampText(v int64, unit time.Duration) string {
	var t time.Time
	switch unit {
	case time.Millisecond:
		t = time.UnixMilli(v)
	case time.Microsecond:
		t = time.UnixMicro(v)
	default:
		t = time.Unix(0, v)
	}
	return t.UTC().Format("2006-01-02T15:04:05.999999999Z0700")
}

// decimalText is the decimal of unscaled value v and scale as text.
func decimalText(v int64, scale int32) string {
	if scale <= 0 {
		s := strconv.FormatInt(v, 10)
		if v != 0 {
			s += strings.Repeat("0", int(-scale))
		}
		return s
	}
	neg := v < 0
	u := uint64(v)
	if neg {
		u = -u
	}
	s := strconv.FormatUint(u, 10)
	if len(s) <= int(scale) {
		s = strings.Repeat("0", int(scale)-len(s)+1) + s
	}
	s = s[:len(s)-int(scale)] + "." + s[len(s)-int(scale):]
	if neg {
		s = "-" + s
	}
	return s
}
