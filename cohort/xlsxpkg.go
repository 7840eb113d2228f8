package cohort

import (
	"archive/zip"
	"bufio"
	"bytes"
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"os"
	"path"
	"strconv"
	"strings"
)

// A workbook's package is read with archive/zip and encoding/xml alone:
// the package's relationships name the workbook part, the workbook's
// relationships its sheets, shared strings and styles, and the parts
// are found by name in the zip (exactly, else ignoring case, as part
// names compare in Open Packaging Conventions). Elements and attributes
// are matched by their local names, so the transitional and the strict
// namespaces of ECMA-376 read alike.

// workbook is an open workbook: its zip, the workbook part's
// relationships, the sheets in tab order, the shared strings, the date
// system and the number format of each cell style.
type workbook struct {
	path     string
	zr       *zip.ReadCloser
	wbPart   string               // the workbook part's name
	parts    map[string]*zip.File // by name, and by lower-case name
	rels     map[string]string    // relationship id → part name, of the workbook part
	sheets   []sheetEntry
	sstText  string   // the shared strings, end to end
	sstEnd   []uint32 // the end of each shared string in sstText
	date1904 bool
	xfFmt    []int          // number format id of each cell style (−1: none)
	fmtCode  map[int]string // custom number format codes by id
	styles   map[int]dateKind
	limit    int64
	whole    uint64 // the largest part reader unpacks whole: wholePart
}

// sheetEntry is a sheet of the workbook part: its name and the id of
// the relationship to its part.
type sheetEntry struct{ name, id string }

// sheetRef is a worksheet chosen to be read.
type sheetRef struct{ name, part string }

// openWorkbook checks the package and opens it: the workbook part, its
// relationships and its styles.
func openWorkbook(file string) (*workbook, error) {
	st, err := os.Stat(file)
	if err != nil {
		return nil, &Error{File: file, Msg: "cannot read file: " + pathErrMsg(err), Kind: ErrRead, Err: err}
	}
	if st.IsDir() {
		return nil, &Error{File: file, Msg: "cannot read file: is a directory", Kind: ErrRead}
	}
	zr, err := checkPackage(file, st.Size())
	if err != nil {
		return nil, err
	}
	wb := &workbook{path: file, zr: zr, parts: map[string]*zip.File{}, styles: map[int]dateKind{}, limit: workbookLimit(st.Size()), whole: wholePart}
	if err := wb.open(); err != nil {
		zr.Close()
		return nil, err
	}
	return wb, nil
}

func (wb *workbook) close() { wb.zr.Close() }

// open indexes the parts and reads the workbook part, its
// relationships and the styles.
func (wb *workbook) open() error {
	for _, e := range wb.zr.File {
		name := strings.ReplaceAll(e.Name, `\`, "/")
		if !localPartName(name) {
			return workbookError(wb.path, fmt.Errorf("an entry named %s, outside the package (a part name has no \"..\" segment and is not absolute)", Quote(e.Name)))
		}
		low := "\x00" + strings.ToLower(name)
		if prev := wb.parts[low]; prev != nil {
			names := Quote(e.Name)
			if prev.Name != e.Name {
				names = Quote(prev.Name) + " and " + names
			}
			return workbookError(wb.path, fmt.Errorf("two entries named %s (part names are unique, ignoring case)", names))
		}
		wb.parts[name], wb.parts[low] = e, e
	}
	pkgRels, err := wb.relsPart("_rels/.rels")
	if err != nil {
		return err
	}
	wbPart := officeDocument(pkgRels)
	wb.wbPart = wbPart
	rels, err := wb.relsPart(relsOf(wbPart))
	if err != nil {
		return err
	}
	if len(bytes.TrimSpace(rels)) == 0 {
		return errMissingPart(wb.path)
	}
	wb.rels = relationships(rels, path.Dir(wbPart))
	if err := wb.readWorkbookPart(wbPart); err != nil {
		return err
	}
	stylesPart := wb.rels["\x00styles"]
	if stylesPart == "" {
		stylesPart = "xl/styles.xml"
	}
	return wb.readStyles(stylesPart)
}

// localPartName reports whether a zip entry's name (with "/" for "\\")
// stays inside the package: not absolute, no drive letter, no ".."
// segment (Open Packaging Conventions, ECMA-376 Part 2, §9.1.1.1).
func localPartName(name string) bool {
	if strings.HasPrefix(name, "/") || len(name) >= 2 && name[1] == ':' {
		return false
	}
	for seg := range strings.SplitSeq(name, "/") {
		if seg == ".." {
			return false
		}
	}
	return true
}

// maxRelsPart is the largest relationships part read: some 200 bytes a
// relationship, for hundreds of thousands of sheets, where 75 MiB of
// empty Relationship elements (a zip of 150 KB) took 8 s and 1.2 GB.
const maxRelsPart = 64 << 20

// relsPart returns the bytes of a relationships part, refused when it
// unpacks to more than maxRelsPart.
func (wb *workbook) relsPart(name string) ([]byte, error) {
	if e := wb.file(name); e != nil && e.UncompressedSize64 > maxRelsPart {
		return nil, workbookError(wb.path, fmt.Errorf("part %s: it unpacks to %d bytes, more than the %d a relationships part may", name, e.UncompressedSize64, maxRelsPart))
	}
	return wb.part(name)
}

// errMissingPart is the error of a package without the workbook part or
// its relationships, or with one of them empty.
func errMissingPart(file string) error {
	return workbookError(file, fmt.Errorf("a part it needs (the workbook, its relationships or styles) is empty or cut short (%w)", io.EOF))
}

// file is the zip entry of a part, or nil.
func (wb *workbook) file(name string) *zip.File {
	if e := wb.parts[name]; e != nil {
		return e
	}
	return wb.parts["\x00"+strings.ToLower(name)]
}

// hasPart reports whether the package has a part of that name.
func (wb *workbook) hasPart(name string) bool { return wb.file(name) != nil }

// part returns the bytes of a part, nil when the package has none.
func (wb *workbook) part(name string) ([]byte, error) {
	e := wb.file(name)
	if e == nil {
		return nil, nil
	}
	r, err := e.Open()
	if err != nil {
		return nil, workbookError(wb.path, fmt.Errorf("part %s: %w", name, err))
	}
	defer r.Close()
	// Sized to the length the zip gives (checked as it is read), so the
	// part is read into one allocation.
	buf := bytes.NewBuffer(make([]byte, 0, min(int64(e.UncompressedSize64), wb.limit)+bytes.MinRead))
	if _, err := buf.ReadFrom(io.LimitReader(r, wb.limit)); err != nil {
		return nil, workbookError(wb.path, fmt.Errorf("part %s: %w", name, err))
	}
	return buf.Bytes(), nil
}

// wholePart is the largest part that reader unpacks whole before it is
// parsed: parsing from memory took about a sixth less CPU than from the
// stream, on a 100,000-row sheet of 17 MB (the heap is larger, so the
// collector runs less often), while a larger sheet parsed as a stream
// does not hold its XML in memory.
const wholePart = 64 << 20

// reader opens a part to be parsed: its bytes when it unpacks to at
// most wb.whole bytes, else a stream; done closes it. A part the package
// does not have reads as empty.
func (wb *workbook) reader(name string) (r io.Reader, done func(), err error) {
	e := wb.file(name)
	if e == nil || e.UncompressedSize64 <= wb.whole {
		b, err := wb.part(name)
		return bytes.NewReader(b), func() {}, err
	}
	rc, err := e.Open()
	if err != nil {
		return nil, nil, workbookError(wb.path, fmt.Errorf("part %s: %w", name, err))
	}
	return bufio.NewReaderSize(io.LimitReader(rc, wb.limit), 64<<10), func() { rc.Close() }, nil
}

// maxSheets is the most sheets a workbook part may list. Excel's own
// limit is the memory at hand; the bound keeps a hostile workbook part
// (256 MiB of empty sheet elements unpack from a zip of 300 KB) from
// taking gigabytes.
const maxSheets = 1 << 16

// readWorkbookPart reads the sheets and the date system of the workbook
// part: the date1904 attribute of its workbookPr and the sheet elements
// of its sheets, children of the root element, matched by local names.
func (wb *workbook) readWorkbookPart(name string) error {
	b, err := wb.part(name)
	if err != nil {
		return err
	}
	if len(bytes.TrimSpace(b)) == 0 {
		return errMissingPart(wb.path)
	}
	err = walkPart(b, func(parent string, t xml.StartElement) error {
		switch {
		case parent == "" && t.Name.Local == "workbookPr":
			if v, ok := lastAttr(t, "date1904"); ok {
				var err error
				wb.date1904, err = strconv.ParseBool(strings.TrimSpace(v))
				return err
			}
		case parent == "sheets" && t.Name.Local == "sheet":
			if len(wb.sheets) == maxSheets {
				return fmt.Errorf("it lists more than %d sheets", maxSheets)
			}
			n, _ := lastAttr(t, "name")
			id, _ := lastAttr(t, "id")
			wb.sheets = append(wb.sheets, sheetEntry{n, id})
		}
		return nil
	})
	if err != nil {
		return workbookError(wb.path, fmt.Errorf("part %s: %w", name, err))
	}
	return nil
}

// walkPart reads a part's XML to the end of its root element and calls
// visit for each child of the root (parent "") and each grandchild
// (parent the child's local name), in document order; deeper elements
// are read past, and what follows the root element is not read. A part
// without a root element, malformed XML or an error of visit stops the
// walk with that error.
func walkPart(b []byte, visit func(parent string, t xml.StartElement) error) error {
	d := xml.NewDecoder(bytes.NewReader(b))
	for depth, parent := 0, ""; ; {
		tok, err := d.Token()
		if err == io.EOF && depth == 0 {
			return errors.New("no root element")
		}
		if err != nil {
			return err
		}
		switch t := tok.(type) {
		case xml.StartElement:
			depth++
			switch depth {
			case 2:
				parent = t.Name.Local
				err = visit("", t)
			case 3:
				err = visit(parent, t)
			}
			if err != nil {
				return err
			}
		case xml.EndElement:
			if depth--; depth == 0 {
				return nil
			}
			if depth == 1 {
				parent = ""
			}
		}
	}
}

// lastAttr is the value of the element's last attribute of that local
// name, in any namespace (r:id is the id of a sheet).
func lastAttr(t xml.StartElement, local string) (v string, ok bool) {
	for _, a := range t.Attr {
		if a.Name.Local == local {
			v, ok = a.Value, true
		}
	}
	return v, ok
}

// maxStyles is the most cell styles (cellXfs) and number formats a
// styles part may have. Excel's own limit is 65,490 cell formats (and
// some 250 number formats); a writer that makes a style for every cell
// goes beyond it, a hostile styles part far beyond (256 MiB of empty xf
// elements unpack from a zip of some 400 KB).
const maxStyles = 1 << 20

// readStyles reads the number formats of the cell styles: the numFmt
// elements of numFmts (the custom formats by id; the first of an id
// counts) and the xf elements of cellXfs (each style's number format,
// −1 for none), children of the root element, matched by local names.
func (wb *workbook) readStyles(name string) error {
	b, err := wb.part(name)
	if err != nil || len(bytes.TrimSpace(b)) == 0 {
		return err
	}
	wb.fmtCode = map[int]string{}
	formats := 0
	err = walkPart(b, func(parent string, t xml.StartElement) error {
		switch {
		case parent == "numFmts" && t.Name.Local == "numFmt":
			if formats++; formats > maxStyles {
				return fmt.Errorf("it has more than %d number formats", maxStyles)
			}
			id, err := intAttr(t, "numFmtId", 0)
			if err != nil {
				return err
			}
			if _, dup := wb.fmtCode[id]; !dup {
				wb.fmtCode[id], _ = lastAttr(t, "formatCode")
			}
		case parent == "cellXfs" && t.Name.Local == "xf":
			if len(wb.xfFmt) == maxStyles {
				return fmt.Errorf("it has more than %d cell styles", maxStyles)
			}
			id, err := intAttr(t, "numFmtId", -1)
			if err != nil {
				return err
			}
			wb.xfFmt = append(wb.xfFmt, id)
		}
		return nil
	})
	if err != nil {
		return workbookError(wb.path, fmt.Errorf("part %s: %w", name, err))
	}
	return nil
}

// intAttr is the element's last attribute of that local name as an
// integer (0 when it is empty), or absent when it has none.
func intAttr(t xml.StartElement, local string, absent int) (int, error) {
	v, ok := lastAttr(t, local)
	if !ok {
		return absent, nil
	}
	if v = strings.TrimSpace(v); v == "" {
		return 0, nil
	}
	n, err := strconv.ParseInt(v, 10, strconv.IntSize)
	return int(n), err
}

// builtInFormat reports whether id is a number format that ECMA-376
// Part 1, §18.8.30 defines (or Excel's East Asian versions add), whose
// code a workbook does not store and whose custom definition is ignored.
func builtInFormat(id int) bool {
	switch {
	case id >= 0 && id <= 4, id >= 9 && id <= 22, id >= 27 && id <= 62, id >= 67 && id <= 81:
		return true
	}
	return false
}

// dateKind is how the cell style with index style shows numbers, from
// its number format (cached per style); a style the workbook does not
// have shows numbers as numbers.
func (wb *workbook) dateKind(style int) dateKind {
	if k, ok := wb.styles[style]; ok {
		return k
	}
	k := notDate
	if style >= 0 && style < len(wb.xfFmt) {
		switch id := wb.xfFmt[style]; {
		case builtInFormat(id):
			k = numFmtKind(id, "")
		case id >= 0:
			if code, ok := wb.fmtCode[id]; ok {
				k = numFmtKind(id, code)
			}
		}
	}
	wb.styles[style] = k
	return k
}
