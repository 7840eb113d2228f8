package cohort

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
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
	data, err := io.ReadAll(f)
	if f != os.Stdin {
		f.Close()
	}
	if err != nil {
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
