package cohort

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"math/bits"
)

// scanner splits delimited text into records. A field may be quoted with
// double quotes; inside quotes the delimiter and line ends are literal and
// a doubled quote stands for one quote. A quote inside an unquoted field
// is kept as it is. Line ends are LF or CRLF. Empty lines are skipped.
type scanner struct {
	data    []byte
	pos     int
	line    int // line number of data[pos]
	delim   byte
	fields  [][]byte
	scratch []byte
}

// errSyntax is a malformed record; the loader adds the file name.
type errSyntax struct {
	line int
	msg  string
}

func (e *errSyntax) Error() string { return fmt.Sprintf("line %d: %s", e.line, e.msg) }

// next reads the next non-empty record into s.fields. It returns the line
// the record starts on, the byte span of the record, and ok=false at the
// end of the data.
func (s *scanner) next() (start, from, to int, ok bool, err error) {
	for s.pos < len(s.data) {
		end := bytes.IndexByte(s.data[s.pos:], '\n')
		next := s.pos + end + 1
		if end < 0 {
			end = len(s.data) - s.pos
			next = len(s.data)
		}
		rec := s.data[s.pos : s.pos+end]
		if len(rec) > 0 && rec[len(rec)-1] == '\r' {
			rec = rec[:len(rec)-1]
		}
		if len(rec) == 0 {
			s.pos = next
			s.line++
			continue
		}
		start, from = s.line, s.pos
		if s.split(rec) {
			s.pos = next
			s.line++
			return start, from, from + len(rec), true, nil
		}
		to, err := s.slow()
		return start, from, to, err == nil, err
	}
	return 0, 0, 0, false, nil
}

// split cuts a record at every delimiter in one pass. It reports false,
// leaving the fields unfinished, when the record holds a quote.
//
// Eight bytes are examined at a time: a byte equal to the delimiter or
// to a quote is found with the zero-byte test (x − 0x01…01) &^ x &
// 0x80…80 on the word XORed with the repeated byte, whose lowest set bit
// always marks the first match.
func (s *scanner) split(rec []byte) bool {
	const lo, hi = 0x0101010101010101, 0x8080808080808080
	s.fields = s.fields[:0]
	d := s.delim
	dm, qm := lo*uint64(d), lo*uint64('"')
	last, i := 0, 0
	for i+8 <= len(rec) {
		w := binary.LittleEndian.Uint64(rec[i:])
		x, y := w^dm, w^qm
		t := ((x-lo)&^x | (y-lo)&^y) & hi
		if t == 0 {
			i += 8
			continue
		}
		j := i + bits.TrailingZeros64(t)>>3
		if rec[j] == '"' {
			return false
		}
		s.fields = append(s.fields, rec[last:j])
		last = j + 1
		i = j + 1
	}
	for j := i; j < len(rec); j++ {
		c := rec[j]
		if c == d {
			s.fields = append(s.fields, rec[last:j])
			last = j + 1
		} else if c == '"' {
			return false
		}
	}
	s.fields = append(s.fields, rec[last:])
	return true
}

// slow reads one record that contains quotes, byte by byte, and returns
// the end of the record's span (before its line end).
func (s *scanner) slow() (int, error) {
	s.fields = s.fields[:0]
	s.scratch = s.scratch[:0]
	d, n := s.data, len(s.data)
	i := s.pos
	for {
		if i < n && d[i] == '"' {
			f, j, err := s.quoted(i)
			if err != nil {
				return 0, err
			}
			s.fields = append(s.fields, f)
			i = j
		} else {
			j := i
			for j < n && d[j] != s.delim && d[j] != '\n' {
				j++
			}
			f := d[i:j]
			if len(f) > 0 && f[len(f)-1] == '\r' && (j == n || d[j] == '\n') {
				f = f[:len(f)-1]
			}
			s.fields = append(s.fields, f)
			i = j
		}
		switch {
		case i >= n:
			s.pos, s.line = n, s.line+1
			return trimCR(d, n), nil
		case d[i] == s.delim:
			i++
		case d[i] == '\n':
			s.pos, s.line = i+1, s.line+1
			return trimCR(d, i), nil
		case d[i] == '\r' && (i+1 == n || d[i+1] == '\n'):
			s.pos, s.line = min(i+2, n), s.line+1
			return i, nil
		default:
			return 0, &errSyntax{s.line, fmt.Sprintf("unexpected %q after a closing quote", d[i])}
		}
	}
}

// quoted reads the quoted field whose opening quote is at d[i]. It returns
// the field's content and the position after the closing quote.
func (s *scanner) quoted(i int) ([]byte, int, error) {
	d, n := s.data, len(s.data)
	startLine := s.line
	i++
	segStart := i
	var field []byte
	copied := false
	for {
		j := bytes.IndexByte(d[i:], '"')
		if j < 0 {
			return nil, 0, &errSyntax{startLine, "a quoted field never ends"}
		}
		s.line += bytes.Count(d[i:i+j], []byte{'\n'})
		i += j
		if i+1 < n && d[i+1] == '"' {
			if !copied {
				field = s.scratch[len(s.scratch):]
				copied = true
			}
			field = append(field, d[segStart:i+1]...)
			i += 2
			segStart = i
			continue
		}
		if copied {
			field = append(field, d[segStart:i]...)
			s.scratch = field[len(field):]
		} else {
			field = d[segStart:i]
		}
		return field, i + 1, nil
	}
}

func trimCR(d []byte, i int) int {
	if i > 0 && d[i-1] == '\r' {
		return i - 1
	}
	return i
}
