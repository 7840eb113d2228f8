// Package pathtext writes a file path into a one-line message so that
// the reader can tell where the path ends: a path with a space, a colon,
// a quote, a control character or invalid UTF-8 is quoted as a Go
// string ("my extract.csv"), any other path is written as it is
// (dev.csv), the way compilers and linters name files.
package pathtext

import (
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Path returns p as a message shows it: quoted when a space, a colon, a
// quote, a backslash, a non-printing character or invalid UTF-8 would
// make the message ambiguous, else unchanged. The empty path is "".
func Path(p string) string {
	if p == "" || !utf8.ValidString(p) || strings.ContainsAny(p, " :\"'\\") || strings.IndexFunc(p, notPrint) >= 0 {
		return strconv.Quote(p)
	}
	return p
}

func notPrint(r rune) bool { return !unicode.IsPrint(r) }
