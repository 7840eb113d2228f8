package cohort

import (
	"strconv"
	"strings"
	"unicode/utf8"
)

// Limits on what an error message repeats of the input, so that a
// 10 MB field or a header of thousands of names gives one readable line.
const (
	// EchoChars is the most characters of one value a message repeats;
	// a longer value is cut with "…" and its length is stated.
	EchoChars = 60
	// EchoItems is the most items of a list a message repeats; a longer
	// list ends "… and N more".
	EchoItems = 10
)

// clip returns s cut to EchoChars characters followed by "…", and its
// length in characters, or s itself and -1 when it is short enough.
// Invalid UTF-8 bytes count as one character each.
func clip(s string) (string, int) {
	if len(s) <= EchoChars {
		return s, -1
	}
	cut, n := 0, 0
	for i := 0; i < len(s); n++ {
		if n == EchoChars {
			cut = i
		}
		_, size := utf8.DecodeRuneInString(s[i:])
		i += size
	}
	if n <= EchoChars {
		return s, -1
	}
	return s[:cut] + "…", n
}

// Quote returns s quoted as %q quotes it, for an error message. A value
// longer than EchoChars characters is cut with "…" inside the quotes and
// followed by its length:
//
//	"xxxxxxxx…" (10485760 characters)
func Quote(s string) string {
	c, n := clip(s)
	if n < 0 {
		return strconv.Quote(s)
	}
	return strconv.Quote(c) + " (" + strconv.Itoa(n) + " characters)"
}

// Clip returns s for an error message without quotes: s itself, or,
// when it is longer than EchoChars characters, its beginning with "…"
// and its length.
func Clip(s string) string {
	c, n := clip(s)
	if n < 0 {
		return s
	}
	return c + " (" + strconv.Itoa(n) + " characters)"
}

// QuoteList returns items quoted (by Quote) and joined by ", ", for an
// error message: at most EchoItems of them, then "… and N more".
func QuoteList(items []string) string { return list(items, Quote) }

// ClipList is QuoteList without quotes: each item as Clip gives it.
func ClipList(items []string) string { return list(items, Clip) }

func list(items []string, f func(string) string) string {
	var b strings.Builder
	for i, s := range items {
		if i == EchoItems {
			b.WriteString(", … and ")
			b.WriteString(strconv.Itoa(len(items) - EchoItems))
			b.WriteString(" more")
			break
		}
		if i > 0 {
			b.WriteString(", ")
		}
		b.WriteString(f(s))
	}
	return b.String()
}
