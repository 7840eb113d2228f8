package cohort

import (
	"bytes"
	"errors"
	"io"
	"strings"
	"testing"
)

// endless repeats its bytes forever, as yes(1) or /dev/zero do.
type endless []byte

func (e endless) Read(p []byte) (int, error) {
	for i := range p {
		p[i] = e[i%len(e)]
	}
	return len(p), nil
}

// TestReadStream: a stream is read whole up to the limit; one that is not
// text is refused from its first bytes (never read to its end), and one
// that goes on past the limit is refused with the limit named.
func TestReadStream(t *testing.T) {
	short := []byte("x,y\n1,0\n")
	got, err := readStream(bytes.NewReader(short), 1<<20)
	if err != nil || !bytes.Equal(got, short) {
		t.Errorf("short stream: %q, %v", got, err)
	}
	long := bytes.Repeat([]byte("1,0\n"), 10000) // beyond the sniffed head
	got, err = readStream(bytes.NewReader(long), 1<<20)
	if err != nil || !bytes.Equal(got, long) {
		t.Errorf("long stream: %d bytes, %v", len(got), err)
	}
	if got, err := readStream(bytes.NewReader(long), int64(len(long))); err != nil || len(got) != len(long) {
		t.Errorf("a stream of exactly the limit: %d bytes, %v", len(got), err)
	}
	_, err = readStream(endless{0}, 1<<40)
	var nt streamNotText
	if !errors.As(err, &nt) {
		t.Errorf("endless zeros: %v, want a not-text refusal", err)
	}
	_, err = readStream(endless("a,b,c\n"), 1<<20)
	var tl *streamTooLarge
	if !errors.As(err, &tl) || !strings.Contains(err.Error(), "write it to a file") {
		t.Errorf("endless text: %v, want the limit", err)
	}
	_, err = readStream(io.MultiReader(bytes.NewReader(long), errReader{}), 1<<20)
	if err == nil || !strings.Contains(err.Error(), "broken") {
		t.Errorf("a failing stream: %v", err)
	}
}

type errReader struct{}

func (errReader) Read([]byte) (int, error) { return 0, errors.New("broken pipe") }

// TestLoneCR: a file whose lines end in a lone CR is refused as such
// (before, it read as one line and was refused for repeated header
// names); CRLF, a CR inside a quoted header and a final CR are read.
func TestLoneCR(t *testing.T) {
	for _, tc := range []struct {
		data    string
		refused bool
	}{
		{"x,y\r1,0\r0,1\r", true},
		{"x,y\r\n1,0\r\n0,1\r\n", false},
		{"\"x\ra\",y\n1,0\n", false},
		{"x,y\n1,0\r", false},
		{"x,y\r", false},
	} {
		_, err := Parse("f.csv", []byte(tc.data), num("y"), Options{})
		got := err != nil && strings.Contains(err.Error(), "lone carriage return")
		if got != tc.refused {
			t.Errorf("%q: %v, want refused %v", tc.data, err, tc.refused)
		}
	}
}
