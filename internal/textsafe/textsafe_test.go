package textsafe

import (
	"encoding/xml"
	"testing"
	"unicode/utf8"
)

// TestXML: clean text is returned as it is (the same slice); invalid
// UTF-8 and the characters XML 1.0 forbids become U+FFFD, and the result
// parses with encoding/xml, the outside check.
func TestXML(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"<t>Ostbrook North — été</t>", "<t>Ostbrook North — été</t>"},
		{"<t>tab\tand\nlines\r</t>", "<t>tab\tand\nlines\r</t>"},
		{"<t>bad \xff byte</t>", "<t>bad \uFFFD byte</t>"},
		{"<t>cut \xc3</t>", "<t>cut \uFFFD</t>"},
		{"<t>nul \x00 and \x01</t>", "<t>nul \uFFFD and \uFFFD</t>"},
		{"<t>é\x02</t>", "<t>é\uFFFD</t>"}, // a control after non-ASCII text
		{"<t>\uFFFF</t>", "<t>\uFFFD</t>"},
	} {
		got := XML([]byte(tc.in))
		if string(got) != tc.want {
			t.Errorf("%q: got %q, want %q", tc.in, got, tc.want)
		}
		if !utf8.Valid(got) {
			t.Errorf("%q: result not UTF-8", tc.in)
		}
		var v struct {
			S string `xml:",chardata"`
		}
		if err := xml.Unmarshal(got, &v); err != nil {
			t.Errorf("%q: does not parse as XML: %v", tc.in, err)
		}
	}
	clean := []byte("<t>fine</t>")
	if got := XML(clean); &got[0] != &clean[0] {
		t.Error("clean text was copied")
	}
}
