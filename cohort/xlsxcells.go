package cohort

import (
	"bytes"
	"cmp"
	"context"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
)

// cellKind is what a cell holds, by its type and style.
type cellKind uint8

const (
	cellEmpty   cellKind = iota
	cellNumber           // num; text is the number as stored
	cellText             // text
	cellBool             // num is 1 or 0
	cellDate             // text is the ISO 8601 date, date and time, or time
	cellError            // text is the error value, such as #N/A
	cellNoValue          // a formula without a stored value
)

// xcell is one cell of a row.
type xcell struct {
	col  int // 1-based
	kind cellKind
	num  float64
	text string
}

// dateKind is how a number format shows a number: as itself, or as a
// date, a date and time, or a time.
type dateKind int8

const (
	notDate dateKind = iota
	dateOnly
	dateTime
	timeOnly
)

// rows streams the sheet's rows in order, calling fn with each row's
// number and its cells in column order (the slice is reused). A cell or
// row out of order, a reference beyond the sheet's size or XML that is
// not well formed is an error of kind ErrFormat.
func (wb *workbook) rows(ctx context.Context, sh sheetRef, fn func(row int, cells []xcell) error) error {
	src, done, err := wb.reader(sh.part)
	if err != nil {
		return err
	}
	defer done()
	d := xml.NewDecoder(src)
	bad := func(row, col int, format string, args ...any) error {
		e := &Error{File: wb.path, Msg: fmt.Sprintf(format, args...), Kind: ErrFormat}
		if row > 0 && col > 0 {
			e.Cell = cellRef(sh.name, col, row)
		} else if row > 0 {
			e.Line, e.Row = row, true
		}
		return e
	}
	xmlErr := func(err error) error {
		if err == io.EOF {
			err = io.ErrUnexpectedEOF
		}
		return workbookError(wb.path, fmt.Errorf("sheet %s: %w", Quote(sh.name), err))
	}
	var (
		cells     []xcell
		row, col  int
		inData    bool
		v, is     []byte
		rowsSeen  int
		sawData   bool
		inRow     bool
		finishRow = func() error {
			inRow = false
			return fn(row, cells)
		}
	)
	for {
		tok, err := d.Token()
		if err == io.EOF {
			if inData || inRow {
				return xmlErr(err)
			}
			if !sawData {
				return bad(0, 0, "sheet %s has no cell data (sheetData)", Quote(sh.name))
			}
			return nil
		}
		if err != nil {
			return xmlErr(err)
		}
		switch t := tok.(type) {
		case xml.StartElement:
			switch t.Name.Local {
			case "sheetData":
				inData, sawData = true, true
			case "row":
				if !inData {
					continue
				}
				if rowsSeen++; rowsSeen&(1<<16-1) == 0 {
					if err := ctx.Err(); err != nil {
						return err
					}
				}
				next := row + 1
				if a := attr(t, "r"); a != "" {
					n, err := strconv.Atoi(a)
					if err != nil || n < 1 || n > maxRow {
						return bad(row+1, 0, "a row numbered %s", Quote(a))
					}
					next = n
				}
				if next <= row {
					return bad(next, 0, "row %d comes after row %d", next, row)
				}
				if next > maxRow {
					return bad(0, 0, "sheet %s has more than %d rows", Quote(sh.name), maxRow)
				}
				row, col, cells, inRow = next, 0, cells[:0], true
			case "c":
				if !inRow {
					continue
				}
				next := col + 1
				if a := attr(t, "r"); a != "" {
					c, r, err := cellCoordinates(a)
					if err != nil || r != row {
						return bad(row, 0, "a cell referenced %s in row %d", Quote(a), row)
					}
					next = c
				}
				if next <= col || next > maxCol {
					return bad(row, min(next, maxCol), "a cell out of order in its row")
				}
				col = next
				typ, style := attr(t, "t"), 0
				if a := attr(t, "s"); a != "" {
					if style, err = strconv.Atoi(a); err != nil || style < 0 {
						return bad(row, col, "a cell style %s", Quote(a))
					}
				}
				hasF, hasV := false, false
				v, is = v[:0], is[:0]
				if err := cellChildren(d, &v, &is, &hasF, &hasV); err != nil {
					return xmlErr(err)
				}
				c, err := wb.cell(typ, style, v, is, hasF)
				if err != nil {
					return bad(row, col, "%v", err)
				}
				if c.kind != cellEmpty {
					c.col = col
					cells = append(cells, c)
				}
			}
		case xml.EndElement:
			switch t.Name.Local {
			case "row":
				if inRow {
					if err := finishRow(); err != nil {
						return err
					}
				}
			case "sheetData":
				if inData {
					inData = false
				}
			}
		}
	}
}

// cellChildren reads the children of a c element up to its end: the
// stored value (v), the inline string's text (is, without phonetic
// guides) and whether it has a formula.
func cellChildren(d *xml.Decoder, v, is *[]byte, hasF, hasV *bool) error {
	for {
		tok, err := d.Token()
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			switch t.Name.Local {
			case "v":
				*hasV = true
				if *v, err = elementText(d, *v); err != nil {
					return err
				}
			case "f":
				*hasF = true
				if err := d.Skip(); err != nil {
					return err
				}
			case "is":
				if err := inlineText(d, is); err != nil {
					return err
				}
			default:
				if err := d.Skip(); err != nil {
					return err
				}
			}
		case xml.EndElement:
			return nil
		}
	}
}

// inlineText appends the text of an inline string's t elements, outside
// phonetic runs, up to the end of the is element.
func inlineText(d *xml.Decoder, buf *[]byte) error {
	for {
		tok, err := d.Token()
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			switch t.Name.Local {
			case "t":
				if *buf, err = elementText(d, *buf); err != nil {
					return err
				}
			case "r":
			default:
				if err := d.Skip(); err != nil {
					return err
				}
			}
		case xml.EndElement:
			if t.Name.Local == "is" {
				return nil
			}
		}
	}
}

// attr is the value of the element's attribute name without a
// namespace, or "".
func attr(t xml.StartElement, name string) string {
	for _, a := range t.Attr {
		if a.Name.Local == name && a.Name.Space == "" {
			return a.Value
		}
	}
	return ""
}

// cell interprets a cell by its type attribute and style.
func (wb *workbook) cell(typ string, style int, v, is []byte, hasF bool) (xcell, error) {
	if hasF && len(v) == 0 && typ != "str" {
		return xcell{kind: cellNoValue}, nil
	}
	if len(is) > 0 && typ != "inlineStr" {
		return xcell{}, fmt.Errorf("a cell of type %s holding an inline string %s, which only a cell of type \"inlineStr\" holds", Quote(cmp.Or(typ, "n")), Quote(string(is)))
	}
	switch typ {
	case "", "n":
		if len(bytes.TrimSpace(v)) == 0 {
			return xcell{}, nil
		}
		x, ok := parseFloat(bytes.TrimSpace(v), '.')
		if !ok {
			return xcell{}, fmt.Errorf("a number cell holding %s, which is not a number", Quote(string(v)))
		}
		if k := wb.dateKind(style); k != notDate {
			s, ok := wb.dateText(x, k)
			if !ok {
				return xcell{}, fmt.Errorf("a cell formatted as a date holding %s, which is no date", Quote(string(v)))
			}
			return xcell{kind: cellDate, text: s}, nil
		}
		return xcell{kind: cellNumber, num: x, text: string(v)}, nil
	case "s":
		i, err := strconv.Atoi(strings.TrimSpace(string(v)))
		s, ok := wb.sharedString(i)
		if err != nil || !ok {
			return xcell{}, fmt.Errorf("a shared string %s that the workbook's table (%d strings) does not have", Quote(string(v)), len(wb.sstEnd))
		}
		return textCell(s), nil
	case "inlineStr":
		return textCell(string(is)), nil
	case "str":
		return textCell(string(v)), nil
	case "b":
		switch strings.TrimSpace(string(v)) {
		case "1", "true":
			return xcell{kind: cellBool, num: 1}, nil
		case "0", "false":
			return xcell{kind: cellBool, num: 0}, nil
		case "":
			return xcell{}, nil
		}
		return xcell{}, fmt.Errorf("a boolean cell holding %s", Quote(string(v)))
	case "e":
		return xcell{kind: cellError, text: strings.TrimSpace(string(v))}, nil
	case "d":
		s, ok := isoDate(strings.TrimSpace(string(v)))
		if !ok {
			return xcell{}, fmt.Errorf("a date cell holding %s, which is not an ISO 8601 date", Quote(string(v)))
		}
		return xcell{kind: cellDate, text: s}, nil
	}
	return xcell{}, fmt.Errorf("a cell of unknown type %s", Quote(typ))
}

func textCell(s string) xcell {
	if s == "" {
		return xcell{}
	}
	return xcell{kind: cellText, text: s}
}

// numFmtKind is how a number format shows numbers. The built-in formats
// are those ECMA-376 Part 1, §18.8.30 lists as dates and times (and the
// East Asian ones Excel adds, 27–36 and 50–58); 46, [h]:mm:ss, is a
// duration and is read as a number. A custom format code is a date
// when its first section, without quoted text, escaped characters,
// fills, spacing and bracketed colours or conditions, has a day, month
// or year, and a time when it has hours or seconds or AM/PM; elapsed
// time ([h], [m], [s]) is a duration. This is the rule spreadsheet
// readers commonly apply.
func numFmtKind(id int, code string) dateKind {
	if code == "" {
		switch {
		case id >= 14 && id <= 17, id >= 27 && id <= 31, id >= 34 && id <= 36, id >= 50 && id <= 58:
			return dateOnly
		case id == 22:
			return dateTime
		case id >= 18 && id <= 21, id == 32, id == 33, id == 45, id == 47:
			return timeOnly
		}
		return notDate
	}
	var b strings.Builder
	lower := strings.ToLower(code)
	for i := 0; i < len(lower); i++ {
		c := lower[i]
		switch c {
		case ';':
			i = len(lower)
		case '"':
			j := strings.IndexByte(lower[i+1:], '"')
			if j < 0 {
				i = len(lower)
			} else {
				i += j + 1
			}
		case '\\', '_', '*':
			i++
		case '[':
			j := strings.IndexByte(lower[i+1:], ']')
			if j < 0 {
				i = len(lower)
				continue
			}
			inner := lower[i+1 : i+1+j]
			if inner != "" && strings.Trim(inner, "hms") == "" {
				return notDate // elapsed time: a duration
			}
			i += j + 1
		default:
			b.WriteByte(c)
		}
	}
	s := b.String()
	if strings.Contains(s, "general") {
		return notDate
	}
	ampm := strings.Contains(s, "am/pm") || strings.Contains(s, "a/p")
	s = strings.NewReplacer("am/pm", "", "a/p", "").Replace(s)
	date := strings.ContainsAny(s, "dy")
	clock := ampm || strings.ContainsAny(s, "hs")
	if !date && !clock && strings.ContainsRune(s, 'm') {
		date = true // months alone
	}
	switch {
	case date && clock:
		return dateTime
	case date:
		return dateOnly
	case clock:
		return timeOnly
	}
	return notDate
}

// dateText writes the serial date x of the workbook's date system as an
// ISO 8601 date, date and time, or time, to the second.
func (wb *workbook) dateText(x float64, k dateKind) (string, bool) {
	// 2958466 is 10000-01-01, beyond the last date Excel shows.
	if !(x >= 0 && x < 2958466) {
		return "", false
	}
	t := serialTime(x, wb.date1904).Round(time.Second)
	switch k {
	case dateOnly:
		return t.Format(time.DateOnly), true
	case timeOnly:
		return t.Format(time.TimeOnly), true
	}
	return t.Format("2006-01-02T15:04:05"), true
}

// isoDate reads a cell of type d (an ISO 8601 date and time as text) and
// writes it back in the form dateText writes: a date alone when it has
// no time of day.
func isoDate(s string) (string, bool) {
	for _, layout := range []string{time.RFC3339Nano, "2006-01-02T15:04:05.999999999", "2006-01-02T15:04", "2006-01-02"} {
		if t, err := time.Parse(layout, s); err == nil {
			t = t.Round(time.Second)
			if layout == "2006-01-02" {
				return t.Format(time.DateOnly), true
			}
			return t.Format("2006-01-02T15:04:05"), true
		}
	}
	if t, err := time.Parse("15:04:05", s); err == nil {
		return t.Format(time.TimeOnly), true
	}
	return "", false
}

// numText writes a number cell's value as text, for a categorical
// column or a header: the shortest decimal that reads back exactly,
// without an exponent between 1e-6 and 1e21.
func numText(x float64) string {
	if a := math.Abs(x); x == 0 || a >= 1e-6 && a < 1e21 {
		return strconv.FormatFloat(x, 'f', -1, 64)
	}
	return strconv.FormatFloat(x, 'g', -1, 64)
}

// text is a cell's value as text: what a categorical column or a header
// holds, and what a CSV copy of the sheet writes.
func (c xcell) textValue() string {
	switch c.kind {
	case cellNumber:
		return numText(c.num)
	case cellBool:
		if c.num == 1 {
			return "TRUE"
		}
		return "FALSE"
	}
	return c.text
}

// read reads the requested columns of sheet sh into a frame.
func (wb *workbook) read(ctx context.Context, sh sheetRef, reqs []Request, opt Options) (*Frame, error) {
	if err := wb.sharedStrings(); err != nil {
		return nil, err
	}
	b := &sheetFrame{wb: wb, sh: sh, reqs: reqs, opt: opt, dec: '.', missing: opt.Missing}
	if b.missing == nil {
		b.missing = DefaultMissing
	}
	if opt.DecimalComma {
		b.dec = ','
	}
	if err := wb.rows(ctx, sh, b.row); err != nil {
		return nil, err
	}
	if b.header == nil {
		return nil, &Error{File: wb.path, Msg: "sheet " + Quote(sh.name) + " is empty", Kind: ErrEmpty}
	}
	if b.fr.Rows == 0 {
		return nil, &Error{File: wb.path, Msg: "sheet " + Quote(sh.name) + " has a header but no data rows", Kind: ErrEmpty}
	}
	for k, c := range b.fr.Columns {
		if k0 := b.plan[c.Index]; k0 != k {
			src := b.fr.Columns[k0]
			*c = *src
			c.Name = reqs[k].Name
		}
	}
	return b.fr, nil
}

// sheetFrame builds a frame from a sheet's rows: the first row with a
// value is the header, every later row with a value a data row.
type sheetFrame struct {
	wb      *workbook
	sh      sheetRef
	reqs    []Request
	opt     Options
	dec     byte
	missing []string

	header      []string
	first, last int   // the header's first and last column
	plan        []int // request by header position, −1 for none
	fr          *Frame
	levels      []map[string]int32
	at          []xcell // this row's cells by header position
}

func (b *sheetFrame) ref(col, row int) string { return cellRef(b.sh.name, col, row) }

func (b *sheetFrame) row(row int, cells []xcell) error {
	if len(cells) == 0 {
		return nil
	}
	if b.header == nil {
		return b.makeHeader(row, cells)
	}
	for i := range b.at {
		b.at[i] = xcell{}
	}
	for _, c := range cells {
		if c.col < b.first || c.col > b.last {
			cf, cl := b.colName(b.first), b.colName(b.last)
			return &Error{File: b.wb.path, Cell: b.ref(c.col, row), Value: c.textValue(), HasValue: c.kind != cellNoValue,
				Msg: fmt.Sprintf("a value outside the header's columns (%s to %s, row %d)", cf, cl, b.fr.headerRow), Kind: ErrFormat}
		}
		b.at[c.col-b.first] = c
	}
	fr := b.fr
	for k, col := range fr.Columns {
		if b.plan[col.Index] != k {
			continue
		}
		if err := b.put(k, col, b.at[col.Index], row); err != nil {
			return err
		}
	}
	fr.Rows++
	fr.lines = append(fr.lines, int32(row))
	return nil
}

func (b *sheetFrame) colName(col int) string {
	return columnName(col)
}

func (b *sheetFrame) makeHeader(row int, cells []xcell) error {
	b.first, b.last = cells[0].col, cells[len(cells)-1].col
	header := make([]string, b.last-b.first+1)
	for _, c := range cells {
		switch c.kind {
		case cellNoValue:
			return &Error{File: b.wb.path, Cell: b.ref(c.col, row), Msg: "a header cell with a formula the workbook holds no value for", Kind: ErrFormat}
		}
		header[c.col-b.first] = strings.Clone(strings.TrimSpace(c.textValue()))
	}
	renamed := RenameHeader(header, b.opt.Rename)
	if err := checkHeader(b.wb.path, row, header); err != nil {
		var e *Error
		if errors.As(err, &e) {
			second := b.first + len(header) - 1
			for i := range header {
				if i > 0 && header[i] == e.Column && index(header, e.Column) < i {
					second = b.first + i
					break
				}
			}
			e.Cell, e.Line = b.ref(second, row), 0
			e.Msg = "duplicate column name"
		}
		return err
	}
	plan, err := planColumns(b.wb.path, header, b.reqs)
	if err != nil {
		var e *Error
		if errors.As(err, &e) {
			e.Msg += fmt.Sprintf(" (the header of sheet %s, row %d)", Quote(b.sh.name), row)
		}
		return err
	}
	b.header, b.plan = header, plan
	b.at = make([]xcell, len(header))
	b.fr = &Frame{File: b.wb.path, Header: header, Renamed: renamed, RowNumbered: true, Sheet: b.sh.name, firstCol: b.first, headerRow: row}
	b.levels = make([]map[string]int32, len(b.reqs))
	for k, r := range b.reqs {
		c := &Column{Name: r.Name, Kind: r.Kind, Index: index(header, r.Name)}
		b.fr.Columns = append(b.fr.Columns, c)
		b.levels[k] = map[string]int32{}
	}
	return nil
}

func index(list []string, s string) int {
	for i, x := range list {
		if x == s {
			return i
		}
	}
	return -1
}

// put appends cell c of data row row to request k's column.
func (b *sheetFrame) put(k int, col *Column, c xcell, row int) error {
	cellErr := func(value, msg string, kind error) error {
		return &Error{File: b.wb.path, Cell: b.ref(b.first+col.Index, row), Column: col.Name, Value: value, HasValue: true, Msg: msg, Kind: kind}
	}
	missing := func() {
		col.Missing++
		if col.Kind == Numeric {
			col.Num = append(col.Num, math.NaN())
		} else {
			col.Codes = append(col.Codes, -1)
		}
	}
	switch c.kind {
	case cellEmpty:
		missing()
		return nil
	case cellNoValue:
		return &Error{File: b.wb.path, Cell: b.ref(b.first+col.Index, row), Column: col.Name,
			Msg: "a formula the workbook holds no value for (it was saved without being calculated: open and save it in a spreadsheet program first)", Kind: ErrFormat}
	case cellError:
		if isToken(c.text, b.missing) {
			missing()
			return nil
		}
		return cellErr(c.text, "an error value of a formula, not data (list it with --na-values to read it as missing)", ErrNotNumber)
	}
	if col.Kind == Categorical {
		s := c.textValue()
		if c.kind == cellText {
			s = strings.TrimSpace(s)
		}
		if isToken(s, b.missing) {
			missing()
			return nil
		}
		code, ok := b.levels[k][s]
		if !ok {
			// A copy: s may be part of the shared strings' text.
			s = strings.Clone(s)
			code = int32(len(col.Levels))
			b.levels[k][s] = code
			col.Levels = append(col.Levels, s)
			col.LevelLine = append(col.LevelLine, row)
		}
		col.Codes = append(col.Codes, code)
		return nil
	}
	var x float64
	switch c.kind {
	case cellNumber:
		if isToken(c.text, b.missing) || isToken(numText(c.num), b.missing) {
			missing()
			return nil
		}
		x = c.num
	case cellBool:
		x = c.num
	case cellDate:
		return cellErr(c.text, "a date, not a number", ErrNotNumber)
	case cellText:
		s := strings.TrimSpace(c.text)
		if b.reqs[k].NaNIsError && strings.EqualFold(s, "nan") {
			return cellErr(s, "not a number (a computed value of NaN is an error here, not a missing value)", ErrNotNumber)
		}
		if isToken(s, b.missing) {
			missing()
			return nil
		}
		v, ok := parseFloat([]byte(s), b.dec)
		if !ok {
			return cellErr(s, notNumber([]byte(s), b.dec), ErrNotNumber)
		}
		x = v
	}
	col.Num = append(col.Num, x)
	return nil
}
