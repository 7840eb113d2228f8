package main

import (
	"strconv"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/validate"
)

// subgroupsFlag holds the values of --subgroups as typed, one per use of
// the flag, for parseSubgroups.
type subgroupsFlag struct{ values *[]string }

func (f subgroupsFlag) String() string { return strings.Join(*f.values, " ") }

// Set keeps one use of the flag.
func (f subgroupsFlag) Set(s string) error {
	*f.values = append(*f.values, s)
	return nil
}

// Type names the flag's value in the help.
func (f subgroupsFlag) Type() string { return "columns" }

// parseSubgroups reads the values of --subgroups. Each is a
// comma-separated list of columns: a categorical column by its name, a
// numeric column cut into bands as COLUMN:CUT,CUT,… (the numbers after
// the colon, up to the next name, are its cut points) or COLUMN:qK (K
// quantile bands). A token that starts like a number (a digit, a sign or
// a point) continues the cut points of the banded column before it, so a
// categorical column whose name starts so goes before the banded ones or
// in a --subgroups of its own.
func parseSubgroups(values []string) (cats []string, bands []validate.Banding, err error) {
	for _, value := range values {
		cur := -1 // the banding whose cut points are being read
		bad := func(format string, args ...any) error {
			return usagef("--subgroups %s: "+format, append([]any{cohort.Quote(value)}, args...)...)
		}
		for _, tok := range strings.Split(value, ",") {
			tok = strings.TrimSpace(tok)
			name, spec, banded := strings.Cut(tok, ":")
			name, spec = strings.TrimSpace(name), strings.TrimSpace(spec)
			switch {
			case tok == "":
				return nil, nil, bad("a column name is empty")
			case !banded && cur >= 0 && numberLike(tok):
				if bands[cur].Quantiles > 0 {
					return nil, nil, bad("%s takes no cut points after q%d", cohort.Quote(bands[cur].Column), bands[cur].Quantiles)
				}
				c, err := cutPoint(tok)
				if err != nil {
					return nil, nil, bad("cut point %s is not a number", cohort.Quote(tok))
				}
				bands[cur].Cuts = append(bands[cur].Cuts, c)
			case !banded:
				cats, cur = append(cats, tok), -1
			case name == "":
				return nil, nil, bad("give the column before the colon, such as age:65,75")
			case spec == "":
				return nil, nil, bad("give %s's cut points (such as %s:65,75) or quantile bands (%s:q4) after the colon", cohort.Quote(name), name, name)
			case spec[0] == 'q' || spec[0] == 'Q':
				k, err := strconv.Atoi(spec[1:])
				if err != nil || k < 2 || k > validate.MaxQuantileBands {
					return nil, nil, bad("%s: give qK with K from 2 to %d quantile bands, such as q4 for quartiles", cohort.Quote(spec), validate.MaxQuantileBands)
				}
				bands, cur = append(bands, validate.Banding{Column: name, Quantiles: k}), len(bands)
			default:
				c, err := cutPoint(spec)
				if err != nil {
					return nil, nil, bad("cut point %s is not a number", cohort.Quote(spec))
				}
				bands, cur = append(bands, validate.Banding{Column: name, Cuts: []float64{c}}), len(bands)
			}
		}
		for _, b := range bands {
			if err := b.Check(); err != nil {
				return nil, nil, bad("%v", err)
			}
		}
	}
	return cats, bands, nil
}

// numberLike reports whether a token starts as a number does.
func numberLike(tok string) bool {
	c := tok[0]
	return c >= '0' && c <= '9' || c == '-' || c == '+' || c == '.'
}

// cutPoint reads a finite cut point.
func cutPoint(s string) (float64, error) {
	c, err := strconv.ParseFloat(s, 64)
	if err == nil && (c != c || c-c != 0) {
		err = strconv.ErrRange
	}
	return c, err
}
