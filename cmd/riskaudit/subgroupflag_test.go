package main

import (
	"strings"
	"testing"
)

// TestParseSubgroups: the --subgroups grammar, one value per use of the
// flag.
func TestParseSubgroups(t *testing.T) {
	for _, c := range []struct {
		in    []string
		cats  string // the categorical columns, joined by spaces
		bands string // the bandings as Banding.String writes them
		err   string
	}{
		{[]string{"sex,site"}, "sex site", "", ""},
		{[]string{"age:65,75"}, "", "age:65,75", ""},
		{[]string{"sex,age:65,75,bmi:q4,site"}, "sex site", "age:65,75 bmi:q4", ""},
		{[]string{"age:65,75", "age:q4"}, "", "age:65,75 age:q4", ""},
		{[]string{" age : 65 , 75.5 "}, "", "age:65,75.5", ""}, // spaces around names and numbers are trimmed
		{[]string{"bmi:Q10"}, "", "bmi:q10", ""},
		{[]string{"x:-1.5,0,+2e3"}, "", "x:-1.5,0,2000", ""},
		// A name that starts like a number after a banded column continues
		// its cut points; in its own flag it is a column.
		{[]string{"age:65", "2024"}, "2024", "age:65", ""},
		{[]string{"age:65,75,7x"}, "", "", `--subgroups "age:65,75,7x": cut point "7x" is not a number`},
		{[]string{"age:x"}, "", "", `--subgroups "age:x": cut point "x" is not a number`},
		{[]string{"age:75,65"}, "", "", `--subgroups "age:75,65": subgroup column "age": cut points must increase, but 65 follows 75`},
		{[]string{"age:65,65"}, "", "", `cut points must increase, but 65 follows 65`},
		{[]string{"age:inf"}, "", "", `cut point "inf" is not a number`},
		{[]string{"age:"}, "", "", `give "age"'s cut points (such as age:65,75) or quantile bands (age:q4) after the colon`},
		{[]string{":65"}, "", "", "give the column before the colon"},
		{[]string{"age:q1"}, "", "", `"q1": give qK with K from 2 to 20 quantile bands`},
		{[]string{"age:q4x"}, "", "", `"q4x": give qK`},
		{[]string{"age:q4,65"}, "", "", `"age" takes no cut points after q4`},
		{[]string{"sex,,site"}, "", "", "a column name is empty"},
	} {
		cats, bands, err := parseSubgroups(c.in)
		if c.err != "" {
			if err == nil || !strings.Contains(err.Error(), c.err) || strings.Contains(err.Error(), "\n") {
				t.Errorf("%q: error %v, want %q", c.in, err, c.err)
			}
			continue
		}
		if err != nil {
			t.Errorf("%q: %v", c.in, err)
			continue
		}
		var bs []string
		for _, b := range bands {
			bs = append(bs, b.String())
		}
		if got := strings.Join(cats, " "); got != c.cats {
			t.Errorf("%q: columns %q, want %q", c.in, got, c.cats)
		}
		if got := strings.Join(bs, " "); got != c.bands {
			t.Errorf("%q: bands %q, want %q", c.in, got, c.bands)
		}
	}
}
