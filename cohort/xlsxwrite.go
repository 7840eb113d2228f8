package cohort

import (
	"bytes"
	"context"
	"fmt"
	"math"
	"strings"
)

// WorkbookCSV returns the sheet the frame was read from as delimited
// text: the header and every data row the frame holds, each cell as
// text (numbers in the shortest form that reads back exactly, dates as
// ISO 8601, booleans as TRUE and FALSE, error values as written, a
// formula by its stored value and empty when it has none), followed by
// names[k] holding values[k] as AppendCSV writes them. Fields holding
// the delimiter, a quote, a line end or spaces at either end are quoted.
func (f *Frame) WorkbookCSV(names []string, values [][]float64, delim byte) (out []byte, err error) {
	if f.Sheet == "" {
		return nil, fmt.Errorf("cohort: WorkbookCSV needs a frame read from a workbook")
	}
	defer recoverWorkbook(f.File, &err)
	wb, err := openWorkbook(f.File)
	if err != nil {
		return nil, err
	}
	defer wb.close()
	if err := wb.sharedStrings(); err != nil {
		return nil, err
	}
	sh, err := wb.sheet(f.Sheet)
	if err != nil {
		return nil, err
	}
	var b bytes.Buffer
	fields := make([]string, len(f.Header))
	write := func(fields []string) {
		for j, s := range fields {
			if j > 0 {
				b.WriteByte(delim)
			}
			writeField(&b, s, delim)
		}
	}
	write(f.Header)
	for _, n := range names {
		b.WriteByte(delim)
		writeField(&b, n, delim)
	}
	b.WriteByte('\n')
	i, num := 0, make([]byte, 0, 32)
	err = wb.rows(context.Background(), sh, func(row int, cells []xcell) error {
		if i >= f.Rows || row != f.Line(i) {
			return nil
		}
		clear(fields)
		for _, c := range cells {
			if j := c.col - f.firstCol; j >= 0 && j < len(fields) && c.kind != cellNoValue {
				fields[j] = c.textValue()
			}
		}
		write(fields)
		for _, v := range values {
			b.WriteByte(delim)
			if !math.IsNaN(v[i]) {
				b.Write(appendNumber(num[:0], v[i], false))
			}
		}
		b.WriteByte('\n')
		i++
		return nil
	})
	if err != nil {
		return nil, err
	}
	if i != f.Rows {
		return nil, &Error{File: f.File, Msg: fmt.Sprintf("sheet %s changed while it was read (%d of %d rows found again)", Quote(f.Sheet), i, f.Rows), Kind: ErrFormat}
	}
	return b.Bytes(), nil
}

// writeField writes s as one field of delimited text, quoted when it
// must be to read back as it is.
func writeField(b *bytes.Buffer, s string, delim byte) {
	if s == "" || !strings.ContainsAny(s, "\"\r\n"+string(delim)) && strings.TrimSpace(s) == s {
		b.WriteString(s)
		return
	}
	b.WriteByte('"')
	b.WriteString(strings.ReplaceAll(s, `"`, `""`))
	b.WriteByte('"')
}
