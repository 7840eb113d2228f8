package cohort

import (
	"archive/zip"
	"bytes"
	"compress/flate"
	"errors"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"
)

// pkgEntry is one zip entry of a hand-made package, written as given
// (duplicate and unsafe names included).
type pkgEntry struct{ name, data string }

const (
	nsMain = `xmlns="http://schemas.openxmlformats.org/spreadsheetml/2006/main"`
	nsRels = `xmlns="http://schemas.openxmlformats.org/package/2006/relationships"`
	relDoc = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/"
)

// soundSheet is a worksheet of a header (x, y) and two data rows.
const soundSheet = `<worksheet ` + nsMain + `><sheetData>` +
	`<row r="1"><c r="A1" t="inlineStr"><is><t>x</t></is></c><c r="B1" t="inlineStr"><is><t>y</t></is></c></row>` +
	`<row r="2"><c r="A2"><v>1</v></c><c r="B2"><v>0</v></c></row>` +
	`<row r="3"><c r="A3"><v>2.5</v></c><c r="B3"><v>1</v></c></row></sheetData></worksheet>`

// minimalPackage is a sound workbook of the parts ECMA-376 Part 1
// (§12.2, and Part 2's Open Packaging Conventions) requires: content
// types, the package's and the workbook's relationships, the workbook
// with one sheet, the sheet and a styles part; edit changes or adds
// parts by name.
func minimalPackage(edit map[string]string) []pkgEntry {
	parts := []pkgEntry{
		{"[Content_Types].xml", `<Types xmlns="http://schemas.openxmlformats.org/package/2006/content-types"><Default Extension="xml" ContentType="application/xml"/></Types>`},
		{"_rels/.rels", `<Relationships ` + nsRels + `><Relationship Id="rId1" Type="` + relDoc + `officeDocument" Target="xl/workbook.xml"/></Relationships>`},
		{"xl/workbook.xml", `<workbook ` + nsMain + ` xmlns:r="` + strings.TrimSuffix(relDoc, "/") + `"><sheets><sheet name="Data" sheetId="1" r:id="rId1"/></sheets></workbook>`},
		{"xl/_rels/workbook.xml.rels", `<Relationships ` + nsRels + `><Relationship Id="rId1" Type="` + relDoc + `worksheet" Target="worksheets/sheet1.xml"/><Relationship Id="rId2" Type="` + relDoc + `styles" Target="styles.xml"/></Relationships>`},
		{"xl/styles.xml", `<styleSheet ` + nsMain + `><cellXfs count="1"><xf numFmtId="0"/></cellXfs></styleSheet>`},
		{"xl/worksheets/sheet1.xml", soundSheet},
	}
	for i, p := range parts {
		if s, ok := edit[p.name]; ok {
			parts[i].data = s
			delete(edit, p.name)
		}
	}
	for name, s := range edit {
		parts = append(parts, pkgEntry{name, s})
	}
	return parts
}

// zipBytes writes the entries as a zip with Go's archive/zip.
func zipBytes(t *testing.T, entries []pkgEntry) []byte {
	t.Helper()
	var b bytes.Buffer
	w := zip.NewWriter(&b)
	for _, e := range entries {
		f, err := w.Create(e.name)
		if err != nil {
			t.Fatal(err)
		}
		f.Write([]byte(e.data))
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

// withoutEntry is the package without the entry of that name.
func withoutEntry(entries []pkgEntry, name string) []pkgEntry {
	var out []pkgEntry
	for _, e := range entries {
		if e.name != name {
			out = append(out, e)
		}
	}
	return out
}

// sheetOf is a worksheet whose sheetData holds rows.
func sheetOf(rows string) string {
	return `<worksheet ` + nsMain + `><sheetData>` + rows + `</sheetData></worksheet>`
}

// header is the sheet's header row, x and y.
const header = `<row r="1"><c r="A1" t="inlineStr"><is><t>x</t></is></c><c r="B1" t="inlineStr"><is><t>y</t></is></c></row>`

// lyingBomb is a package whose sheet's entry says it unpacks to 100
// bytes while its deflated data unpacks to 300 MiB of spaces.
func lyingBomb(t *testing.T) []byte {
	t.Helper()
	var z bytes.Buffer
	fw, _ := flate.NewWriter(&z, flate.BestSpeed)
	chunk := bytes.Repeat([]byte{' '}, 1<<20)
	for i := 0; i < 300; i++ {
		fw.Write(chunk)
	}
	fw.Close()
	var b bytes.Buffer
	w := zip.NewWriter(&b)
	for _, e := range withoutEntry(minimalPackage(nil), "xl/worksheets/sheet1.xml") {
		f, _ := w.Create(e.name)
		f.Write([]byte(e.data))
	}
	f, err := w.CreateRaw(&zip.FileHeader{Name: "xl/worksheets/sheet1.xml", Method: zip.Deflate, CRC32: 0,
		CompressedSize64: uint64(z.Len()), UncompressedSize64: 100})
	if err != nil {
		t.Fatal(err)
	}
	f.Write(z.Bytes())
	w.Close()
	return b.Bytes()
}

// TestXLSXHostile: hand-made packages that are damaged or hostile are
// refused with one line that names the part or the cell and the value,
// an *Error of the kind given, never a panic, within a few seconds and
// a bounded allocation. The package layout and the cell, row and
// relationship rules checked are those of ECMA-376 Part 1 (§12.2,
// §18.3.1.4 c, §18.3.1.73 row, §18.4.8 si) and Part 2 (Open Packaging
// Conventions §9.1.1 part names: no "." or ".." segments, unique
// ignoring case; §9.3 relationships inside the package).
func TestXLSXHostile(t *testing.T) {
	deep := strings.Repeat("<a>", 100000) + strings.Repeat("</a>", 100000)
	laughs := `<?xml version="1.0"?><!DOCTYPE lolz [<!ENTITY lol "lol"><!ENTITY lol2 "&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;&lol;">` +
		`<!ENTITY lol3 "&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;&lol2;">]>`
	for _, tc := range []struct {
		name string
		data []byte
		want string
	}{
		{"dotdot", zipBytes(t, minimalPackage(map[string]string{"../../evil.xml": "<x/>"})), "not a readable Excel workbook (.xlsx): an entry named \"../../evil.xml\", outside the package"},
		{"absolute", zipBytes(t, minimalPackage(map[string]string{"/etc/evil.xml": "<x/>"})), "an entry named \"/etc/evil.xml\", outside the package"},
		{"backslash-dotdot", zipBytes(t, minimalPackage(map[string]string{`..\evil.xml`: "<x/>"})), "an entry named \"..\\\\evil.xml\", outside the package"},
		{"duplicate", zipBytes(t, append(minimalPackage(nil), pkgEntry{"xl/worksheets/sheet1.xml", sheetOf(header)})), "two entries named \"xl/worksheets/sheet1.xml\" (part names are unique, ignoring case)"},
		{"duplicate-case", zipBytes(t, append(minimalPackage(nil), pkgEntry{"xl/worksheets/Sheet1.xml", sheetOf(header)})), "two entries named \"xl/worksheets/sheet1.xml\" and \"xl/worksheets/Sheet1.xml\""},
		{"sheet-missing", zipBytes(t, withoutEntry(minimalPackage(nil), "xl/worksheets/sheet1.xml")), "sheet \"Data\": its part xl/worksheets/sheet1.xml is missing from the package"},
		{"rels-outside", zipBytes(t, minimalPackage(map[string]string{"xl/_rels/workbook.xml.rels": `<Relationships ` + nsRels + `><Relationship Id="rId1" Type="` + relDoc + `worksheet" Target="../../../etc/passwd"/></Relationships>`})), "sheet \"Data\": its relationship \"rId1\" points outside the package (\"../../etc/passwd\")"},
		{"sst-out-of-range", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2" t="s"><v>7</v></c></row>`)})), "cell Data!A2: a shared string \"7\" that the workbook's table (0 strings) does not have"},
		{"sst-negative", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2" t="s"><v>-1</v></c></row>`)})), "cell Data!A2: a shared string \"-1\" that"},
		{"ref-beyond-rows", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="XFD1048577"><v>1</v></c></row>`)})), "row 2: a cell referenced \"XFD1048577\" in row 2"},
		{"ref-row-zero", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A0"><v>1</v></c></row>`)})), "row 2: a cell referenced \"A0\" in row 2"},
		{"ref-beyond-cols", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="XFE2"><v>1</v></c></row>`)})), "row 2: a cell referenced \"XFE2\" in row 2"},
		{"row-out-of-order", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="3"><c r="A3"><v>1</v></c></row><row r="2"><c r="A2"><v>1</v></c></row>`)})), "row 2: row 2 comes after row 3"},
		{"row-repeated", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2"><v>1</v></c></row><row r="2"><c r="B2"><v>1</v></c></row>`)})), "row 2: row 2 comes after row 2"},
		{"row-beyond", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="1048577"><c r="A1048577"><v>1</v></c></row>`)})), "row 2: a row numbered \"1048577\""},
		{"cell-repeated", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2"><v>1</v></c><c r="A2"><v>2</v></c></row>`)})), "cell Data!A2: a cell out of order in its row"},
		{"style-garbage", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2" s="x1"><v>1</v></c></row>`)})), "cell Data!A2: a cell style \"x1\""},
		{"numfmt-garbage", zipBytes(t, minimalPackage(map[string]string{"xl/styles.xml": `<styleSheet ` + nsMain + `><numFmts><numFmt numFmtId="1e9x" formatCode="yyyy"/></numFmts></styleSheet>`})), "part xl/styles.xml: strconv.ParseInt: parsing \"1e9x\""},
		{"inline-in-number", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2"><is><t>12</t></is></c><c r="B2"><v>1</v></c></row>`)})), "cell Data!A2: a cell of type \"n\" holding an inline string \"12\""},
		{"bad-number", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2"><v>1.2.3</v></c></row>`)})), "cell Data!A2: a number cell holding \"1.2.3\", which is not a number"},
		{"deep-sheet", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2"><v>1</v>` + deep + `</c></row>` + deep)})), ``},
		{"deep-workbook", zipBytes(t, minimalPackage(map[string]string{"xl/workbook.xml": `<workbook ` + nsMain + `>` + deep + `</workbook>`})), "the workbook has no worksheet"},
		{"deep-unclosed", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header) + strings.Repeat("<a>", 100000)})), "sheet \"Data\": XML syntax error on line 1: unexpected EOF"},
		{"huge-attribute", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2" x="` + strings.Repeat("A", 32<<20) + `"><c r="A2"><v>1</v></c></row>`)})), ``},
		{"laughs-sheet", zipBytes(t, minimalPackage(map[string]string{"xl/worksheets/sheet1.xml": laughs + sheetOf(header+`<row r="2"><c r="A2" t="inlineStr"><is><t>&lol3;</t></is></c></row>`)})), "sheet \"Data\": XML syntax error on line 1: invalid character entity &lol3;"},
		{"laughs-sst", zipBytes(t, minimalPackage(map[string]string{"xl/sharedStrings.xml": laughs + `<sst ` + nsMain + `><si><t>&lol3;</t></si></sst>`})), "part xl/sharedStrings.xml: XML syntax error on line 1: invalid character entity &lol3;"},
		{"sst-million-items", zipBytes(t, minimalPackage(map[string]string{"xl/sharedStrings.xml": `<sst ` + nsMain + `>` + strings.Repeat("<si/>", 1<<20-1) + `<si><t>1</t></si></sst>`,
			"xl/worksheets/sheet1.xml": sheetOf(header + `<row r="2"><c r="A2" t="s"><v>1048575</v></c></row>`)})), ``},
		{"many-sheets", zipBytes(t, minimalPackage(map[string]string{"xl/workbook.xml": `<workbook ` + nsMain + `><sheets>` + strings.Repeat(`<sheet name="s" r:id="rId1"/>`, 1<<16+1) + `</sheets></workbook>`})),
			"part xl/workbook.xml: it lists more than 65536 sheets"},
		{"many-styles", zipBytes(t, minimalPackage(map[string]string{"xl/styles.xml": `<styleSheet ` + nsMain + `><cellXfs>` + strings.Repeat(`<xf/>`, 1<<20+1) + `</cellXfs></styleSheet>`})),
			"part xl/styles.xml: it has more than 1048576 cell styles"},
		{"huge-rels", zipBytes(t, minimalPackage(map[string]string{"xl/_rels/workbook.xml.rels": `<Relationships ` + nsRels + `>` + strings.Repeat(`<Relationship/>`, 5<<20) + `</Relationships>`})),
			"part xl/_rels/workbook.xml.rels: it unpacks to 78643300 bytes, more than the 67108864 a relationships part may"},
		{"lying-bomb", lyingBomb(t), "part xl/worksheets/sheet1.xml: it unpacks to more than the 100 bytes its zip entry says (a damaged file or a zip bomb)"},
		{"csv", []byte("x,y\n1,0\n2,1\n"), "not an Excel workbook (.xlsx); give an .xlsx workbook"},
		{"empty", nil, "not an Excel workbook (.xlsx); give an .xlsx workbook"},
		{"truncated", zipBytes(t, minimalPackage(nil))[:300], "not a readable Excel workbook (.xlsx): zip: not a valid zip file"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			p := filepath.Join(t.TempDir(), tc.name+".xlsx")
			if err := os.WriteFile(p, tc.data, 0o644); err != nil {
				t.Fatal(err)
			}
			var m0, m1 runtime.MemStats
			runtime.ReadMemStats(&m0)
			start := time.Now()
			fr, err := Load(p, []Request{{Name: "x"}, {Name: "y"}}, Options{Format: "xlsx"})
			took := time.Since(start)
			runtime.ReadMemStats(&m1)
			// Bounded: in proportion to the package unpacked (encoding/xml
			// allocates for every token, some 40 bytes a byte of XML made
			// of empty elements), in seconds.
			if alloc, bound := m1.TotalAlloc-m0.TotalAlloc, 64*unpacked(tc.data)+64<<20; alloc > bound || took > 20*time.Second {
				t.Errorf("%d MiB allocated (bound %d MiB), %v", alloc>>20, bound>>20, took)
			}
			if tc.want == "" {
				// Well formed, if odd: elements and attributes the reader
				// does not know are skipped, at any depth or size.
				if err != nil || fr.Rows != 1 || fr.Columns[0].Num[0] != 1 {
					t.Errorf("got %v, want the one data row read", err)
				}
				return
			}
			var e *Error
			if err == nil || !errors.As(err, &e) || !strings.HasPrefix(err.Error(), p+": ") || !strings.Contains(err.Error(), tc.want) ||
				strings.Contains(err.Error(), "\n") || strings.Contains(err.Error(), "the reader failed") {
				t.Errorf("got %v, want one line with %q", err, tc.want)
			}
		})
	}
}

// unpacked is the sum of the sizes a zip's entries say they unpack to
// (0 for what is not a zip).
func unpacked(b []byte) uint64 {
	zr, err := zip.NewReader(bytes.NewReader(b), int64(len(b)))
	if err != nil {
		return 0
	}
	var n uint64
	for _, e := range zr.File {
		n += e.UncompressedSize64
	}
	return n
}
