//go:build unix

package cohort

import (
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"syscall"
	"testing"
)

// fifoWith makes a named pipe in a fresh folder and writes data into it
// from a goroutine, as a shell's process substitution (<(zcat …)) does.
func fifoWith(t *testing.T, data []byte) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "extract.csv")
	if err := syscall.Mkfifo(path, 0o600); err != nil {
		t.Skipf("mkfifo: %v", err)
	}
	go func() {
		f, err := os.OpenFile(path, os.O_WRONLY, 0)
		if err != nil {
			return
		}
		defer f.Close()
		_, _ = f.Write(data)
	}()
	return path
}

// TestLoadFromPipe reads a named pipe as the same file would be read:
// the same values, line numbers and SHA-256 (the loaders open a regular
// file more than once, which a pipe does not allow; before the fix the
// header's first bytes were lost to the format sniffing).
func TestLoadFromPipe(t *testing.T) {
	data := synthCSV(70000, 3) // more than one parse chunk and a pipe's buffer
	reqs := []Request{{Name: "c0", Kind: Numeric}, {Name: "g", Kind: Categorical}}
	opt := Options{HashFile: true}
	reg := filepath.Join(t.TempDir(), "extract.csv")
	if err := os.WriteFile(reg, data, 0o600); err != nil {
		t.Fatal(err)
	}
	want, err := Load(reg, reqs, opt)
	if err != nil {
		t.Fatal(err)
	}
	got, err := Load(fifoWith(t, data), reqs, opt)
	if err != nil {
		t.Fatal(err)
	}
	if got.Rows != want.Rows || got.FileSHA256 != want.FileSHA256 || got.FileSHA256 == "" {
		t.Fatalf("rows %d sha %s, want %d %s", got.Rows, got.FileSHA256, want.Rows, want.FileSHA256)
	}
	for c := range want.Columns {
		if !reflect.DeepEqual(got.Columns[c].Num, want.Columns[c].Num) && want.Columns[c].Kind == Numeric {
			t.Errorf("column %s differs", want.Columns[c].Name)
		}
	}
	if !reflect.DeepEqual(got.Columns[1].Levels, want.Columns[1].Levels) || got.Line(want.Rows-1) != want.Line(want.Rows-1) {
		t.Error("levels or line numbers differ")
	}
}

// TestLoadFromPipeRefusesColumnar: a Parquet file (read from its footer)
// or a workbook (its zip directory) given as a pipe is refused with the
// advice to give the file, not parsed as text.
func TestLoadFromPipeRefusesColumnar(t *testing.T) {
	for _, tc := range []struct {
		data []byte
		want string
	}{
		{[]byte("PAR1\x00\x00\x00\x00PAR1"), "a Parquet file is read by random access"},
		{[]byte("ARROW1\x00\x00"), "an Arrow IPC file is read by random access"},
		{[]byte("PK\x03\x04\x14\x00"), "a zip archive (such as a workbook) is read by random access"},
	} {
		_, err := Load(fifoWith(t, tc.data), num("x"), Options{})
		if err == nil || !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), "give the file itself") {
			t.Errorf("%q: got %v, want %q", tc.data[:4], err, tc.want)
		}
	}
}
