package pgcohort

import (
	"encoding/binary"
	"encoding/hex"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"github.com/jackc/pgx/v5/pgconn"

	"github.com/riskaudit/riskaudit/cohort"
)

// Type OIDs of the built-in types read (pg_type.dat).
const (
	oidBool        = 16
	oidBytea       = 17
	oidChar        = 18
	oidName        = 19
	oidInt8        = 20
	oidInt2        = 21
	oidInt4        = 23
	oidText        = 25
	oidFloat4      = 700
	oidFloat8      = 701
	oidUnknown     = 705
	oidBPChar      = 1042
	oidVarchar     = 1043
	oidDate        = 1082
	oidTimestamp   = 1114
	oidTimestamptz = 1184
	oidNumeric     = 1700
	oidUUID        = 2950
)

// conv is how one field's binary value becomes a column value.
type conv int

const (
	convBool conv = iota
	convInt2
	convInt4
	convInt8
	convFloat4
	convFloat8
	convNumeric
	convText
	convBPChar
	convDate
	convTimestamp
	convTimestamptz
	convUUID
)

// convOf chooses the conversion of a field for a request kind; ok is
// false for a type the kind cannot read.
func convOf(oid uint32, enum bool, kind cohort.Kind) (conv, bool) {
	switch oid {
	case oidBool:
		return convBool, true
	case oidInt2:
		return convInt2, true
	case oidInt4:
		return convInt4, true
	case oidInt8:
		return convInt8, true
	case oidFloat4:
		return convFloat4, true
	case oidFloat8:
		return convFloat8, true
	case oidNumeric:
		return convNumeric, true
	case oidText, oidVarchar, oidName, oidChar, oidUnknown:
		return convText, true
	case oidBPChar:
		return convBPChar, true
	}
	if enum {
		return convText, true
	}
	if kind == cohort.Categorical {
		switch oid {
		case oidDate:
			return convDate, true
		case oidTimestamp:
			return convTimestamp, true
		case oidTimestamptz:
			return convTimestamptz, true
		case oidUUID:
			return convUUID, true
		}
	}
	return 0, false
}

// reader fills one requested column from one field of every row.
type reader struct {
	field   int
	conv    conv
	col     *cohort.Column
	nanErr  bool
	levels  map[string]int32
	scratch []byte
}

// readers are the requested columns of a result and where each comes
// from; a column requested twice is read once.
type readers struct {
	name    string
	opt     cohort.Options
	rd      []*reader
	byReq   []int // index into rd of each request
	missing []string
}

func newReaders(name string, header []string, fields []pgconn.FieldDescription, types []typeInfo, reqs []cohort.Request, opt cohort.Options) (*readers, error) {
	r := &readers{name: name, opt: opt, byReq: make([]int, len(reqs)), missing: opt.Missing}
	if r.missing == nil {
		r.missing = cohort.DefaultMissing
	}
	for k, q := range reqs {
		field := -1
		for i, h := range header {
			if h != q.Name {
				continue
			}
			if field >= 0 {
				return nil, &cohort.Error{File: name, Column: q.Name,
					Msg: fmt.Sprintf("the query's result names this column twice (columns %d and %d); give each its own name with AS", field+1, i+1), Kind: cohort.ErrDuplicateColumn}
			}
			field = i
		}
		if field < 0 {
			return nil, &cohort.Error{File: name, Column: q.Name, Msg: cohort.MissingColumnMessage(q, header), Kind: cohort.ErrNoColumn}
		}
		r.byReq[k] = -1
		for j, d := range r.rd {
			if d.field == field {
				if d.col.Kind != q.Kind {
					return nil, fmt.Errorf("pgcohort: column %q requested as two kinds", q.Name)
				}
				r.byReq[k] = j
			}
		}
		if r.byReq[k] >= 0 {
			continue
		}
		c, ok := convOf(fields[field].DataTypeOID, types[field].enum, q.Kind)
		if !ok {
			msg := fmt.Sprintf("a column of type %s, which is not a number; give a number (or cast it in the query)", types[field].name)
			kind := cohort.ErrNotNumber
			if q.Kind == cohort.Categorical {
				msg = fmt.Sprintf("a column of type %s, which riskaudit does not read as categories; cast it to text in the query (%s::text)", types[field].name, fields[field].Name)
				kind = cohort.ErrFormat
			}
			return nil, &cohort.Error{File: name, Column: q.Name, Msg: msg, Kind: kind}
		}
		d := &reader{field: field, conv: c, nanErr: q.NaNIsError, col: &cohort.Column{Name: q.Name, Kind: q.Kind, Index: field}}
		if q.Kind == cohort.Categorical {
			d.levels = map[string]int32{}
		}
		r.byReq[k] = len(r.rd)
		r.rd = append(r.rd, d)
	}
	return r, nil
}

// reserve makes room for n rows in every column.
func (r *readers) reserve(n int) {
	for _, d := range r.rd {
		if d.col.Kind == cohort.Numeric {
			d.col.Num = make([]float64, 0, n)
		} else {
			d.col.Codes = make([]int32, 0, n)
		}
	}
}

// columns returns the filled columns in request order.
func (r *readers) columns(reqs []cohort.Request) []*cohort.Column {
	out := make([]*cohort.Column, len(reqs))
	for k, j := range r.byReq {
		c := r.rd[j].col
		if c.Name != reqs[k].Name {
			cp := *c
			cp.Name = reqs[k].Name
			c = &cp
		}
		out[k] = c
	}
	return out
}

// row reads the fields of row i (0-based).
func (r *readers) row(vals [][]byte, i int) error {
	for _, d := range r.rd {
		v := vals[d.field]
		var err error
		if d.col.Kind == cohort.Numeric {
			err = r.number(d, v, i)
		} else {
			err = r.level(d, v, i)
		}
		if err != nil {
			return err
		}
	}
	return nil
}

func (r *readers) valueError(d *reader, i int, value, msg string, kind error) error {
	return &cohort.Error{File: r.name, Line: i + 1, Row: true, Column: d.col.Name, Value: value, HasValue: true, Msg: msg, Kind: kind}
}

func (r *readers) badLength(d *reader, i int, v []byte) error {
	return &cohort.Error{File: r.name, Line: i + 1, Row: true, Column: d.col.Name,
		Msg: fmt.Sprintf("the server sent %d bytes for one value of this type", len(v)), Kind: cohort.ErrFormat}
}

// fixed reports whether v has the n bytes of a fixed-width type.
func fixed(v []byte, n int) bool { return len(v) == n }

// number appends the value v of row i to a numeric column.
func (r *readers) number(d *reader, v []byte, i int) error {
	c := d.col
	if v == nil {
		c.Num = append(c.Num, math.NaN())
		c.Missing++
		return nil
	}
	var x float64
	switch d.conv {
	case convBool:
		if !fixed(v, 1) {
			return r.badLength(d, i, v)
		}
		if v[0] != 0 {
			x = 1
		}
	case convInt2:
		if !fixed(v, 2) {
			return r.badLength(d, i, v)
		}
		x = float64(int16(binary.BigEndian.Uint16(v)))
	case convInt4:
		if !fixed(v, 4) {
			return r.badLength(d, i, v)
		}
		x = float64(int32(binary.BigEndian.Uint32(v)))
	case convInt8:
		if !fixed(v, 8) {
			return r.badLength(d, i, v)
		}
		x = float64(int64(binary.BigEndian.Uint64(v)))
	case convFloat4:
		if !fixed(v, 4) {
			return r.badLength(d, i, v)
		}
		f := math.Float32frombits(binary.BigEndian.Uint32(v))
		x = float64(f)
		if !math.IsInf(x, 0) && !math.IsNaN(x) {
			d.scratch = strconv.AppendFloat(d.scratch[:0], x, 'e', -1, 32)
			x, _ = cohort.ParseNumber(d.scratch, false)
		}
	case convFloat8:
		if !fixed(v, 8) {
			return r.badLength(d, i, v)
		}
		x = math.Float64frombits(binary.BigEndian.Uint64(v))
	case convNumeric:
		s, special, ok := numericText(d.scratch[:0], v, false)
		if !ok {
			return r.badLength(d, i, v)
		}
		d.scratch = s
		switch special {
		case "NaN":
			x = math.NaN()
		case "Infinity":
			x = math.Inf(1)
		case "-Infinity":
			x = math.Inf(-1)
		default:
			var ok bool
			if x, ok = cohort.ParseNumber(s, false); !ok {
				return r.valueError(d, i, string(s), "not a finite number", cohort.ErrNotNumber)
			}
		}
	default: // text
		t := trimSpace(v)
		if isMarker(t, r.missing) {
			c.Num = append(c.Num, math.NaN())
			c.Missing++
			return nil
		}
		var ok bool
		if x, ok = cohort.ParseNumber(t, r.opt.DecimalComma); !ok {
			return r.valueError(d, i, string(t), "not a number", cohort.ErrNotNumber)
		}
	}
	if math.IsInf(x, 0) {
		return r.valueError(d, i, strconv.FormatFloat(x, 'g', -1, 64), "not a finite number", cohort.ErrNotNumber)
	}
	if math.IsNaN(x) {
		if d.nanErr {
			return r.valueError(d, i, "NaN", "not a number (a computed value of NaN is an error here, not a missing value)", cohort.ErrNotNumber)
		}
		c.Missing++
	}
	c.Num = append(c.Num, x)
	return nil
}

// level appends the value v of row i to a categorical column.
func (r *readers) level(d *reader, v []byte, i int) error {
	c := d.col
	if v == nil {
		c.Codes = append(c.Codes, -1)
		c.Missing++
		return nil
	}
	var text []byte
	switch d.conv {
	case convText:
		text = v
	case convBPChar:
		n := len(v)
		for n > 0 && v[n-1] == ' ' {
			n--
		}
		text = v[:n]
	default:
		var ok bool
		if text, ok = d.format(v); !ok {
			return r.badLength(d, i, v)
		}
	}
	if isMarker(text, r.missing) {
		c.Codes = append(c.Codes, -1)
		c.Missing++
		return nil
	}
	code, ok := d.levels[string(text)]
	if !ok {
		s := string(text)
		code = int32(len(c.Levels))
		d.levels[s] = code
		c.Levels = append(c.Levels, s)
		c.LevelLine = append(c.LevelLine, i+1)
	}
	c.Codes = append(c.Codes, code)
	return nil
}

// isMarker reports whether text, spaces trimmed, is a missing marker;
// it does not allocate.
func isMarker(text []byte, markers []string) bool {
	t := trimSpace(text)
	for _, m := range markers {
		if string(t) == m {
			return true
		}
	}
	return false
}

// trimSpace is b without the white space around it, as
// strings.TrimSpace trims ASCII space.
func trimSpace(b []byte) []byte {
	lo, hi := 0, len(b)
	for lo < hi && isSpace(b[lo]) {
		lo++
	}
	for hi > lo && isSpace(b[hi-1]) {
		hi--
	}
	return b[lo:hi]
}

func isSpace(c byte) bool {
	return c == ' ' || c == '\t' || c == '\n' || c == '\r' || c == '\v' || c == '\f'
}

// epoch is the origin of PostgreSQL's dates and timestamps.
var epoch = time.Date(2000, 1, 1, 0, 0, 0, 0, time.UTC)

// format writes a non-text value as categorical text, in the scratch
// buffer; ok is false for a value of the wrong length.
func (d *reader) format(v []byte) ([]byte, bool) {
	b := d.scratch[:0]
	switch d.conv {
	case convBool:
		if !fixed(v, 1) {
			return nil, false
		}
		b = strconv.AppendBool(b, v[0] != 0)
	case convInt2:
		if !fixed(v, 2) {
			return nil, false
		}
		b = strconv.AppendInt(b, int64(int16(binary.BigEndian.Uint16(v))), 10)
	case convInt4:
		if !fixed(v, 4) {
			return nil, false
		}
		b = strconv.AppendInt(b, int64(int32(binary.BigEndian.Uint32(v))), 10)
	case convInt8:
		if !fixed(v, 8) {
			return nil, false
		}
		b = strconv.AppendInt(b, int64(binary.BigEndian.Uint64(v)), 10)
	case convFloat4:
		if !fixed(v, 4) {
			return nil, false
		}
		b = appendPGFloat(b, float64(math.Float32frombits(binary.BigEndian.Uint32(v))), 32)
	case convFloat8:
		if !fixed(v, 8) {
			return nil, false
		}
		b = appendPGFloat(b, math.Float64frombits(binary.BigEndian.Uint64(v)), 64)
	case convNumeric:
		s, special, ok := numericText(b, v, true)
		if !ok {
			return nil, false
		}
		b = s
		if special != "" {
			b = append(b[:0], special...)
		}
	case convDate:
		if !fixed(v, 4) {
			return nil, false
		}
		switch days := int32(binary.BigEndian.Uint32(v)); days {
		case math.MaxInt32:
			b = append(b, "infinity"...)
		case math.MinInt32:
			b = append(b, "-infinity"...)
		default:
			b = epoch.AddDate(0, 0, int(days)).AppendFormat(b, time.DateOnly)
		}
	case convTimestamp, convTimestamptz:
		if !fixed(v, 8) {
			return nil, false
		}
		switch us := int64(binary.BigEndian.Uint64(v)); us {
		case math.MaxInt64:
			b = append(b, "infinity"...)
		case math.MinInt64:
			b = append(b, "-infinity"...)
		default:
			t := epoch.Add(time.Duration(us/1e6) * time.Second).Add(time.Duration(us%1e6) * time.Microsecond)
			layout := "2006-01-02 15:04:05.999999"
			if d.conv == convTimestamptz {
				layout += "-07"
			}
			b = t.AppendFormat(b, layout)
		}
	case convUUID:
		if !fixed(v, 16) {
			return nil, false
		}
		var h [36]byte
		hex.Encode(h[0:8], v[0:4])
		hex.Encode(h[9:13], v[4:6])
		hex.Encode(h[14:18], v[6:8])
		hex.Encode(h[19:23], v[8:10])
		hex.Encode(h[24:], v[10:])
		h[8], h[13], h[18], h[23] = '-', '-', '-', '-'
		b = append(b, h[:]...)
	}
	d.scratch = b
	return b, true
}

// appendPGFloat writes x as PostgreSQL (12 and later, extra_float_digits
// 1) prints a float: the shortest digits that read back as the same
// value, in positional notation when the decimal exponent is from −4 to
// below 15 (6 for real), else as d.ddde±XX; NaN, Infinity, -Infinity.
func appendPGFloat(b []byte, x float64, bits int) []byte {
	switch {
	case math.IsNaN(x):
		return append(b, "NaN"...)
	case math.IsInf(x, 1):
		return append(b, "Infinity"...)
	case math.IsInf(x, -1):
		return append(b, "-Infinity"...)
	case x == 0:
		if math.Signbit(x) {
			return append(b, "-0"...)
		}
		return append(b, '0')
	}
	start := len(b)
	b = strconv.AppendFloat(b, x, 'e', -1, bits)
	i := strings.LastIndexByte(string(b[start:]), 'e')
	exp, _ := strconv.Atoi(string(b[start+i+1:]))
	limit := 15
	if bits == 32 {
		limit = 6
	}
	if exp < -4 || exp >= limit {
		return b
	}
	return strconv.AppendFloat(b[:start], x, 'f', -1, bits)
}

// Signs of a numeric's binary form.
const (
	numericPos  = 0x0000
	numericNeg  = 0x4000
	numericNaN  = 0xC000
	numericPInf = 0xD000
	numericNInf = 0xF000
)

// numericText writes a numeric's binary value (ndigits, weight, sign,
// dscale, then ndigits base-10000 digits, all 16-bit big-endian) as
// decimal text appended to b: with display, as PostgreSQL prints it
// (dscale decimals); without, as digits and an exponent, exact, for
// parsing. special is "NaN", "Infinity" or "-Infinity" for those values;
// ok is false for a malformed value.
func numericText(b, v []byte, display bool) (out []byte, special string, ok bool) {
	if len(v) < 8 {
		return nil, "", false
	}
	nd := int(binary.BigEndian.Uint16(v[0:]))
	weight := int(int16(binary.BigEndian.Uint16(v[2:])))
	sign := binary.BigEndian.Uint16(v[4:])
	dscale := int(binary.BigEndian.Uint16(v[6:]))
	if len(v) != 8+2*nd {
		return nil, "", false
	}
	switch sign {
	case numericNaN:
		return b, "NaN", true
	case numericPInf:
		return b, "Infinity", true
	case numericNInf:
		return b, "-Infinity", true
	case numericPos, numericNeg:
	default:
		return nil, "", false
	}
	digit := func(i int) int {
		if i < 0 || i >= nd {
			return 0
		}
		return int(binary.BigEndian.Uint16(v[8+2*i:]))
	}
	if sign == numericNeg {
		b = append(b, '-')
	}
	if !display {
		if nd == 0 {
			return append(b, '0'), "", true
		}
		for i := 0; i < nd; i++ {
			dg := digit(i)
			if dg > 9999 {
				return nil, "", false
			}
			b = append(b, byte('0'+dg/1000), byte('0'+dg/100%10), byte('0'+dg/10%10), byte('0'+dg%10))
		}
		b = append(b, 'e')
		return strconv.AppendInt(b, int64((weight-nd+1)*4), 10), "", true
	}
	if weight < 0 {
		b = append(b, '0')
	} else {
		for i := 0; i <= weight; i++ {
			dg := digit(i)
			if i == 0 {
				b = strconv.AppendInt(b, int64(dg), 10)
				continue
			}
			b = append(b, byte('0'+dg/1000), byte('0'+dg/100%10), byte('0'+dg/10%10), byte('0'+dg%10))
		}
	}
	if dscale > 0 {
		b = append(b, '.')
		for i, written := weight+1, 0; written < dscale; i++ {
			dg := digit(i)
			for _, c := range [4]byte{byte('0' + dg/1000), byte('0' + dg/100%10), byte('0' + dg/10%10), byte('0' + dg%10)} {
				if written < dscale {
					b = append(b, c)
					written++
				}
			}
		}
	}
	return b, "", true
}
