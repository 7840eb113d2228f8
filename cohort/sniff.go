package cohort

import (
	"archive/zip"
	"bytes"
	"encoding/binary"
	"fmt"
	"strings"
	"unicode/utf8"
)

// sniffSize is how much of a file's beginning is examined for signs that
// it is not delimited text.
const sniffSize = 8192

// notText returns the message of an ErrFormat error when data, the
// contents of a file given as delimited text, is recognisably something
// else by its first bytes: a spreadsheet, a document, an archive or a
// compressed file, an image, an executable, a database, a columnar
// file, UTF-16 text, or bytes that are mostly not text. It returns ""
// for anything that may be delimited text. It reads at most the first
// sniffSize bytes (and, for a zip archive, its directory), once per
// file.
func notText(data []byte) string {
	if kind, hint := signature(data); kind != "" {
		return "looks like " + kind + ", not delimited text" + hint
	}
	head := data[:min(len(data), sniffSize)]
	if utf16Text(head) {
		return "is UTF-16 text, which is not read: save it as UTF-8"
	}
	ctrl, invalid := 0, 0
	for i := 0; i < len(head); {
		c := head[i]
		if c < utf8.RuneSelf {
			if (c < 0x20 && c != '\t' && c != '\n' && c != '\r' && c != '\f' && c != '\v') || c == 0x7f {
				ctrl++
			}
			i++
			continue
		}
		r, size := utf8.DecodeRune(head[i:])
		if r == utf8.RuneError && size == 1 {
			if !utf8.FullRune(head[i:]) && len(head) < len(data) {
				break // a character cut by the end of the sample
			}
			invalid++
		}
		i += size
	}
	// Text holds no control characters but tab, line ends and page
	// breaks; random and compressed bytes are about 11% control
	// characters, executables and zero-filled files far more.
	if ctrl*32 > len(head) {
		return fmt.Sprintf("looks like a binary file, not delimited text (%d of its first %d bytes are NUL or other control characters)", ctrl, len(head))
	}
	if invalid*2 > len(head) {
		return fmt.Sprintf("is not UTF-8 text (%d of its first %d bytes are not valid UTF-8): save it as UTF-8", invalid, len(head))
	}
	return ""
}

// signature names the kind of file data is by its magic number, with a
// hint of what to do, or returns "" when it has none that it knows.
func signature(d []byte) (kind, hint string) {
	const (
		sheet    = "; export the sheet as CSV"
		unpack   = "; decompress it first"
		archive  = "; extract the file from it first"
		columnar = " (it was read as text because the format was set to csv)"
	)
	has := func(off int, sig string) bool {
		return len(d) >= off+len(sig) && string(d[off:off+len(sig)]) == sig
	}
	switch {
	case has(0, "PK\x03\x04"), has(0, "PK\x05\x06"), has(0, "PK\x07\x08"):
		return zipKind(d)
	case has(0, "\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"):
		// The compound file's directory names its streams in UTF-16; a
		// legacy workbook has one called Workbook (or Book, before
		// Excel 97).
		if bytes.Contains(d, []byte("E\x00n\x00c\x00r\x00y\x00p\x00t\x00e\x00d\x00P\x00a\x00c\x00k\x00a\x00g\x00e\x00")) {
			return "a password-protected (encrypted) Office file", "; save it without a password"
		}
		if bytes.Contains(d, []byte("W\x00o\x00r\x00k\x00b\x00o\x00o\x00k\x00")) || bytes.Contains(d, []byte("B\x00o\x00o\x00k\x00\x00\x00")) {
			return "an Excel workbook (the legacy .xls format)", "; save it as an Excel workbook (.xlsx), which is read, or export the sheet as CSV"
		}
		return "a legacy Microsoft Office file (such as .xls, .doc or .msg)", ""
	case has(0, "PAR1"):
		return "a Parquet file", columnar
	case has(0, "ARROW1"):
		return "an Arrow IPC file", columnar
	case has(0, "\x1f\x8b"):
		return "a gzip-compressed file", unpack
	case has(0, "BZh") && len(d) >= 10 && d[3] >= '1' && d[3] <= '9' && (has(4, "1AY&SY") || has(4, "\x17rE8P\x90")):
		return "a bzip2-compressed file", unpack
	case has(0, "\xfd7zXZ\x00"):
		return "an xz-compressed file", unpack
	case has(0, "\x28\xb5\x2f\xfd"):
		return "a zstd-compressed file", unpack
	case has(0, "7z\xbc\xaf\x27\x1c"):
		return "a 7-Zip archive", archive
	case has(0, "Rar!\x1a\x07"):
		return "a RAR archive", archive
	case has(257, "ustar\x00"), has(257, "ustar  \x00"):
		return "a tar archive", archive
	case has(0, "%PDF-"):
		return "a PDF document", ""
	case has(0, "\x89PNG\r\n\x1a\n"):
		return "a PNG image", ""
	case has(0, "\xff\xd8\xff"):
		return "a JPEG image", ""
	case has(0, "GIF87a"), has(0, "GIF89a"):
		return "a GIF image", ""
	case has(0, "\x7fELF"):
		return "an executable (ELF)", ""
	case has(0, "\xfe\xed\xfa\xce"), has(0, "\xfe\xed\xfa\xcf"), has(0, "\xce\xfa\xed\xfe"), has(0, "\xcf\xfa\xed\xfe"):
		return "an executable (Mach-O)", ""
	case has(0, "\xca\xfe\xba\xbe"):
		return "a Mach-O universal executable or a Java class file", ""
	case has(0, "MZ") && len(d) >= 0x40 && peSignature(d):
		return "a Windows executable or DLL", ""
	case has(0, "SQLite format 3\x00"):
		return "an SQLite database", ""
	}
	t := bytes.TrimLeft(bytes.TrimPrefix(d[:min(len(d), 512)], []byte("\xef\xbb\xbf")), " \t\r\n")
	lower := strings.ToLower(string(t[:min(len(t), 14)]))
	switch {
	case strings.HasPrefix(lower, "<!doctype html"), strings.HasPrefix(lower, "<html"):
		return "a web page (HTML)", ""
	case strings.HasPrefix(lower, "<?xml"):
		if bytes.Contains(d[:min(len(d), sniffSize)], []byte("urn:schemas-microsoft-com:office:spreadsheet")) {
			return "an Excel XML spreadsheet", sheet
		}
		return "an XML file", ""
	}
	return "", ""
}

// peSignature reports whether the DOS header's pointer at 0x3C leads to
// the "PE\0\0" signature of a Windows executable.
func peSignature(d []byte) bool {
	off := int64(binary.LittleEndian.Uint32(d[0x3c:]))
	return off+4 <= int64(len(d)) && string(d[off:off+4]) == "PE\x00\x00"
}

// zipKind tells an Office Open XML workbook, document or presentation
// and an OpenDocument file from another zip archive by the names of its
// entries: from the central directory when it can be read, otherwise
// from the local headers at the start of a damaged or truncated file.
func zipKind(d []byte) (kind, hint string) {
	const sheet = "; export the sheet as CSV"
	names, complete := zipNames(d)
	if len(names) > 0 && names[0] == "mimetype" {
		// OpenDocument stores its media type uncompressed as the first
		// entry.
		if bytes.Contains(d[:min(len(d), 256)], []byte("application/vnd.oasis.opendocument.spreadsheet")) {
			return "an OpenDocument spreadsheet", sheet
		}
		if bytes.Contains(d[:min(len(d), 256)], []byte("application/vnd.oasis.opendocument.")) {
			return "an OpenDocument file", ""
		}
	}
	office := false
	for _, n := range names {
		office = office || n == "[Content_Types].xml"
	}
	if office {
		for _, n := range names {
			switch {
			case strings.HasPrefix(n, "xl/"):
				return "an Excel workbook", " (it was read as text because the format was set to csv)"
			case strings.HasPrefix(n, "word/"):
				return "a Word document", ""
			case strings.HasPrefix(n, "ppt/"):
				return "a PowerPoint presentation", ""
			}
		}
		if !complete {
			return "an Excel workbook or another zip archive", sheet
		}
		return "an Office Open XML file", ""
	}
	if !complete {
		return "a zip archive (perhaps an Excel workbook)", "; extract the file from it, or export the sheet as CSV"
	}
	return "a zip archive", "; extract the file from it first"
}

// zipNames lists the names of a zip archive's entries, and whether the
// list is complete (read from the central directory).
func zipNames(d []byte) ([]string, bool) {
	if r, err := zip.NewReader(bytes.NewReader(d), int64(len(d))); err == nil {
		names := make([]string, len(r.File))
		for i, f := range r.File {
			names[i] = f.Name
		}
		return names, true
	}
	var names []string
	for off := 0; len(names) < 64 && off+30 <= len(d) && string(d[off:off+4]) == "PK\x03\x04"; {
		flags := binary.LittleEndian.Uint16(d[off+6:])
		size := int(binary.LittleEndian.Uint32(d[off+18:]))
		n := int(binary.LittleEndian.Uint16(d[off+26:]))
		m := int(binary.LittleEndian.Uint16(d[off+28:]))
		if off+30+n > len(d) {
			break
		}
		names = append(names, string(d[off+30:off+30+n]))
		if flags&8 != 0 {
			break // the size follows the data, so the next header cannot be found
		}
		off += 30 + n + m + size
	}
	return names, false
}

// utf16Text reports whether head begins with a UTF-16 byte-order mark,
// or looks like ASCII text in UTF-16 without one: a NUL in every other
// byte and text in the rest.
func utf16Text(head []byte) bool {
	if bytes.HasPrefix(head, []byte("\xff\xfe")) || bytes.HasPrefix(head, []byte("\xfe\xff")) {
		return true
	}
	if len(head) < 16 {
		return false
	}
	var nul [2]int
	for i, c := range head {
		if c == 0 {
			nul[i%2]++
		}
	}
	half := len(head) / 2
	for k := range nul {
		// One of the halves all but NUL, the other without NUL.
		if nul[k]*10 >= half*9 && nul[1-k]*10 <= half {
			return true
		}
	}
	return false
}
