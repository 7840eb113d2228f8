// Package cohort reads patient extracts (CSV and TSV files with a header
// row) into typed columns: numeric columns as float64 with NaN for a
// missing value, categorical columns as integer codes into a level table.
//
// Every problem with the input is reported as an *Error that names the
// file and, where it applies, the line, the column and the offending
// value, so that a command-line tool can print one precise line.
package cohort

import (
	"fmt"
	"strconv"
	"strings"
)

// Error describes bad input in a cohort file. Line is the 1-based line of
// the file the problem starts on (the header is line 1), or 0 when the
// problem is not tied to one line. Column is the header name involved, or
// empty. Value is the offending field as it appears in the file, or empty.
type Error struct {
	File   string
	Line   int
	Column string
	Value  string
	// HasValue reports whether Value is part of the message (an empty
	// field is a value too).
	HasValue bool
	// Row says that Line counts data rows (1-based), as in a columnar
	// file, rather than text lines.
	Row bool
	Msg string
}

// Error formats the problem as one line:
//
//	dev.csv: line 12, column "age": value "abc": not a number
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.File)
	sep := ": "
	if e.Line > 0 {
		b.WriteString(sep)
		if e.Row {
			b.WriteString("row ")
		} else {
			b.WriteString("line ")
		}
		b.WriteString(strconv.Itoa(e.Line))
		sep = ", "
	}
	if e.Column != "" {
		b.WriteString(sep)
		fmt.Fprintf(&b, "column %q", e.Column)
	}
	if e.HasValue {
		fmt.Fprintf(&b, ": value %q", e.Value)
	}
	b.WriteString(": ")
	b.WriteString(e.Msg)
	return b.String()
}
