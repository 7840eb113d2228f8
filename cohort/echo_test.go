package cohort

import (
	"fmt"
	"strings"
	"testing"
)

func TestQuoteAndClip(t *testing.T) {
	long := strings.Repeat("x", 10_000_000)
	for _, tc := range []struct{ in, quote, clip string }{
		{"", `""`, ""},
		{"age", `"age"`, "age"},
		{strings.Repeat("a", 60), `"` + strings.Repeat("a", 60) + `"`, strings.Repeat("a", 60)},
		{strings.Repeat("a", 61), `"` + strings.Repeat("a", 60) + `…" (61 characters)`, strings.Repeat("a", 60) + "… (61 characters)"},
		{long, `"` + long[:60] + `…" (10000000 characters)`, long[:60] + "… (10000000 characters)"},
		// Characters, not bytes: 100 two-byte letters are cut after 60.
		{strings.Repeat("é", 100), `"` + strings.Repeat("é", 60) + `…" (100 characters)`, strings.Repeat("é", 60) + "… (100 characters)"},
		{strings.Repeat("é", 60), `"` + strings.Repeat("é", 60) + `"`, strings.Repeat("é", 60)},
		// Control bytes are escaped after cutting, as %q escapes them.
		{strings.Repeat("\x00", 70), `"` + strings.Repeat(`\x00`, 60) + `…" (70 characters)`, strings.Repeat("\x00", 60) + "… (70 characters)"},
	} {
		if got := Quote(tc.in); got != tc.quote {
			t.Errorf("Quote(%.20q…) = %.100s, want %.100s", tc.in, got, tc.quote)
		}
		if got := Clip(tc.in); got != tc.clip {
			t.Errorf("Clip(%.20q…) = %.100s, want %.100s", tc.in, got, tc.clip)
		}
		if len(tc.in) <= 60 && Quote(tc.in) != fmt.Sprintf("%q", tc.in) {
			t.Errorf("Quote(%q) differs from %%q", tc.in)
		}
	}
}

func TestQuoteList(t *testing.T) {
	names := func(n int) []string {
		out := make([]string, n)
		for i := range out {
			out[i] = fmt.Sprintf("c%d", i)
		}
		return out
	}
	for _, tc := range []struct {
		in          []string
		quoted, raw string
	}{
		{nil, "", ""},
		{[]string{"F", "M"}, `"F", "M"`, "F, M"},
		{names(10), `"c0", "c1", "c2", "c3", "c4", "c5", "c6", "c7", "c8", "c9"`, "c0, c1, c2, c3, c4, c5, c6, c7, c8, c9"},
		{names(11), `"c0", "c1", "c2", "c3", "c4", "c5", "c6", "c7", "c8", "c9", … and 1 more`, "c0, c1, c2, c3, c4, c5, c6, c7, c8, c9, … and 1 more"},
		{names(600), `"c0", "c1", "c2", "c3", "c4", "c5", "c6", "c7", "c8", "c9", … and 590 more`, "c0, c1, c2, c3, c4, c5, c6, c7, c8, c9, … and 590 more"},
		{[]string{strings.Repeat("y", 100)}, `"` + strings.Repeat("y", 60) + `…" (100 characters)`, strings.Repeat("y", 60) + "… (100 characters)"},
	} {
		if got := QuoteList(tc.in); got != tc.quoted {
			t.Errorf("QuoteList(%d items) = %s, want %s", len(tc.in), got, tc.quoted)
		}
		if got := ClipList(tc.in); got != tc.raw {
			t.Errorf("ClipList(%d items) = %s, want %s", len(tc.in), got, tc.raw)
		}
	}
}

// TestErrorsEchoLittle: an oversized field, an oversized header name and
// a header of hundreds of names give messages of a line's length, and
// ordinary messages are unchanged.
func TestErrorsEchoLittle(t *testing.T) {
	huge := strings.Repeat("9x", 5_000_000)
	wide := make([]string, 600)
	for i := range wide {
		wide[i] = fmt.Sprintf("c%d", i)
	}
	for _, tc := range []struct {
		name, data string
		reqs       []Request
		want       string
	}{
		{"ordinary value", "age\n6o\n", num("age"), `t.csv: line 2, column "age": value "6o": not a number`},
		{"10 MB field", "age\n" + huge + "\n", num("age"),
			`t.csv: line 2, column "age": value "` + huge[:60] + `…" (10000000 characters): not a number`},
		{"long column name", strings.Repeat("h", 200) + ",age,h\n1,2,2\n", []Request{{Name: "h", Kind: Numeric}, {Name: strings.Repeat("h", 200), Kind: Numeric}, {Name: "age", Kind: Numeric}},
			""},
		{"long column name in an error", strings.Repeat("h", 200) + "\nx\n", []Request{{Name: strings.Repeat("h", 200), Kind: Numeric}},
			`t.csv: line 2, column "` + strings.Repeat("h", 60) + `…" (200 characters): value "x": not a number`},
		{"ordinary header", "Age_,sex\n1,F\n", num("age"), `t.csv: column "age": no such column (did you mean "Age_"?); columns present: "Age_", "sex"`},
		{"600 columns", strings.Join(wide, ",") + "\n" + strings.Repeat("1,", 599) + "1\n", num("age"),
			`t.csv: column "age": no such column; columns present: "c0", "c1", "c2", "c3", "c4", "c5", "c6", "c7", "c8", "c9", … and 590 more`},
		{"one huge header name", huge + "\n1\n", num("age"), `t.csv: column "age": no such column; columns present: "` + huge[:60] + `…" (10000000 characters)`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			_, err := Parse("t.csv", []byte(tc.data), tc.reqs, Options{})
			if tc.want == "" {
				if err != nil {
					t.Fatal(err)
				}
				return
			}
			if err == nil || err.Error() != tc.want {
				t.Errorf("got  %.300v\nwant %.300s", err, tc.want)
			}
		})
	}
}
