package pgcohort

import (
	"errors"
	"strconv"
	"strings"
)

// The kinds of problems, the values of Error.Kind.
var (
	// ErrSettings is a connection string that cannot be read, or
	// connection settings from the environment or a service file that
	// cannot be used.
	ErrSettings = errors.New("pgcohort: bad connection settings")
	// ErrConnect is a server that cannot be reached or that refuses the
	// connection (a wrong password, an unknown database); Err holds the
	// driver's error.
	ErrConnect = errors.New("pgcohort: cannot connect")
	// ErrQuery is a query the server refuses or that fails while it runs
	// (a syntax error, an unknown column, a parameter value that does not
	// read as its type); Err holds the server's *pgconn.PgError.
	ErrQuery = errors.New("pgcohort: query failed")
	// ErrParam is a placeholder without a value, a parameter the query
	// does not use, or a query text the placeholders cannot be found in
	// (a string constant that never ends).
	ErrParam = errors.New("pgcohort: bad query parameters")
)

// Error is a problem with a database cohort that is not in its values:
// the connection, the query, its parameters. Problems in the values read
// (a column that is not a number, a missing column, no rows) are
// *cohort.Error, like those of a file, named by the query's Name.
type Error struct {
	// Server is the connection without its password, as a URL.
	Server string
	// Query names the query: its file, or "the query" when given inline;
	// empty when the problem is the connection's.
	Query string
	// Line and Column locate the problem in the query's text (1-based,
	// columns in characters), or are 0.
	Line, Column int
	// Msg says what is wrong, on one line.
	Msg string
	// Kind is one of ErrSettings, ErrConnect, ErrQuery and ErrParam;
	// errors.Is(err, Kind) holds.
	Kind error
	// Err is the driver's or the server's error underneath, or nil.
	Err error
}

// Error formats the problem as one line:
//
//	postgresql://audit@db1:5432/clinic: cohort.sql, line 3, column 14: column "agee" does not exist (SQLSTATE 42703)
func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString(e.Server)
	if e.Query != "" {
		b.WriteString(": ")
		b.WriteString(e.Query)
		if e.Line > 0 {
			b.WriteString(", line ")
			b.WriteString(strconv.Itoa(e.Line))
			b.WriteString(", column ")
			b.WriteString(strconv.Itoa(e.Column))
		}
	}
	b.WriteString(": ")
	b.WriteString(oneLine(e.Msg))
	return b.String()
}

// Unwrap returns the error underneath, Err.
func (e *Error) Unwrap() error { return e.Err }

// Is reports whether target is the error's kind.
func (e *Error) Is(target error) bool { return e.Kind != nil && target == e.Kind }

// oneLine joins the lines of s with "; ".
func oneLine(s string) string {
	s = strings.TrimSpace(s)
	if !strings.ContainsAny(s, "\r\n") {
		return s
	}
	f := strings.FieldsFunc(s, func(r rune) bool { return r == '\n' || r == '\r' })
	for i := range f {
		f[i] = strings.TrimSpace(f[i])
	}
	return strings.Join(f, "; ")
}
