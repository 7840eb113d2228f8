package cohort

// QueryInfo describes the rows of a database query as they were read,
// for an audit's provenance: where they came from and a SHA-256 that
// proves which rows they were. It never holds a password.
type QueryInfo struct {
	// System names the database system ("postgresql").
	System string `json:"system"`
	// Server is the host and port (or the socket folder and port), the
	// Database and User those the connection used, and ServerVersion
	// what the server reported.
	Server        string `json:"server"`
	Database      string `json:"database"`
	User          string `json:"user"`
	ServerVersion string `json:"server_version"`
	// SQL is the query text as given; File the file it was read from
	// ("" for a query given inline).
	SQL  string `json:"sql"`
	File string `json:"file,omitempty"`
	// Parameters are the values bound to the query's placeholders, in
	// order of first use.
	Parameters []QueryParam `json:"parameters"`
	// Columns are the result's columns with their database types.
	Columns []QueryColumn `json:"columns"`
	// Rows counts the rows read.
	Rows int `json:"rows"`
	// RowsSHA256 is the hex SHA-256 of the rows in the serialisation
	// that Serialisation names.
	RowsSHA256    string `json:"rows_sha256"`
	Serialisation string `json:"serialisation"`
	// ReadOnly says that the rows were read in a read-only transaction.
	ReadOnly bool `json:"read_only"`
}

// QueryParam is one bound parameter of a query: its name and its value
// as text, as given.
type QueryParam struct {
	Name  string `json:"name"`
	Value string `json:"value"`
}

// QueryColumn is one column of a query's result and its type as the
// database names it.
type QueryColumn struct {
	Name string `json:"name"`
	Type string `json:"type"`
}

// NewFrame makes the frame of rows read from elsewhere than a file,
// such as a database query: rows are numbered from 1 (Frame.Line gives
// the row, RowNumbered is set) and file is the name messages give the
// data. Every column must hold rows values; query, when not nil,
// describes where the rows came from.
func NewFrame(file string, header []string, rows int, cols []*Column, query *QueryInfo) *Frame {
	return &Frame{File: file, Header: header, Rows: rows, RowNumbered: true, Columns: cols, Query: query}
}

// ParseNumber reads a plain decimal number as a numeric column of a
// delimited file does: an optional sign, digits with at most one decimal
// mark ('.', or ',' with decimalComma) and an optional exponent; no
// infinities, NaN or hexadecimal. The result is correctly rounded.
func ParseNumber(b []byte, decimalComma bool) (float64, bool) {
	if decimalComma {
		return parseFloat(b, ',')
	}
	return parseFloat(b, '.')
}

// MissingColumnMessage is the message of a requested column that the
// data do not have, with what it was asked for (Request.For), the
// closest name and the names present.
func MissingColumnMessage(r Request, header []string) string {
	return missingColumnMsg(r, header)
}
