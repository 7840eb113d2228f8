package cohort

import (
	"archive/zip"
	"bytes"
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// AppendWorkbook returns the workbook the frame was read from with
// columns added to the sheet read, right of the header's last column:
// names[k] in the header row (as an inline string) and values[k] on
// each data row's sheet row as a number (the shortest decimal that
// reads back exactly, as AppendCSV writes it), empty where a value is
// NaN. Only the rows of that sheet's cell data that get a cell change,
// and its dimension when it has one; every other part of the package
// (other sheets, styles, shared strings, formulas, merged cells) is
// copied byte for byte. A cell the sheet already had where one is added
// (an empty cell with a style) is replaced, keeping its style unless
// that shows numbers as dates or times. The file is read again, never
// written; the caller writes the result.
func (f *Frame) AppendWorkbook(names []string, values [][]float64) (out []byte, err error) {
	if f.Sheet == "" {
		return nil, fmt.Errorf("cohort: AppendWorkbook needs a frame read from a workbook")
	}
	for k, name := range names {
		if len(values[k]) != f.Rows {
			return nil, fmt.Errorf("cohort: %d values for column %q of a frame of %d rows", len(values[k]), name, f.Rows)
		}
	}
	defer recoverWorkbook(f.File, &err)
	wb, err := openWorkbook(f.File)
	if err != nil {
		return nil, err
	}
	defer wb.close()
	sh, err := wb.sheet(f.Sheet)
	if err != nil {
		return nil, err
	}
	data, err := wb.part(sh.part)
	if err != nil {
		return nil, err
	}
	sp := &sheetSplice{wb: wb, f: f, names: names, values: values, data: data, last: f.firstCol + len(f.Header) - 1}
	sheet, err := sp.splice()
	if err != nil {
		return nil, &Error{File: f.File, Msg: fmt.Sprintf("cannot add the columns to sheet %s: %v", Quote(f.Sheet), err), Kind: ErrFormat, Err: err}
	}
	return wb.rewrite(sh.part, sheet)
}

// rewrite returns the package with the part named replaced by data and
// every other entry copied as it is stored.
func (wb *workbook) rewrite(part string, data []byte) ([]byte, error) {
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	target := wb.file(part)
	for _, e := range wb.zr.File {
		if e != target {
			if err := zw.Copy(e); err != nil {
				return nil, wb.writeError(err)
			}
			continue
		}
		w, err := zw.CreateHeader(&zip.FileHeader{Name: e.Name, Comment: e.Comment, Method: zip.Deflate, Modified: e.Modified})
		if err == nil {
			_, err = w.Write(data)
		}
		if err != nil {
			return nil, wb.writeError(err)
		}
	}
	if err := zw.Close(); err != nil {
		return nil, wb.writeError(err)
	}
	return buf.Bytes(), nil
}

func (wb *workbook) writeError(err error) error {
	return &Error{File: wb.path, Msg: "cannot write the scored workbook: " + err.Error(), Kind: ErrFormat, Err: err}
}

// sheetSplice adds the columns to a sheet part's XML: the rows are
// found with encoding/xml's byte offsets and the output is the input
// with cells inserted (and replaced) in them.
type sheetSplice struct {
	wb     *workbook
	f      *Frame
	names  []string
	values [][]float64
	data   []byte
	last   int // the header's last column

	out    bytes.Buffer
	cur    int  // data[:cur] is written
	next   int  // the frame's next data row
	header bool // the header row was met
}

// splice returns the sheet's XML with the columns added.
func (sp *sheetSplice) splice() ([]byte, error) {
	d := xml.NewDecoder(bytes.NewReader(sp.data))
	inData, row := false, 0
	for {
		pos := int(d.InputOffset())
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			switch {
			case t.Name.Local == "dimension" && !inData:
				sp.dimension(t, pos, int(d.InputOffset()))
			case t.Name.Local == "sheetData":
				inData = true
			case t.Name.Local == "row" && inData:
				row++
				if a := attr(t, "r"); a != "" {
					if row, err = strconv.Atoi(a); err != nil {
						return nil, fmt.Errorf("a row numbered %s", Quote(a))
					}
				}
				if err := sp.row(d, t, row, pos); err != nil {
					return nil, err
				}
			}
		case xml.EndElement:
			if t.Name.Local == "sheetData" {
				inData = false
			}
		}
	}
	if !sp.header || sp.next != sp.f.Rows {
		return nil, fmt.Errorf("the sheet changed since it was read (%d of %d rows found again)", sp.next, sp.f.Rows)
	}
	sp.out.Write(sp.data[sp.cur:])
	return sp.out.Bytes(), nil
}

// index returns the frame's index of sheet row row: −1 for the
// header, ok false for a row that gets no cells.
func (sp *sheetSplice) index(row int) (i int, ok bool) {
	if row == sp.f.headerRow {
		sp.header = true
		return -1, true
	}
	if sp.next < sp.f.Rows && sp.f.Line(sp.next) == row {
		sp.next++
		return sp.next - 1, true
	}
	return 0, false
}

// spliceCell is a cell of a row: its column, where its XML starts and
// ends, and its style attribute.
type spliceCell struct {
	col, start, end int
	style           string
}

// row reads a row element just opened at byte pos and, when it is the
// header or a data row, writes it with the cells added.
func (sp *sheetSplice) row(d *xml.Decoder, t xml.StartElement, row, pos int) error {
	i, ok := sp.index(row)
	if !ok {
		return d.Skip()
	}
	tagEnd := int(d.InputOffset())
	var cells []spliceCell
	col := 0
	for {
		at := int(d.InputOffset())
		tok, err := d.Token()
		if err != nil {
			return err
		}
		if c, ok := tok.(xml.StartElement); ok {
			if c.Name.Local == "c" {
				col++
				if a := attr(c, "r"); a != "" {
					if col, _, err = cellCoordinates(a); err != nil {
						return fmt.Errorf("a cell referenced %s", Quote(a))
					}
				}
			}
			if err := d.Skip(); err != nil {
				return err
			}
			if c.Name.Local == "c" {
				cells = append(cells, spliceCell{col, at, int(d.InputOffset()), attr(c, "s")})
			}
			continue
		}
		if _, ok := tok.(xml.EndElement); ok {
			sp.writeRow(row, i, pos, tagEnd, at, cells)
			return nil
		}
	}
}

// writeRow writes the row whose start tag is data[pos:tagEnd] and whose
// end tag starts at end (or which ends with its start tag), with the
// new cells right of the header's last column: before the first cell
// beyond the new columns, in place of cells already in them.
func (sp *sheetSplice) writeRow(row, i, pos, tagEnd, end int, cells []spliceCell) {
	tag := sp.data[pos:tagEnd]
	name := elementName(tag)
	prefix := strings.TrimSuffix(name, "row")
	newLast := sp.last + len(sp.names)
	sp.write(pos)
	selfClosing := end == tagEnd && bytes.HasSuffix(tag, []byte("/>"))
	if selfClosing {
		tag = tag[:len(tag)-2]
	}
	sp.out.Write(widenSpans(tag, newLast))
	if selfClosing {
		sp.out.WriteByte('>')
	}
	sp.cur = tagEnd
	styles := make([]string, len(sp.names))
	insert := end
	for _, c := range cells {
		if c.col > sp.last {
			insert = min(insert, c.start)
		}
	}
	sp.write(insert)
	for _, c := range cells {
		if c.col > sp.last && c.col <= newLast && !sp.dateStyle(c.style) {
			styles[c.col-sp.last-1] = c.style
		}
	}
	for k := range sp.names {
		sp.cell(prefix, sp.last+1+k, row, i, k, styles[k])
	}
	for _, c := range cells {
		if c.col > sp.last && c.col <= newLast {
			sp.write(c.start)
			sp.cur = c.end
		}
	}
	if selfClosing {
		sp.out.WriteString("</" + name + ">")
	}
}

// dateStyle reports whether the cell style s shows numbers as dates or
// times: a new cell does not keep it, as its value would show, and read
// back, as a date.
func (sp *sheetSplice) dateStyle(s string) bool {
	n, err := strconv.Atoi(s)
	return err == nil && sp.wb.dateKind(n) != notDate
}

// write writes the input up to byte at.
func (sp *sheetSplice) write(at int) {
	if at > sp.cur {
		sp.out.Write(sp.data[sp.cur:at])
		sp.cur = at
	}
}

// cell writes new column k's cell on sheet row row: the name on the
// header row (i −1), else data row i's value, if it is not NaN.
func (sp *sheetSplice) cell(prefix string, col, row, i, k int, style string) {
	b := &sp.out
	s := ""
	if style != "" {
		s = ` s="` + style + `"`
	}
	ref := cellName(col, row)
	if i < 0 {
		space := ""
		if strings.TrimSpace(sp.names[k]) != sp.names[k] {
			space = ` xml:space="preserve"`
		}
		fmt.Fprintf(b, `<%sc r="%s"%s t="inlineStr"><%sis><%st%s>`, prefix, ref, s, prefix, prefix, space)
		xml.EscapeText(b, []byte(sp.names[k]))
		fmt.Fprintf(b, `</%st></%sis></%sc>`, prefix, prefix, prefix)
		return
	}
	v := sp.values[k][i]
	if math.IsNaN(v) {
		if s != "" {
			fmt.Fprintf(b, `<%sc r="%s"%s/>`, prefix, ref, s)
		}
		return
	}
	// Excel shows 15 significant digits; the shortest decimal that
	// reads back exactly is stored.
	fmt.Fprintf(b, `<%sc r="%s"%s><%sv>%s</%sv></%sc>`, prefix, ref, s, prefix, strconv.FormatFloat(v, 'g', -1, 64), prefix, prefix)
}

// dimension rewrites the sheet's dimension element (start tag
// data[pos:end]) to span the new columns.
func (sp *sheetSplice) dimension(t xml.StartElement, pos, end int) {
	ref := attr(t, "ref")
	from, to, ok := strings.Cut(ref, ":")
	if !ok {
		to = from
	}
	c1, r1, err1 := cellCoordinates(from)
	c2, r2, err2 := cellCoordinates(to)
	if err1 != nil || err2 != nil {
		return
	}
	newLast := sp.last + len(sp.names)
	if c2 >= newLast {
		return
	}
	tag := sp.data[pos:end]
	closing := ">"
	if bytes.HasSuffix(tag, []byte("/>")) {
		closing = "/>"
	}
	sp.write(pos)
	fmt.Fprintf(&sp.out, `<%s ref="%s:%s"%s`, elementName(tag), cellName(c1, r1), cellName(newLast, r2), closing)
	sp.cur = end
}

// elementName is the name of the element, as written, of a start tag.
func elementName(tag []byte) string {
	n := bytes.IndexAny(tag, " \t\r\n/>")
	if n < 1 {
		return ""
	}
	return string(tag[1:n])
}

// widenSpans returns a row's start tag with the end of the last range
// of its spans attribute (a hint of the columns the row has cells in)
// widened to col.
func widenSpans(tag []byte, col int) []byte {
	i := bytes.Index(tag, []byte(` spans="`))
	if i < 0 {
		return tag
	}
	i += len(` spans="`)
	j := bytes.IndexByte(tag[i:], '"')
	if j < 0 {
		return tag
	}
	spans := string(tag[i : i+j])
	k := strings.LastIndexByte(spans, ':')
	if n, err := strconv.Atoi(spans[k+1:]); k < 0 || err != nil || n >= col {
		return tag
	}
	out := append([]byte{}, tag[:i]...)
	out = append(out, spans[:k+1]+strconv.Itoa(col)...)
	return append(out, tag[i+j:]...)
}
