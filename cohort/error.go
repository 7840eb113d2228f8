// Package cohort reads patient extracts (CSV and TSV files with a header
// row) into typed columns: numeric columns as float64 with NaN for a
// missing value, categorical columns as integer codes into a level table.
//
// Every problem with the input is reported as an *Error that names the
// file and, where it applies, the line, the column and the offending
// value, so that a command-line tool can print one precise line.
//
// # Errors
//
// An *Error is built as encoding/csv builds its ParseError: the fields
// locate the problem, Kind names what kind of problem it is and Err keeps
// the error underneath, if any. Kind is one of the sentinel errors below
// and errors.Is(err, Kind) holds through the Error's Is method; Unwrap
// returns Err, so that errors.Is(err, fs.ErrNotExist) holds for a file
// that does not exist and errors.As reaches the operating system's
// *fs.PathError or the Arrow library's error. The message (Msg) is the
// same as it would be without either. Package model reports the problems
// it finds in cohort data (a missing value under the fail policy, an
// outcome value that is neither event nor non-event, a level a frozen
// model does not know, a value outside a transform's domain) as an
// *Error with one of the kinds below. An error that is not an *Error
// (an unknown format name, a column requested as two kinds) is a mistake
// of the caller, not of the file.
package cohort

import (
	"errors"
	"strconv"
	"strings"

	"github.com/riskaudit/riskaudit/internal/pathtext"
)

// The kinds of bad input, the values of Error.Kind. Each *Error this
// package returns has exactly one of them.
var (
	// ErrRead is a file that cannot be read at all: it does not exist,
	// it may not be read, it is a folder. Err holds the operating
	// system's error.
	ErrRead = errors.New("cohort: cannot read file")
	// ErrFormat is a file that is not well formed in its format: a
	// quoted field that never ends or is followed by other text, a
	// record with more or fewer fields than the header, a Parquet or
	// Arrow file its reader refuses (Err holds the reader's error), a
	// nested column, a columnar file where text rows are needed, a
	// columnar file that cannot be written back with scored columns, or
	// a file read as delimited text that is recognisably something else
	// (a spreadsheet, an archive, an image, UTF-16 text, binary bytes).
	ErrFormat = errors.New("cohort: malformed file")
	// ErrEmpty is a file without data rows: empty, blank or a header
	// alone.
	ErrEmpty = errors.New("cohort: no data rows")
	// ErrDuplicateColumn is a header that names one column twice
	// (perhaps after renaming).
	ErrDuplicateColumn = errors.New("cohort: duplicate column name")
	// ErrNoColumn is a requested column that the file does not have.
	ErrNoColumn = errors.New("cohort: no such column")
	// ErrNotNumber is a value of a numeric column that does not read as
	// a finite number and is not a missing-value marker (NaN included
	// when Request.NaNIsError), or a columnar file's column whose type
	// holds no numbers.
	ErrNotNumber = errors.New("cohort: not a number")
	// ErrMissing is a missing value where none may be (the missing-value
	// policy fail), or missing values that leave no row complete.
	ErrMissing = errors.New("cohort: missing value")
	// ErrOutcome is an outcome column that cannot be used: a value that
	// is neither the event nor the non-event, or no events or no
	// non-events at all.
	ErrOutcome = errors.New("cohort: unusable outcome")
	// ErrLevel is a level of a categorical column that the frozen model
	// does not know.
	ErrLevel = errors.New("cohort: unknown level")
	// ErrDomain is a value outside the domain of its term's transform,
	// such as a log of a value that is not positive, or a predicted risk
	// outside [0, 1].
	ErrDomain = errors.New("cohort: value outside the transform's domain")
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
	// Cell is the workbook cell of the problem, with its sheet
	// ("Sheet1!D17", "'Visit data'!B4"), or empty; when set, the message
	// names it in place of Line.
	Cell string
	Msg  string
	// Kind is the kind of problem, one of the sentinel errors of this
	// package (ErrNotNumber, ErrNoColumn, ...), or nil for an error of no
	// listed kind. errors.Is(err, Kind) holds.
	Kind error
	// Err is the underlying error (the *fs.PathError of a file that
	// cannot be opened, the Arrow library's error on a damaged file), or
	// nil when the problem was found in the data. Its text is already
	// part of Msg where the message shows it.
	Err error
}

// Error formats the problem as one line:
//
//	dev.csv: line 12, column "age": value "abc": not a number
//	dev.xlsx: cell Sheet1!D12, column "age": value "abc": not a number
//
// A column name or value longer than EchoChars characters is cut, with
// its length stated (see Quote); Msg is written as it is.
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(pathtext.Path(e.File))
	sep := ": "
	if e.Cell != "" {
		b.WriteString(sep)
		b.WriteString("cell ")
		b.WriteString(e.Cell)
		sep = ", "
	} else if e.Line > 0 {
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
		b.WriteString("column ")
		b.WriteString(Quote(e.Column))
	}
	if e.HasValue {
		b.WriteString(": value ")
		b.WriteString(Quote(e.Value))
	}
	b.WriteString(": ")
	b.WriteString(e.Msg)
	return b.String()
}

// Unwrap returns the underlying error, Err.
func (e *Error) Unwrap() error { return e.Err }

// Is reports whether target is the error's kind, so that
// errors.Is(err, ErrNotNumber) holds for a value that is not a number.
func (e *Error) Is(target error) bool { return e.Kind != nil && target == e.Kind }
