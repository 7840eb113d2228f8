// Package textsafe makes the bytes of a text output (SVG, HTML,
// Markdown) well formed whatever a cohort's values hold: a level, a
// column name or a path read from a file may carry invalid UTF-8 or
// control characters, which an XML parser refuses (XML 1.0 allows no
// C0 control but tab, line feed and carriage return, even escaped) and
// which make a Markdown or HTML file invalid UTF-8.
package textsafe

import "unicode/utf8"

// Replacement is what each bad byte sequence or character becomes:
// U+FFFD, the Unicode replacement character.
const Replacement = "\uFFFD"

// XML returns b itself when it is valid UTF-8 without characters XML
// 1.0 forbids, otherwise a copy with every invalid UTF-8 sequence and
// every forbidden character (C0 controls but tab, line feed and carriage
// return; U+FFFE and U+FFFF) replaced by U+FFFD. The check is one pass
// and allocates nothing when b is clean, as outputs almost always are.
func XML(b []byte) []byte {
	if clean(b) {
		return b
	}
	out := make([]byte, 0, len(b)+16)
	for i := 0; i < len(b); {
		r, size := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && size <= 1 || forbidden(r) {
			out = append(out, Replacement...)
		} else {
			out = append(out, b[i:i+size]...)
		}
		i += size
	}
	return out
}

// clean reports whether b needs no replacement.
func clean(b []byte) bool {
	for i := 0; i < len(b); {
		if c := b[i]; c < utf8.RuneSelf {
			if forbidden(rune(c)) {
				return false
			}
			i++
			continue
		}
		r, size := utf8.DecodeRune(b[i:])
		if r == utf8.RuneError && size <= 1 || forbidden(r) {
			return false
		}
		i += size
	}
	return true
}

// forbidden reports whether XML 1.0 refuses r.
func forbidden(r rune) bool {
	return r < 0x20 && r != '\t' && r != '\n' && r != '\r' || r == 0xFFFE || r == 0xFFFF
}
