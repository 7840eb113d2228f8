package cohort

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
)

// StdinName is the path that names standard input, as the command line
// writes it: Load reads "-" as the process's standard input.
const StdinName = "-"

// openStream returns an open handle on path when path names a stream
// rather than a file that can be read more than once: standard input
// ("-"), a named pipe, a process substitution (/dev/fd/N) or a
// character device. It returns nil, nil for a regular file, a directory
// or a path that does not exist (the loaders report those).
func openStream(path string) (*os.File, error) {
	if path == StdinName {
		return os.Stdin, nil
	}
	st, err := os.Stat(path)
	if err != nil || st.Mode().IsRegular() || st.IsDir() {
		return nil, nil
	}
	return os.Open(path)
}

// loadStream reads a stream (see openStream) once, whole, into memory,
// and parses it as delimited text with its SHA-256 from the same bytes.
// The format loaders open a file more than once (to tell its format by
// its first bytes, to hash it, to read it), which a stream does not
// allow: the second open would see only what the first left. A
// columnar file or a workbook is read by random access from its footer
// or zip directory, so one given as a stream is refused with the
// advice to give the file itself.
func loadStream(ctx context.Context, path string, f *os.File, reqs []Request, opt Options) (*Frame, error) {
	if f != os.Stdin {
		defer f.Close()
	}
	data, err := readStream(f, MaxStream)
	if err != nil {
		var se *streamTooLarge
		var nt streamNotText
		if errors.As(err, &se) || errors.As(err, &nt) {
			return nil, &Error{File: path, Msg: err.Error(), Kind: ErrFormat}
		}
		return nil, &Error{File: path, Msg: "cannot read stream: " + err.Error(), Kind: ErrRead, Err: err}
	}
	kind := columnarMagic(data)
	switch opt.Format {
	case "parquet":
		kind = "a Parquet file"
	case "arrow":
		kind = "an Arrow IPC file"
	case "xlsx":
		kind = "a workbook"
	}
	if kind != "" {
		return nil, &Error{File: path, Msg: "is a stream (a pipe or standard input), and " + kind + " is read by random access from its end: give the file itself, not a pipe", Kind: ErrFormat}
	}
	fr, err := parse(ctx, path, data, reqs, opt, nil)
	if err != nil {
		return nil, err
	}
	if opt.HashFile {
		s := sha256.Sum256(data)
		fr.FileSHA256 = hex.EncodeToString(s[:])
	}
	return fr, nil
}

// MaxStream is the most bytes read from a stream (see openStream): it
// is held in memory whole, so an endless or runaway stream (yes(1),
// /dev/zero) is stopped here, not by the machine's memory. A larger
// extract is read from a file, which is mapped, not copied.
const MaxStream = 4 << 30

// streamTooLarge is a stream that went on past the limit.
type streamTooLarge struct{ limit int64 }

func (e *streamTooLarge) Error() string {
	return fmt.Sprintf("is a stream longer than %d GiB, the most read into memory: write it to a file and give the file", e.limit>>30)
}

// streamNotText is a stream whose first bytes are not delimited text,
// in notText's words.
type streamNotText string

func (e streamNotText) Error() string { return string(e) }

// readStream reads r to its end, at most limit bytes. Its first
// sniffSize bytes are looked at before any more is read, so a stream
// that is not text (/dev/zero, /dev/urandom, a binary) is refused with
// notText's words at once rather than after filling memory.
func readStream(r io.Reader, limit int64) ([]byte, error) {
	head := make([]byte, sniffSize)
	n, err := io.ReadFull(r, head)
	head = head[:n]
	if err == io.EOF || err == io.ErrUnexpectedEOF {
		return head, nil
	}
	if err != nil {
		return nil, err
	}
	if columnarMagic(head) == "" {
		if msg := notText(head); msg != "" {
			return nil, streamNotText(msg)
		}
	}
	var buf bytes.Buffer
	buf.Write(head)
	m, err := buf.ReadFrom(io.LimitReader(r, limit-int64(n)+1))
	if err != nil {
		return nil, err
	}
	if int64(n)+m > limit {
		return nil, &streamTooLarge{limit}
	}
	return buf.Bytes(), nil
}

// columnarMagic names the format whose magic bytes begin data when it
// is one read by random access ("a Parquet file", "an Arrow IPC file",
// "a zip archive (such as a workbook)"), "" otherwise.
func columnarMagic(data []byte) string {
	switch {
	case bytes.HasPrefix(data, []byte("PAR1")):
		return "a Parquet file"
	case bytes.HasPrefix(data, []byte("ARROW1")):
		return "an Arrow IPC file"
	case bytes.HasPrefix(data, []byte("PK\x03\x04")):
		return "a zip archive (such as a workbook)"
	}
	return ""
}
