package pgcohort

import (
	"fmt"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Param is a value bound to the placeholder @Name of a query. Values are
// sent as text, apart from the SQL, and the server reads each as the type
// the query gives its placeholder (a date compared with a date column is
// read as a date).
type Param struct {
	Name, Value string
}

// ParseParam reads NAME=VALUE, as the command line's --param gives it.
func ParseParam(s string) (Param, error) {
	name, value, ok := strings.Cut(s, "=")
	if !ok || !validName(name) {
		return Param{}, fmt.Errorf("%s: give NAME=VALUE, NAME a letter or _ followed by letters, digits or _", strconv.Quote(s))
	}
	return Param{Name: name, Value: value}, nil
}

func validName(s string) bool {
	for i, r := range s {
		if !(r == '_' || unicode.IsLetter(r) || i > 0 && r >= '0' && r <= '9') {
			return false
		}
	}
	return s != ""
}

// statement is a query with its @name placeholders replaced by $1, $2,
// … in order of first use, and the way back from a position in the
// rewritten text to one in the text as given.
type statement struct {
	orig, sql string
	// names are the placeholders in order of first use; $k is names[k-1].
	names []string
	// first is each name's byte offset in orig where it is first used.
	first []int
	// segs map the rewritten text back: a byte at offset o ≥ segs[i].to
	// (and below the next segment's) of sql stands at offset
	// segs[i].from + (o − segs[i].to) of orig, or, inside a placeholder,
	// at the placeholder's '@'.
	segs []segment
}

type segment struct {
	from, to, n int // offset in orig, offset in sql, length in sql
	placeholder bool
}

// positionError is a problem found in the query text before it is sent,
// at a byte offset of the text.
type positionError struct {
	offset int
	msg    string
}

func (e *positionError) Error() string { return e.msg }

// parseStatement finds the placeholders of sql: @ followed by a letter or
// _ and then letters, digits or _, outside string constants, quoted
// identifiers, dollar-quoted strings and comments (a second @ of the
// operator @@ is not a placeholder). A positional placeholder ($1) is
// refused: the parameters have names.
func parseStatement(sql string) (*statement, error) {
	st := &statement{orig: sql}
	var b strings.Builder
	index := map[string]int{}
	start := 0 // start of the pending run of plain text
	flush := func(end int) {
		if end > start {
			st.segs = append(st.segs, segment{from: start, to: b.Len(), n: end - start})
			b.WriteString(sql[start:end])
		}
	}
	n := len(sql)
	for i := 0; i < n; {
		c := sql[i]
		switch {
		case c == '\'':
			escapes := i > 0 && (sql[i-1] == 'e' || sql[i-1] == 'E') && (i < 2 || !isIdentByte(sql[i-2]))
			j, ok := endQuoted(sql, i+1, '\'', escapes)
			if !ok {
				return nil, &positionError{i, "a string constant that starts here never ends"}
			}
			i = j
		case c == '"':
			j, ok := endQuoted(sql, i+1, '"', false)
			if !ok {
				return nil, &positionError{i, "a quoted identifier that starts here never ends"}
			}
			i = j
		case c == '-' && i+1 < n && sql[i+1] == '-':
			j := strings.IndexByte(sql[i:], '\n')
			if j < 0 {
				i = n
			} else {
				i += j + 1
			}
		case c == '/' && i+1 < n && sql[i+1] == '*':
			j, ok := endComment(sql, i)
			if !ok {
				return nil, &positionError{i, "a comment that starts here never ends"}
			}
			i = j
		case c == '$' && i+1 < n && sql[i+1] >= '0' && sql[i+1] <= '9' && (i == 0 || !isIdentByte(sql[i-1])):
			return nil, &positionError{i, "a positional placeholder ($1); name the parameters: @name, with --param name=value"}
		case c == '$' && (i == 0 || !isIdentByte(sql[i-1])):
			if tag, ok := dollarTag(sql[i:]); ok {
				j := strings.Index(sql[i+len(tag):], tag)
				if j < 0 {
					return nil, &positionError{i, "a dollar-quoted string that starts here never ends"}
				}
				i += len(tag) + j + len(tag)
			} else {
				i++
			}
		case c == '@' && (i == 0 || sql[i-1] != '@'):
			j := i + 1
			for j < n {
				r, w := utf8.DecodeRuneInString(sql[j:])
				if !(r == '_' || unicode.IsLetter(r) || j > i+1 && r >= '0' && r <= '9') {
					break
				}
				j += w
			}
			if j == i+1 {
				i++
				continue
			}
			flush(i)
			name := sql[i+1 : j]
			k, ok := index[name]
			if !ok {
				k = len(st.names)
				index[name] = k
				st.names = append(st.names, name)
				st.first = append(st.first, i)
			}
			ph := "$" + strconv.Itoa(k+1)
			st.segs = append(st.segs, segment{from: i, to: b.Len(), n: len(ph), placeholder: true})
			b.WriteString(ph)
			i, start = j, j
		default:
			i++
		}
	}
	flush(n)
	st.sql = b.String()
	return st, nil
}

func isIdentByte(c byte) bool {
	return c == '_' || c == '$' || c >= '0' && c <= '9' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= 0x80
}

// endQuoted returns the offset just past the closing quote of a quoted
// run that starts at i (after the opening quote); a doubled quote stands
// for itself, and with escapes a backslash escapes the next byte.
func endQuoted(s string, i int, q byte, escapes bool) (int, bool) {
	for i < len(s) {
		switch c := s[i]; {
		case escapes && c == '\\':
			i += 2
		case c == q && i+1 < len(s) && s[i+1] == q:
			i += 2
		case c == q:
			return i + 1, true
		default:
			i++
		}
	}
	return 0, false
}

// endComment returns the offset past the block comment starting at i;
// block comments nest, as in PostgreSQL.
func endComment(s string, i int) (int, bool) {
	depth := 0
	for i+1 < len(s) {
		switch {
		case s[i] == '/' && s[i+1] == '*':
			depth++
			i += 2
		case s[i] == '*' && s[i+1] == '/':
			depth--
			i += 2
			if depth == 0 {
				return i, true
			}
		default:
			i++
		}
	}
	return 0, false
}

// dollarTag returns the opening tag ($$ or $tag$) at the start of s.
func dollarTag(s string) (string, bool) {
	for j := 1; j < len(s); j++ {
		c := s[j]
		if c == '$' {
			return s[:j+1], true
		}
		if !(c == '_' || c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= 0x80 || j > 1 && c >= '0' && c <= '9') {
			return "", false
		}
	}
	return "", false
}

// bind orders the given parameters as the placeholders use them and
// returns the names of those no placeholder uses. A placeholder without
// a value is an error.
func (st *statement) bind(params []Param) (args []any, used []Param, unused []string, err error) {
	given := map[string]string{}
	for _, p := range params {
		given[p.Name] = p.Value
	}
	args = make([]any, len(st.names))
	used = make([]Param, len(st.names))
	for k, name := range st.names {
		v, ok := given[name]
		if !ok {
			return nil, nil, nil, &positionError{st.first[k], fmt.Sprintf("the placeholder @%s has no value: give it with --param %s=VALUE (or under params in the plan)", name, name)}
		}
		args[k], used[k] = v, Param{Name: name, Value: v}
		delete(given, name)
	}
	for _, p := range params {
		if _, ok := given[p.Name]; ok {
			unused = append(unused, p.Name)
			delete(given, p.Name)
		}
	}
	return args, used, unused, nil
}

// Placeholders returns the names the query's placeholders use, in order
// of first use (nil for a text whose placeholders cannot be found).
func (q *Query) Placeholders() []string { return append([]string(nil), q.st.names...) }

// Unused returns the names of the parameters given to New that the
// query does not use (a parameter meant for another query, or a
// misspelt name).
func (q *Query) Unused() []string { return append([]string(nil), q.unused...) }

// origOffset maps a byte offset of the rewritten text to one of the
// text as given.
func (st *statement) origOffset(o int) int {
	for i := len(st.segs) - 1; i >= 0; i-- {
		s := st.segs[i]
		if o >= s.to {
			if s.placeholder {
				return s.from
			}
			return s.from + min(o-s.to, s.n)
		}
	}
	return 0
}

// position returns the 1-based line and column (in characters) of the
// character at 1-based character position pos of the rewritten text, as
// the server reports positions, in the text as given.
func (st *statement) position(pos int) (line, col int) {
	off := 0
	for k := 1; k < pos && off < len(st.sql); k++ {
		_, w := utf8.DecodeRuneInString(st.sql[off:])
		off += w
	}
	return lineCol(st.orig, st.origOffset(off))
}

// lineCol returns the 1-based line and column (in characters) of byte
// offset off of s.
func lineCol(s string, off int) (line, col int) {
	off = min(max(off, 0), len(s))
	line = 1 + strings.Count(s[:off], "\n")
	ls := strings.LastIndexByte(s[:off], '\n') + 1
	return line, 1 + utf8.RuneCountInString(s[ls:off])
}
