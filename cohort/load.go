package cohort

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"sort"
	"strings"
)

// Kind says how a column's values are read.
type Kind int

const (
	// Numeric columns hold decimal numbers; a missing value is NaN.
	Numeric Kind = iota
	// Categorical columns hold strings, stored as codes into Levels; a
	// missing value has code -1.
	Categorical
)

// Request names a column to read and how to read it.
type Request struct {
	Name string
	Kind Kind
	// NaNIsError makes the field NaN (in any letter case) bad input in
	// this numeric column even when NaN is a missing-value marker: a
	// column of computed values, such as predicted risks, that holds NaN
	// reports a failed computation, not a value nobody recorded.
	NaNIsError bool
	// For says what the column was asked for, as a noun phrase ("a
	// subgroup column"), when it is not a model's: an error about a
	// missing column then says why the file should have it.
	For string
}

// DefaultMissing are the field values read as missing when
// Options.Missing is nil: the empty field, NA, a lone dot and NaN.
var DefaultMissing = []string{"", "NA", ".", "NaN"}

// Options control how a file is read. The zero value detects the
// delimiter, reads '.' as the decimal mark and uses DefaultMissing.
type Options struct {
	// Delimiter separates fields. Zero detects it from the header line:
	// whichever of tab, semicolon and comma occurs most often outside
	// quotes (a header with none of them is one column).
	Delimiter byte
	// DecimalComma reads "27,5" as 27.5 in numeric columns.
	DecimalComma bool
	// Missing lists the field values that mean a missing value; nil means
	// DefaultMissing. Fields are compared after surrounding spaces are
	// trimmed.
	Missing []string
	// KeepRecords keeps the raw text of every data row (see Frame.Record).
	KeepRecords bool
	// Workers bounds the goroutines used to parse; zero means GOMAXPROCS.
	Workers int
	// Rename maps column names as they appear in the file to the names
	// asked for (extracts rename columns between releases). A name not in
	// the file is left alone.
	Rename map[string]string
	// Format is "csv" (delimited text), "parquet", "arrow" (the Arrow IPC
	// file format), "xlsx" (an Excel workbook), or "" to choose by the
	// file's first bytes (PAR1 for Parquet, ARROW1 for Arrow, a zip with
	// the parts of a workbook for xlsx).
	Format string
	// Sheet names the worksheet of a workbook to read; "" reads the first
	// worksheet in tab order. Other formats ignore it.
	Sheet string
	// HashFile asks for the SHA-256 of the file's bytes in
	// Frame.FileSHA256. A delimited file is hashed from the bytes the
	// parser reads (mapped once, hashed beside the parse), so it is not
	// read a second time; a columnar file or workbook, whose reader
	// reads only parts of it, is read whole for the hash beside its
	// reader.
	HashFile bool
}

// Column is one column read from a file.
type Column struct {
	Name string
	Kind Kind
	// Index is the column's 0-based position in the header.
	Index int
	// Num holds the values of a Numeric column, NaN where missing.
	Num []float64
	// Codes index Levels for a Categorical column, -1 where missing.
	Codes []int32
	// Levels are the distinct values of a Categorical column in order of
	// first appearance.
	Levels []string
	// LevelLine is the file line on which each level first appears.
	LevelLine []int
	// Missing counts the missing values.
	Missing int
}

// IsMissing reports whether row i of the column is missing.
func (c *Column) IsMissing(i int) bool {
	if c.Kind == Numeric {
		return math.IsNaN(c.Num[i])
	}
	return c.Codes[i] < 0
}

// Frame is the requested columns of one file.
type Frame struct {
	// File is the name used in error messages.
	File string
	// Header holds every column name of the file, in order.
	Header []string
	// Delimiter is the field separator used.
	Delimiter byte
	// Rows counts the data rows.
	Rows int
	// RowNumbered says that Line gives row numbers (a columnar file), not
	// text lines.
	RowNumbered bool
	// Columns are the requested columns, in request order.
	Columns []*Column
	// Renamed lists the renames of Options.Rename that applied, in the
	// file's column order (a rename of a name not in the file is not
	// among them).
	Renamed []RenamedColumn
	// Sheet is the worksheet read, for a workbook; then Line gives the
	// sheet's row numbers and CellRef locates a value.
	Sheet string
	// Query describes the database query the rows came from (see
	// NewFrame), or nil for a file.
	Query *QueryInfo
	// FileSHA256 is the hex SHA-256 of the file's bytes when
	// Options.HashFile was set, otherwise "".
	FileSHA256 string

	firstCol  int // the sheet column of the header's first name (1 is A)
	headerRow int
	lines     []int32 // each data row's line; nil when line0 gives them
	line0     int     // the line of data row 0 when lines is nil (0: rows numbered from 1)
	data      []byte
	records   []int64
}

// RenamedColumn is one column of a file read under another name.
type RenamedColumn struct {
	// From is the name in the file, To the name it was read as.
	From, To string
}

// RenameHeader renames the names of header found in rename (a name in
// the file → the name to read it as), in place, and returns the renames
// that applied in header order. Every reader applies Options.Rename
// through it, so that Frame.Renamed says what was done.
func RenameHeader(header []string, rename map[string]string) []RenamedColumn {
	var done []RenamedColumn
	for i, h := range header {
		if to, ok := rename[h]; ok {
			header[i] = to
			done = append(done, RenamedColumn{From: h, To: to})
		}
	}
	return done
}

// Column returns the column named name, or nil.
func (f *Frame) Column(name string) *Column {
	for _, c := range f.Columns {
		if c.Name == name {
			return c
		}
	}
	return nil
}

// Line returns the file line on which data row i starts (for a
// columnar file its row number, for a workbook its sheet's row number).
func (f *Frame) Line(i int) int {
	if f.lines == nil {
		// Delimited rows on consecutive lines from line0, or a columnar
		// file's (or a query's) rows, numbered from 1.
		return max(f.line0, 1) + i
	}
	return int(f.lines[i])
}

// CellRef returns the cell of a workbook that holds the value of column
// on the sheet's row line (a Line or LevelLine of the frame), as
// Error.Cell writes it ("Sheet1!D17"), or "" for a frame that is not
// from a workbook or a column it does not have.
func (f *Frame) CellRef(line int, column string) string {
	if f.Sheet == "" || line <= 0 {
		return ""
	}
	i := index(f.Header, column)
	if i < 0 {
		return ""
	}
	return cellRef(f.Sheet, f.firstCol+i, line)
}

// HeaderRow returns the sheet row of a workbook's header, or 1.
func (f *Frame) HeaderRow() int { return max(f.headerRow, 1) }

// Record returns the raw text of data row i, without its line end, when
// the frame was read with Options.KeepRecords; otherwise nil.
func (f *Frame) Record(i int) []byte {
	if f.records == nil {
		return nil
	}
	return f.data[f.records[2*i]:f.records[2*i+1]]
}

// HeaderRecord returns the raw text of the header line when the frame was
// read with Options.KeepRecords.
func (f *Frame) HeaderRecord() []byte {
	if f.records == nil {
		return nil
	}
	return f.data[f.records[len(f.records)-2]:f.records[len(f.records)-1]]
}

// Load reads the requested columns of the file at path. The file is read,
// never written. Large files are memory-mapped while they are parsed
// (unless Options.KeepRecords asks for the raw text to be kept).
func Load(path string, reqs []Request, opt Options) (*Frame, error) {
	return LoadContext(context.Background(), path, reqs, opt)
}

// LoadContext is Load with a context: a cancelled or expired ctx stops
// the read within one chunk (65,536 rows of text, one record batch of a
// columnar file) and returns context.Cause(ctx).
//
// A stream — standard input ("-"), a named pipe or a process
// substitution — is read once, whole, into memory and parsed as
// delimited text (see loadStream).
func LoadContext(ctx context.Context, path string, reqs []Request, opt Options) (*Frame, error) {
	var fr *Frame
	f, err := openStream(path)
	switch {
	case err != nil:
		return nil, &Error{File: path, Msg: "cannot read file: " + pathErrMsg(err), Kind: ErrRead, Err: err}
	case f != nil:
		fr, err = loadStream(ctx, path, f, reqs, opt)
	default:
		fr, err = loadHashed(ctx, path, reqs, opt)
	}
	if err != nil && ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	return fr, err
}

// loadHashed is load with the file's SHA-256 when opt.HashFile asks for
// it: a format load does not map whole is read for it by a goroutine of
// its own, beside the reader.
func loadHashed(ctx context.Context, path string, reqs []Request, opt Options) (*Frame, error) {
	if !opt.HashFile || textFormat(path, opt) {
		return load(ctx, path, reqs, opt)
	}
	type hashed struct {
		sum string
		err error
	}
	hc := make(chan hashed, 1)
	go func() {
		sum, err := hashFile(path)
		hc <- hashed{sum, err}
	}()
	fr, err := load(ctx, path, reqs, opt)
	h := <-hc
	if err != nil {
		return nil, err
	}
	if h.err != nil {
		return nil, &Error{File: path, Msg: "cannot read file: " + h.err.Error(), Kind: ErrRead, Err: h.err}
	}
	fr.FileSHA256 = h.sum
	return fr, nil
}

// textFormat reports whether load reads path as delimited text.
func textFormat(path string, opt Options) bool {
	switch opt.Format {
	case "csv":
		return true
	case "", "auto":
		return !isParquet(path) && !isArrow(path) && !isWorkbook(path)
	}
	return false
}

// hashFile is the hex SHA-256 of the file at path.
func hashFile(path string) (string, error) {
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", err
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

func load(ctx context.Context, path string, reqs []Request, opt Options) (*Frame, error) {
	if ctx.Err() != nil {
		return nil, ctx.Err()
	}
	switch opt.Format {
	case "parquet":
		return loadParquet(ctx, path, reqs, opt)
	case "arrow":
		return loadArrow(ctx, path, reqs, opt)
	case "xlsx":
		return loadXLSX(ctx, path, reqs, opt)
	case "", "auto":
		pq, ar := isParquet(path), isArrow(path)
		if (pq || ar) && opt.KeepRecords {
			return nil, &Error{File: path, Msg: "a columnar file has no text rows to copy; give a CSV or TSV file", Kind: ErrFormat}
		}
		if isWorkbook(path) {
			return loadXLSX(ctx, path, reqs, opt)
		}
		if pq {
			return loadParquet(ctx, path, reqs, opt)
		}
		if ar {
			return loadArrow(ctx, path, reqs, opt)
		}
	case "csv":
	default:
		return nil, fmt.Errorf("cohort: unknown format %q", opt.Format)
	}
	var data []byte
	var err error
	isMap := false
	release := func() {}
	if opt.KeepRecords {
		data, err = os.ReadFile(path)
	} else {
		data, isMap, release, err = mapFile(path)
	}
	if err != nil {
		var pe *os.PathError
		msg := err.Error()
		if errors.As(err, &pe) {
			msg = pe.Err.Error()
		}
		return nil, &Error{File: path, Msg: "cannot read file: " + msg, Kind: ErrRead, Err: err}
	}
	defer release()
	var mp *mapped
	if isMap {
		mp = newMapped(data, opt.HashFile)
	}
	if !opt.HashFile {
		return parse(ctx, path, data, reqs, opt, mp)
	}
	// The parse and the hash read the same bytes (the mapping's pages
	// are faulted in once), on their own goroutines; the parser drops
	// the pages both have read.
	sum := make(chan [sha256.Size]byte, 1)
	go func() {
		if mp != nil {
			sum <- mp.sum()
			return
		}
		sum <- sha256.Sum256(data)
	}()
	fr, err := parse(ctx, path, data, reqs, opt, mp)
	s := <-sum
	if err != nil {
		return nil, err
	}
	fr.FileSHA256 = hex.EncodeToString(s[:])
	return fr, nil
}

// loneCR reports whether data's first line ends in a lone carriage
// return: a CR not followed by LF before any LF, with text after it.
// Such a file would otherwise read as one long line, and its error would
// name the header's repeated fields instead of its line ends. A CR
// inside a quoted header field is not a line end and does not count.
func loneCR(data []byte) bool {
	head := data[:min(len(data), sniffSize)]
	quoted := false
	for i, c := range head {
		switch {
		case c == '"':
			quoted = !quoted
		case quoted:
		case c == '\n':
			return false
		case c == '\r':
			return i+1 < len(head) && head[i+1] != '\n'
		}
	}
	return false
}

// Parse reads the requested columns from data, the contents of a file
// named name. The frame may refer to data, which must not be changed.
func Parse(name string, data []byte, reqs []Request, opt Options) (*Frame, error) {
	return parse(context.Background(), name, data, reqs, opt, nil)
}

func parse(ctx context.Context, name string, data []byte, reqs []Request, opt Options, mp *mapped) (*Frame, error) {
	if msg := notText(data); msg != "" {
		return nil, &Error{File: name, Msg: msg, Kind: ErrFormat}
	}
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	if mp != nil {
		mp.shift = len(mp.m) - len(data)
	}
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, &Error{File: name, Msg: "file is empty", Kind: ErrEmpty}
	}
	if loneCR(data) {
		return nil, &Error{File: name, Line: 1, Msg: "its lines end in a lone carriage return (CR, as in files of old Mac software), which is not read as a line end: save it with LF or CRLF line ends", Kind: ErrFormat}
	}
	delim := opt.Delimiter
	if delim == 0 {
		delim = detectDelimiter(data)
	}
	sc := &scanner{data: data, line: 1, delim: delim}
	hline, hfrom, hto, _, err := sc.next()
	if err != nil {
		return nil, syntaxError(name, err)
	}
	header := make([]string, len(sc.fields))
	for i, f := range sc.fields {
		header[i] = strings.TrimSpace(string(f))
	}
	renamed := RenameHeader(header, opt.Rename)
	if err := checkHeader(name, hline, header); err != nil {
		return nil, err
	}
	fr := &Frame{File: name, Header: header, Delimiter: delim, Renamed: renamed}
	plan, err := planColumns(name, header, reqs)
	if err != nil {
		return nil, err
	}
	p := parser{
		ctx: ctx, name: name, ncol: len(header), plan: plan, nreq: len(reqs), delim: delim,
		missing: opt.Missing, dec: '.', keep: opt.KeepRecords, mp: mp,
		header: header, kinds: make([]Kind, len(header)), nanErr: make([]bool, len(header)),
	}
	for i, k := range plan {
		if k >= 0 {
			p.kinds[i] = reqs[k].Kind
		}
	}
	for _, r := range reqs {
		for i, h := range header {
			if h == r.Name && r.NaNIsError {
				p.nanErr[i] = true
			}
		}
	}
	if p.missing == nil {
		p.missing = DefaultMissing
	}
	if opt.DecimalComma {
		p.dec = ','
	}
	if err := p.run(fr, reqs, data, sc.pos, sc.line, opt.Workers); err != nil {
		return nil, err
	}
	if fr.Rows == 0 {
		return nil, &Error{File: name, Msg: "the file has a header but no data rows", Kind: ErrEmpty}
	}
	if opt.KeepRecords {
		fr.data = data
		fr.records = append(fr.records, int64(hfrom), int64(hto))
	}
	return fr, nil
}

// detectDelimiter counts tabs, semicolons and commas outside quotes on the
// first line and returns the most frequent (ties prefer tab, then
// semicolon); a line with none of them gives a comma.
func detectDelimiter(data []byte) byte {
	counts := map[byte]int{}
	inQuote := false
	for _, c := range data {
		if c == '"' {
			inQuote = !inQuote
			continue
		}
		if !inQuote && c == '\n' {
			break
		}
		if !inQuote && (c == '\t' || c == ';' || c == ',') {
			counts[c]++
		}
	}
	best, n := byte(','), 0
	for _, c := range []byte{'\t', ';', ','} {
		if counts[c] > n {
			best, n = c, counts[c]
		}
	}
	return best
}

func checkHeader(name string, line int, header []string) error {
	seen := make(map[string]int, len(header))
	for i, h := range header {
		if j, ok := seen[h]; ok {
			return &Error{File: name, Line: line, Column: h,
				Msg: fmt.Sprintf("duplicate column name (fields %d and %d of the header)", j+1, i+1), Kind: ErrDuplicateColumn}
		}
		seen[h] = i
	}
	return nil
}

// planColumns maps every header position to the index of the request that
// reads it, or -1.
func planColumns(name string, header []string, reqs []Request) ([]int, error) {
	plan := make([]int, len(header))
	for i := range plan {
		plan[i] = -1
	}
	var absent []Request
	for k, r := range reqs {
		found := false
		for i, h := range header {
			if h == r.Name {
				if plan[i] >= 0 && reqs[plan[i]].Kind != r.Kind {
					return nil, fmt.Errorf("cohort: column %q requested as two kinds", r.Name)
				}
				if plan[i] < 0 {
					plan[i] = k
				}
				found = true
			}
		}
		if !found && !slices.ContainsFunc(absent, func(a Request) bool { return a.Name == r.Name }) {
			absent = append(absent, r)
		}
	}
	if len(absent) > 0 {
		// Every absent column in one message, so that a file with
		// several misnamed columns is put right in one go.
		r := absent[0]
		return nil, &Error{File: name, Column: r.Name, Msg: missingColumnsMsg(r, absent[1:], header), Kind: ErrNoColumn}
	}
	return plan, nil
}

func missingColumnMsg(r Request, header []string) string {
	return missingColumnsMsg(r, nil, header)
}

// missingColumnsMsg is the message of the absent column r, naming the
// other absent columns too, each with the closest name present.
func missingColumnsMsg(r Request, others []Request, header []string) string {
	msg := "no such column"
	if r.For != "" {
		msg += ", asked for as " + r.For
	}
	if s := Closest(r.Name, header); s != "" {
		msg += " (did you mean " + Quote(s) + "?)"
	}
	for i, o := range others {
		if i == 0 {
			msg += "; also absent: "
		} else {
			msg += ", "
		}
		msg += Quote(o.Name)
		if s := Closest(o.Name, header); s != "" {
			msg += " (did you mean " + Quote(s) + "?)"
		}
	}
	return msg + "; columns present: " + QuoteList(header)
}

func syntaxError(name string, err error) error {
	var se *errSyntax
	if errors.As(err, &se) {
		return &Error{File: name, Line: se.line, Msg: se.msg, Kind: ErrFormat}
	}
	return err
}

// SortedLevels returns the column's levels in sorted order: numerically
// when every level is a number, otherwise as strings.
func (c *Column) SortedLevels() []string {
	out := append([]string(nil), c.Levels...)
	SortLevels(out)
	return out
}

// SortLevels sorts level names numerically when every one is a number,
// otherwise as strings.
func SortLevels(levels []string) {
	nums := make([]float64, len(levels))
	numeric := true
	for i, s := range levels {
		v, ok := parseFloat([]byte(s), '.')
		if !ok {
			numeric = false
			break
		}
		nums[i] = v
	}
	if numeric {
		idx := make([]int, len(levels))
		for i := range idx {
			idx[i] = i
		}
		sort.SliceStable(idx, func(a, b int) bool { return nums[idx[a]] < nums[idx[b]] })
		out := make([]string, len(levels))
		for i, j := range idx {
			out[i] = levels[j]
		}
		copy(levels, out)
		return
	}
	sort.Strings(levels)
}
