package cohort

import (
	"archive/zip"
	"bytes"
	"context"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"path"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// Workbooks (Office Open XML, .xlsx) are read with archive/zip and
// encoding/xml. The package is checked whole first (every part's
// checksum, the unpacked size against a limit, the kind of zip), then
// opened (xlsxpkg.go: the workbook, its relationships, styles and date
// system), and the one sheet read is streamed cell by cell (xlsxcells.go)
// by each cell's type and style, which decide what it means (a date is a
// number with a date style; a formula without a stored value has none);
// only the requested columns are kept.

// xlsxFormat names the format in messages.
const xlsxFormat = "Excel workbook (.xlsx)"

// workbookLimit is how many bytes the parts of a workbook of size bytes
// may unpack to, together: 100 times the file, and at least 256 MiB.
// Worksheet XML compresses 5 to 15 times; a zip bomb, far more.
func workbookLimit(size int64) int64 { return max(256<<20, 100*size) }

// isWorkbook reports whether the file at path is an Office Open XML
// workbook by its entries (a [Content_Types].xml and a part under xl/),
// or, when its zip directory cannot be read, by the name's extension
// .xlsx, so that a damaged workbook is refused as one.
func isWorkbook(path string) bool {
	f, err := os.Open(path)
	if err != nil {
		return false
	}
	defer f.Close()
	var b [4]byte
	if _, err := io.ReadFull(f, b[:]); err != nil || string(b[:2]) != "PK" {
		return false
	}
	st, err := f.Stat()
	if err != nil {
		return false
	}
	zr, err := zip.NewReader(f, st.Size())
	if err != nil {
		return strings.EqualFold(filepath.Ext(path), ".xlsx")
	}
	types, xl := false, false
	for _, e := range zr.File {
		types = types || e.Name == "[Content_Types].xml"
		xl = xl || strings.HasPrefix(e.Name, "xl/")
	}
	return types && xl
}

// LoadXLSX reads the requested columns of one sheet of an Excel
// workbook (.xlsx): the sheet named by Options.Sheet, or the first
// worksheet in tab order. The header is the sheet's first row with a
// value, and its columns run from its first to its last value; every
// later row with a value in those columns is a data row (rows without
// one are skipped, as empty lines of text are).
//
// Cells are read by their type. Numbers are numbers; text is read as a
// CSV field is (spaces trimmed, the missing-value markers, numbers
// written as text); a number with a date or time style is its ISO 8601
// date ("2024-03-01"), date and time ("2024-03-01T08:30:00") or time
// ("08:30:00") as text, in the workbook's date system; TRUE and FALSE
// are 1 and 0 for a numeric request and "TRUE" and "FALSE" for a
// categorical one; a formula is read by the value the workbook stored
// for it when last calculated. An empty cell is a missing value. A date
// in a numeric column, an error value such as #N/A (unless it is a
// missing-value marker), a formula without a stored value and a value
// outside the header's columns are errors. Every error names the cell
// ("cell Sheet1!D17") with its column and value.
//
// A damaged workbook (its zip directory, a compressed part, a checksum
// or its XML), one whose parts unpack to more than 100 times its size
// (at least 256 MiB), a legacy .xls, a macro-enabled or binary workbook
// and an OpenDocument spreadsheet are an *Error of kind ErrFormat, never
// a panic.
func LoadXLSX(path string, reqs []Request, opt Options) (*Frame, error) {
	return loadXLSX(context.Background(), path, reqs, opt)
}

func loadXLSX(ctx context.Context, path string, reqs []Request, opt Options) (out *Frame, err error) {
	defer recoverWorkbook(path, &err)
	wb, err := openWorkbook(path)
	if err != nil {
		return nil, err
	}
	defer wb.close()
	sh, err := wb.sheet(opt.Sheet)
	if err != nil {
		return nil, err
	}
	return wb.read(ctx, sh, reqs, opt)
}

// checkPackage refuses what is not an .xlsx workbook, with what it is
// and what is read instead, and a zip whose parts are damaged (every
// part is unpacked once, which checks its compressed data and
// checksum) or unpack to more than the limit, and returns the open zip.
// Its parts are checked before any is read, so that a damaged part is
// refused as damaged, never read as a shorter one.
func checkPackage(path string, size int64) (_ *zip.ReadCloser, err error) {
	head := make([]byte, 512)
	fh, err := os.Open(path)
	if err != nil {
		return nil, &Error{File: path, Msg: "cannot read file: " + pathErrMsg(err), Kind: ErrRead, Err: err}
	}
	n, _ := io.ReadFull(fh, head)
	fh.Close()
	head = head[:n]
	if !bytes.HasPrefix(head, []byte("PK")) {
		what := "not an " + xlsxFormat
		if kind, _ := signature(head); kind != "" {
			what = "looks like " + kind + ", not an " + xlsxFormat
		}
		return nil, &Error{File: path, Msg: what + notXLSXHint(head), Kind: ErrFormat}
	}
	zr, err := zip.OpenReader(path)
	if err != nil {
		return nil, workbookError(path, err)
	}
	defer func() {
		if err != nil {
			zr.Close()
		}
	}()
	names := make([]string, len(zr.File))
	var total uint64
	limit := uint64(workbookLimit(size))
	for i, e := range zr.File {
		names[i] = e.Name
		total += e.UncompressedSize64
		if total > limit {
			return nil, &Error{File: path, Msg: fmt.Sprintf("not read: its parts unpack to more than %d bytes, over 100 times the file's size (a damaged file or a zip bomb)", limit), Kind: ErrFormat}
		}
	}
	if msg := otherPackage(zr, names); msg != "" {
		return nil, &Error{File: path, Msg: msg, Kind: ErrFormat}
	}
	for _, e := range zr.File {
		if err := checkEntry(e); err != nil {
			return nil, workbookError(path, fmt.Errorf("part %s: %w", e.Name, err))
		}
	}
	return zr, nil
}

// checkEntry unpacks a zip entry once, which checks its compressed data,
// its checksum and its size (archive/zip stops an entry that unpacks to
// more than its header says, as a zip bomb's does).
func checkEntry(e *zip.File) error {
	r, err := e.Open()
	if err != nil {
		return err
	}
	defer r.Close()
	if _, err := io.Copy(io.Discard, r); err != nil {
		if errors.Is(err, zip.ErrFormat) {
			return fmt.Errorf("it unpacks to more than the %d bytes its zip entry says (a damaged file or a zip bomb)", e.UncompressedSize64)
		}
		return err
	}
	return nil
}

// otherPackage names a zip that is not an .xlsx workbook: an
// OpenDocument spreadsheet, a macro-enabled or binary workbook, another
// Office file or another archive.
func otherPackage(zr *zip.ReadCloser, names []string) string {
	const read = ", which is not read: save it as an Excel workbook (.xlsx) or export the sheet as CSV"
	if len(names) > 0 && names[0] == "mimetype" {
		return "is an OpenDocument file (such as .ods)" + read
	}
	if !slices.Contains(names, "[Content_Types].xml") {
		return "is a zip archive, not an " + xlsxFormat + "; extract the file from it first"
	}
	if slices.Contains(names, "xl/workbook.bin") {
		return "is an Excel binary workbook (.xlsb)" + read
	}
	if !slices.ContainsFunc(names, func(n string) bool { return strings.HasPrefix(n, "xl/") }) {
		return "is an Office file that is not a workbook (a Word document or a presentation)"
	}
	if slices.ContainsFunc(names, func(n string) bool { return strings.HasSuffix(n, "vbaProject.bin") }) {
		return "is a macro-enabled Excel workbook (.xlsm)" + read
	}
	for _, e := range zr.File {
		if e.Name != "[Content_Types].xml" || e.UncompressedSize64 > 1<<20 {
			continue
		}
		r, err := e.Open()
		if err != nil {
			return ""
		}
		var types struct {
			Overrides []struct {
				PartName    string `xml:"PartName,attr"`
				ContentType string `xml:"ContentType,attr"`
			} `xml:"Override"`
		}
		err = xml.NewDecoder(io.LimitReader(r, 1<<20)).Decode(&types)
		r.Close()
		if err != nil {
			return ""
		}
		for _, o := range types.Overrides {
			if strings.HasSuffix(o.ContentType, ".main+xml") && strings.Contains(o.ContentType, "macroEnabled") {
				return "is a macro-enabled Excel workbook (.xlsm)" + read
			}
		}
	}
	return ""
}

// notXLSXHint says what to give instead of a file that is not a zip.
func notXLSXHint(head []byte) string {
	switch kind, _ := signature(head); {
	case strings.Contains(kind, "password"):
		return "; save it without a password"
	case strings.Contains(kind, "Excel") || strings.Contains(kind, "legacy"):
		return ", which is not read: save it as an Excel workbook (.xlsx) or export the sheet as CSV"
	}
	return "; give an .xlsx workbook, or a CSV, Parquet or Arrow file with --format to match"
}

// workbookError is a workbook that cannot be read as one: kind
// ErrFormat, unless it already is an *Error.
func workbookError(path string, err error) error {
	if errors.As(err, new(*Error)) {
		return err
	}
	var pe *fs.PathError
	if errors.As(err, &pe) && !errors.Is(err, zip.ErrFormat) {
		return &Error{File: path, Msg: "cannot read file: " + pe.Err.Error(), Kind: ErrRead, Err: err}
	}
	return &Error{File: path, Msg: "not a readable " + xlsxFormat + ": " + firstLine(err.Error()), Kind: ErrFormat, Err: err}
}

// recoverWorkbook turns a panic while a workbook is read or written
// into an *Error of kind ErrFormat.
func recoverWorkbook(path string, err *error) {
	if p := recover(); p != nil {
		*err = &Error{File: path, Msg: fmt.Sprintf("not a readable %s: the reader failed (%v)", xlsxFormat, firstLine(fmt.Sprint(p))), Kind: ErrFormat,
			Err: fmt.Errorf("panic while reading a workbook: %v", p)}
	}
}

func pathErrMsg(err error) string {
	var pe *fs.PathError
	if errors.As(err, &pe) {
		return pe.Err.Error()
	}
	return err.Error()
}

type xmlRelationships struct {
	Rels []struct {
		ID     string `xml:"Id,attr"`
		Type   string `xml:"Type,attr"`
		Target string `xml:"Target,attr"`
	} `xml:"Relationship"`
}

// officeDocument is the workbook's part name, from the package's
// relationships (xl/workbook.xml when they do not say).
func officeDocument(rels []byte) string {
	var r xmlRelationships
	if xml.Unmarshal(rels, &r) == nil {
		for _, x := range r.Rels {
			if strings.HasSuffix(x.Type, "/officeDocument") {
				return strings.TrimPrefix(path.Clean("/"+x.Target), "/")
			}
		}
	}
	return "xl/workbook.xml"
}

// relsOf is the relationships part of a part.
func relsOf(p string) string { return path.Join(path.Dir(p), "_rels", path.Base(p)+".rels") }

// relationships maps the ids of a part's relationships to the part
// names they target, relative to dir.
func relationships(b []byte, dir string) map[string]string {
	m := map[string]string{}
	var r xmlRelationships
	if xml.Unmarshal(b, &r) != nil {
		return m
	}
	for _, x := range r.Rels {
		t := x.Target
		if strings.HasPrefix(t, "/") {
			t = path.Clean(t)[1:]
		} else {
			t = path.Join(dir, t)
		}
		m[x.ID] = t
		switch {
		case strings.HasSuffix(x.Type, "/sharedStrings"):
			m["\x00sst"] = t
		case strings.HasSuffix(x.Type, "/styles"):
			m["\x00styles"] = t
		}
	}
	return m
}

// sheet chooses the worksheet to read: the one named (exactly, else
// ignoring case, as Excel compares sheet names), or the first worksheet
// in tab order.
func (wb *workbook) sheet(name string) (sheetRef, error) {
	list := make([]string, len(wb.sheets))
	for i, s := range wb.sheets {
		list[i] = s.name
	}
	isWorksheet := func(p string) bool {
		return !strings.Contains(p, "chartsheets/") && !strings.Contains(p, "dialogsheets/") && !strings.Contains(p, "macrosheets/")
	}
	if name == "" {
		for i, s := range list {
			p, err := wb.sheetPart(i)
			if err != nil {
				return sheetRef{}, err
			}
			if isWorksheet(p) {
				return sheetRef{s, p}, nil
			}
		}
		return sheetRef{}, &Error{File: wb.path, Msg: "the workbook has no worksheet", Kind: ErrEmpty}
	}
	at := slices.Index(list, name)
	if at < 0 {
		at = slices.IndexFunc(list, func(s string) bool { return strings.EqualFold(s, name) })
	}
	if at < 0 {
		msg := "no sheet " + Quote(name)
		if s := Closest(name, list); s != "" {
			msg += " (did you mean " + Quote(s) + "?)"
		}
		return sheetRef{}, &Error{File: wb.path, Msg: msg + "; sheets present: " + QuoteList(list), Kind: ErrNoColumn}
	}
	p, err := wb.sheetPart(at)
	if err != nil {
		return sheetRef{}, err
	}
	if !isWorksheet(p) {
		return sheetRef{}, &Error{File: wb.path, Msg: "sheet " + Quote(list[at]) + " is not a worksheet (a chart or dialog sheet holds no cells)", Kind: ErrFormat}
	}
	return sheetRef{list[at], p}, nil
}

// sheetPart is the part of the workbook's sheet i, by its relationship:
// an error names the sheet when the relationship is not there, points
// outside the package or to a part the package does not have.
func (wb *workbook) sheetPart(i int) (string, error) {
	s := wb.sheets[i]
	p := wb.rels[s.id]
	var msg string
	switch {
	case p == "":
		msg = fmt.Sprintf("sheet %s: the workbook's relationships (%s) have no %s", Quote(s.name), relsOf(wb.wbPart), Quote(s.id))
	case p == ".." || strings.HasPrefix(p, "../"):
		msg = fmt.Sprintf("sheet %s: its relationship %s points outside the package (%s)", Quote(s.name), Quote(s.id), Quote(p))
	case !wb.hasPart(p):
		msg = fmt.Sprintf("sheet %s: its part %s is missing from the package", Quote(s.name), p)
	default:
		return p, nil
	}
	return "", &Error{File: wb.path, Msg: "not a readable " + xlsxFormat + ": " + msg, Kind: ErrFormat}
}

// sharedStrings reads the workbook's shared string table: the text of
// each item, its runs joined, without phonetic guides. The items are
// kept end to end in one string, with the end of each: 4 bytes an item
// where a string of its own took 16 and more (a table of 50 million
// empty items, 256 MiB of XML in a zip of 374 KB, took 4.0 GB of memory
// and now 1.3 GB).
func (wb *workbook) sharedStrings() error {
	name := wb.rels["\x00sst"]
	if name == "" {
		name = "xl/sharedStrings.xml"
	}
	b, err := wb.part(name)
	if b == nil {
		return err
	}
	d := xml.NewDecoder(bytes.NewReader(b))
	var text, all []byte
	depth, inSI, inPh := 0, false, 0
	for {
		tok, err := d.Token()
		if err == io.EOF {
			if depth != 0 {
				return workbookError(wb.path, fmt.Errorf("part %s ends inside an element", name))
			}
			wb.sstText = string(all)
			return nil
		}
		if err != nil {
			return workbookError(wb.path, fmt.Errorf("part %s: %w", name, err))
		}
		switch t := tok.(type) {
		case xml.StartElement:
			depth++
			switch t.Name.Local {
			case "si":
				inSI, text = true, text[:0]
			case "rPh":
				inPh++
			case "t":
				if inSI && inPh == 0 {
					s, err := elementText(d, nil)
					if err != nil {
						return workbookError(wb.path, fmt.Errorf("part %s: %w", name, err))
					}
					text = append(text, s...)
					depth--
				}
			}
		case xml.EndElement:
			depth--
			switch t.Name.Local {
			case "si":
				if all = append(all, text...); len(all) > math.MaxUint32 {
					return workbookError(wb.path, fmt.Errorf("part %s holds more than 4 GiB of text", name))
				}
				wb.sstEnd = append(wb.sstEnd, uint32(len(all)))
				inSI = false
			case "rPh":
				inPh--
			}
		}
	}
}

// sharedString is item i of the shared string table, and whether the
// table has it.
func (wb *workbook) sharedString(i int) (string, bool) {
	if i < 0 || i >= len(wb.sstEnd) {
		return "", false
	}
	start := uint32(0)
	if i > 0 {
		start = wb.sstEnd[i-1]
	}
	return wb.sstText[start:wb.sstEnd[i]], true
}

// elementText reads the text of the element just opened, up to its
// end, appended to buf; child elements are skipped.
func elementText(d *xml.Decoder, buf []byte) ([]byte, error) {
	for {
		tok, err := d.Token()
		if err != nil {
			return buf, err
		}
		switch t := tok.(type) {
		case xml.CharData:
			buf = append(buf, t...)
		case xml.StartElement:
			if err := d.Skip(); err != nil {
				return buf, err
			}
		case xml.EndElement:
			return buf, nil
		}
	}
}

// quoteSheet writes a sheet name as a cell reference needs it: as it is
// when it is letters, digits and underscores (not starting with a
// digit), otherwise in single quotes with quotes doubled.
func quoteSheet(name string) string {
	plain := name != ""
	for i, r := range name {
		if !(r == '_' || r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' && i > 0 || r > 127) {
			plain = false
		}
	}
	if plain {
		return name
	}
	return "'" + strings.ReplaceAll(name, "'", "''") + "'"
}

// cellRef is the reference of a cell: Sheet1!D17.
func cellRef(sheet string, col, row int) string {
	c := columnName(col)
	if c == "" {
		c = "C" + strconv.Itoa(col)
	}
	return quoteSheet(sheet) + "!" + c + strconv.Itoa(row)
}
