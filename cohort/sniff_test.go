package cohort

import (
	"archive/tar"
	"archive/zip"
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"errors"
	"image"
	"image/gif"
	"image/jpeg"
	"image/png"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf16"
)

// zipOf is a zip archive of the named entries (each holding its name);
// a stored entry called mimetype comes first when given.
func zipOf(t *testing.T, mimetype string, names ...string) []byte {
	t.Helper()
	var b bytes.Buffer
	w := zip.NewWriter(&b)
	if mimetype != "" {
		f, err := w.CreateHeader(&zip.FileHeader{Name: "mimetype", Method: zip.Store})
		if err != nil {
			t.Fatal(err)
		}
		f.Write([]byte(mimetype))
	}
	for _, n := range names {
		f, err := w.Create(n)
		if err != nil {
			t.Fatal(err)
		}
		f.Write([]byte("<" + n + "/>"))
	}
	if err := w.Close(); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

func imageOf(t *testing.T, enc func(*bytes.Buffer, image.Image) error) []byte {
	t.Helper()
	var b bytes.Buffer
	if err := enc(&b, image.NewGray(image.Rect(0, 0, 8, 8))); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

const csvText = "age,sex,died\n60,F,1\n70,M,0\n"

// TestNotText: files that are not delimited text are refused by their
// first bytes with one line saying what they look like (ErrFormat), and
// text that merely begins like one of them is read.
func TestNotText(t *testing.T) {
	xlsx := zipOf(t, "", "[Content_Types].xml", "_rels/.rels", "xl/workbook.xml", "xl/worksheets/sheet1.xml")
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write([]byte(csvText))
	zw.Close()
	var tarball bytes.Buffer
	tw := tar.NewWriter(&tarball)
	tw.WriteHeader(&tar.Header{Name: "a.csv", Mode: 0o644, Size: int64(len(csvText))})
	tw.Write([]byte(csvText))
	tw.Close()
	pe := make([]byte, 0x100)
	copy(pe, "MZ")
	binary.LittleEndian.PutUint32(pe[0x3c:], 0x80)
	copy(pe[0x80:], "PE\x00\x00")
	ole := append([]byte("\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"), make([]byte, 1024)...)
	xls := append(append([]byte{}, ole...), []byte("W\x00o\x00r\x00k\x00b\x00o\x00o\x00k\x00\x00\x00")...)
	rng := rand.New(rand.NewPCG(1, 2))
	random := make([]byte, 20000)
	for i := range random {
		random[i] = byte(rng.Uint32())
	}
	utf16le := func(s string, bom bool) []byte {
		var b []byte
		if bom {
			b = []byte{0xff, 0xfe}
		}
		for _, u := range utf16.Encode([]rune(s)) {
			b = binary.LittleEndian.AppendUint16(b, u)
		}
		return b
	}
	// Cyrillic text in the Windows-1251 code page: most bytes above
	// 0x7f and not UTF-8.
	cp1251 := []byte("\xe8\xec\xff;\xe2\xee\xe7\xf0\xe0\xf1\xf2\n\xc8\xe2\xe0\xed\xee\xe2;60\n\xcf\xe5\xf2\xf0\xee\xe2\xe0;70\n")
	seed := func(name string) []byte {
		b, err := os.ReadFile(filepath.Join(seedDir, name))
		if err != nil {
			t.Fatal(err)
		}
		return b
	}
	for _, tc := range []struct {
		name string
		data []byte
		want string // "" when the data must read as text
	}{
		{"xlsx", xlsx, "looks like an Excel workbook, not delimited text (it was read as text because the format was set to csv)"},
		{"xlsx cut short", xlsx[:60], "looks like an Excel workbook or another zip archive, not delimited text; export the sheet as CSV"},
		{"docx", zipOf(t, "", "[Content_Types].xml", "word/document.xml"), "looks like a Word document, not delimited text"},
		{"pptx", zipOf(t, "", "[Content_Types].xml", "ppt/presentation.xml"), "looks like a PowerPoint presentation, not delimited text"},
		{"ods", zipOf(t, "application/vnd.oasis.opendocument.spreadsheet", "content.xml"), "looks like an OpenDocument spreadsheet, not delimited text; export the sheet as CSV"},
		{"odt", zipOf(t, "application/vnd.oasis.opendocument.text", "content.xml"), "looks like an OpenDocument file, not delimited text"},
		{"zip", zipOf(t, "", "later.csv"), "looks like a zip archive, not delimited text; extract the file from it first"},
		{"zip cut short", zipOf(t, "", "later.csv")[:40], "looks like a zip archive (perhaps an Excel workbook), not delimited text; extract the file from it, or export the sheet as CSV"},
		{"xls", xls, "looks like an Excel workbook (the legacy .xls format), not delimited text; save it as an Excel workbook (.xlsx), which is read, or export the sheet as CSV"},
		{"other OLE2", ole, "looks like a legacy Microsoft Office file (such as .xls, .doc or .msg), not delimited text"},
		{"gzip", gz.Bytes(), "looks like a gzip-compressed file, not delimited text; decompress it first"},
		{"bzip2", []byte("BZh91AY&SY\x00\x01\x02"), "looks like a bzip2-compressed file, not delimited text; decompress it first"},
		{"xz", []byte("\xfd7zXZ\x00\x00\x04"), "looks like an xz-compressed file, not delimited text; decompress it first"},
		{"zstd", []byte("\x28\xb5\x2f\xfd\x00\x58"), "looks like a zstd-compressed file, not delimited text; decompress it first"},
		{"7z", []byte("7z\xbc\xaf\x27\x1c\x00\x04"), "looks like a 7-Zip archive, not delimited text; extract the file from it first"},
		{"rar", []byte("Rar!\x1a\x07\x01\x00"), "looks like a RAR archive, not delimited text; extract the file from it first"},
		{"tar", tarball.Bytes(), "looks like a tar archive, not delimited text; extract the file from it first"},
		{"pdf", []byte("%PDF-1.7\n%\xe2\xe3\xcf\xd3\n"), "looks like a PDF document, not delimited text"},
		{"png", imageOf(t, func(b *bytes.Buffer, m image.Image) error { return png.Encode(b, m) }), "looks like a PNG image, not delimited text"},
		{"jpeg", imageOf(t, func(b *bytes.Buffer, m image.Image) error { return jpeg.Encode(b, m, nil) }), "looks like a JPEG image, not delimited text"},
		{"gif", imageOf(t, func(b *bytes.Buffer, m image.Image) error { return gif.Encode(b, m, nil) }), "looks like a GIF image, not delimited text"},
		{"elf", []byte("\x7fELF\x02\x01\x01\x00\x00\x00"), "looks like an executable (ELF), not delimited text"},
		{"mach-o", []byte("\xcf\xfa\xed\xfe\x07\x00\x00\x01"), "looks like an executable (Mach-O), not delimited text"},
		{"universal", []byte("\xca\xfe\xba\xbe\x00\x00\x00\x02"), "looks like a Mach-O universal executable or a Java class file, not delimited text"},
		{"pe", pe, "looks like a Windows executable or DLL, not delimited text"},
		{"sqlite", []byte("SQLite format 3\x00\x10\x00\x01\x01"), "looks like an SQLite database, not delimited text"},
		{"parquet read as csv", seed("small.parquet"), "looks like a Parquet file, not delimited text (it was read as text because the format was set to csv)"},
		{"arrow read as csv", seed("small.arrow"), "looks like an Arrow IPC file, not delimited text (it was read as text because the format was set to csv)"},
		{"html", []byte("\n  <!DOCTYPE html>\n<html><body>Sign in</body></html>\n"), "looks like a web page (HTML), not delimited text"},
		{"xml spreadsheet", []byte(`<?xml version="1.0"?><Workbook xmlns="urn:schemas-microsoft-com:office:spreadsheet"></Workbook>`), "looks like an Excel XML spreadsheet, not delimited text; export the sheet as CSV"},
		{"xml", []byte(`<?xml version="1.0"?><data/>`), "looks like an XML file, not delimited text"},
		{"utf-16 with BOM", utf16le(csvText, true), "is UTF-16 text, which is not read: save it as UTF-8"},
		{"utf-16 without BOM", utf16le(csvText, false), "is UTF-16 text, which is not read: save it as UTF-8"},
		{"zeros", make([]byte, 5000), "looks like a binary file, not delimited text (5000 of its first 5000 bytes are NUL or other control characters)"},
		{"random bytes", random, "looks like a binary file, not delimited text (884 of its first 8192 bytes are NUL or other control characters)"},
		{"Windows-1251 text", cp1251, "is not UTF-8 text (23 of its first 33 bytes are not valid UTF-8): save it as UTF-8"},
		// Text is read, whatever its first bytes.
		{"csv", []byte(csvText), ""},
		{"bom", []byte("\xef\xbb\xbf" + csvText), ""},
		{"Latin-1 accents", []byte("age,sex,died,name\n60,F,1,Ren\xe9e\n70,M,0,Jos\xe9\n"), ""},
		{"header starting MZ", []byte("MZ,age,sex,died\n1,60,F,1\n2,70,M,0\n"), ""},
		{"header starting PK", []byte("PK,age,sex,died\n1,60,F,1\n2,70,M,0\n"), ""},
		{"header starting BZh", []byte("BZh,age,sex,died\n1,60,F,1\n2,70,M,0\n"), ""},
		{"page break", []byte("age,sex,died\n60,F,1\n\f70,M,0\n"), ""},
		{"UTF-8 names", []byte("возраст,sex,died,имя\n60,F,1,Иван\n70,M,0,Пётр\n"), ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("t.csv", tc.data, nil, Options{})
			if tc.want == "" {
				if err != nil {
					t.Fatalf("text refused: %v", err)
				}
				return
			}
			var ce *Error
			if !errors.As(err, &ce) || !errors.Is(err, ErrFormat) {
				t.Fatalf("got %.200v, want an ErrFormat *Error", err)
			}
			if got := err.Error(); got != "t.csv: "+tc.want {
				t.Errorf("got  %s\nwant t.csv: %s", got, tc.want)
			}
		})
	}
}

// TestNotTextLoad: Load takes a workbook for one by its content,
// whatever its name, and still reads Parquet and Arrow files by their
// first bytes.
func TestNotTextLoad(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "extract.csv")
	if err := os.WriteFile(path, zipOf(t, "", "[Content_Types].xml", "xl/workbook.xml"), 0o644); err != nil {
		t.Fatal(err)
	}
	// Read as a workbook, which this one is not inside; read as text, it
	// is refused by its entries.
	for _, opt := range []Options{{}, {KeepRecords: true}} {
		_, err := Load(path, num("age"), opt)
		if want := path + ": not a readable Excel workbook (.xlsx): "; err == nil || !strings.HasPrefix(err.Error(), want) || !errors.Is(err, ErrFormat) {
			t.Errorf("%+v: got %v, want %s…", opt, err, want)
		}
	}
	_, err := Load(path, num("age"), Options{Format: "csv"})
	if want := path + ": looks like an Excel workbook, not delimited text (it was read as text because the format was set to csv)"; err == nil || err.Error() != want {
		t.Errorf("as csv: got %v, want %s", err, want)
	}
	for _, p := range []string{"small.parquet", "small.arrow"} {
		if _, err := Load(filepath.Join(seedDir, p), fuzzReqs, Options{}); err != nil {
			t.Errorf("%s: %v", p, err)
		}
		_, err := Load(filepath.Join(seedDir, p), fuzzReqs, Options{Format: "csv"})
		if err == nil || !strings.Contains(err.Error(), "not delimited text (it was read as text because the format was set to csv)") {
			t.Errorf("%s as csv: %v", p, err)
		}
	}
}
