package cohort

import (
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

// TestHashFile checks Frame.FileSHA256 against the SHA-256 of the whole
// file by Go's crypto/sha256, for a delimited file (hashed from the
// parser's own bytes) and a Parquet file (read for the hash beside its
// reader), and that no hash is made unless asked for.
func TestHashFile(t *testing.T) {
	dir := t.TempDir()
	csv := filepath.Join(dir, "a.csv")
	if err := os.WriteFile(csv, []byte("\xef\xbb\xbfx,g\n1.5,a\n2,b\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	pq := filepath.Join(dir, "a.parquet")
	writeParquet(t, pq, []float64{1, 2, 3}, []bool{true, true, true}, []int64{1, 2, 3}, []string{"a", "b", "c"}, []string{"1", "2", "3"})
	cases := []struct {
		name, path string
		reqs       []Request
	}{
		{"csv", csv, []Request{{Name: "x", Kind: Numeric}}},
		{"parquet", pq, []Request{{Name: "x", Kind: Numeric}}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			b, err := os.ReadFile(c.path)
			if err != nil {
				t.Fatal(err)
			}
			sum := sha256.Sum256(b)
			want := hex.EncodeToString(sum[:])
			fr, err := Load(c.path, c.reqs, Options{HashFile: true})
			if err != nil {
				t.Fatal(err)
			}
			if fr.FileSHA256 != want {
				t.Errorf("FileSHA256 = %s, crypto/sha256 of the file %s", fr.FileSHA256, want)
			}
			fr, err = Load(c.path, c.reqs, Options{})
			if err != nil {
				t.Fatal(err)
			}
			if fr.FileSHA256 != "" {
				t.Errorf("FileSHA256 = %s without HashFile", fr.FileSHA256)
			}
		})
	}
}

// TestHashMappedDropped loads a mapped CSV file large enough for the
// parser to drop the pages it has read while the hash is taken (2 MB,
// two workers, a byte-order mark shifting the parser's offsets): the
// hash must still be crypto/sha256's of the whole file and every value
// strconv.ParseFloat's of its text.
func TestHashMappedDropped(t *testing.T) {
	var b strings.Builder
	b.WriteString("\xef\xbb\xbfx,g\n")
	var want []float64
	for i := 0; b.Len() < 2<<20; i++ {
		s := strconv.FormatFloat(float64(i)*0.37-1000, 'f', -1, 64)
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatal(err)
		}
		want = append(want, v)
		b.WriteString(s + ",a\n")
	}
	path := filepath.Join(t.TempDir(), "big.csv")
	if err := os.WriteFile(path, []byte(b.String()), 0o600); err != nil {
		t.Fatal(err)
	}
	fr, err := Load(path, []Request{{Name: "x", Kind: Numeric}}, Options{HashFile: true, Workers: 2})
	if err != nil {
		t.Fatal(err)
	}
	sum := sha256.Sum256([]byte(b.String()))
	if got := hex.EncodeToString(sum[:]); fr.FileSHA256 != got {
		t.Errorf("FileSHA256 = %s, crypto/sha256 of the file %s", fr.FileSHA256, got)
	}
	x := fr.Column("x").Num
	if len(x) != len(want) {
		t.Fatalf("%d rows, the file has %d", len(x), len(want))
	}
	for i := range want {
		if x[i] != want[i] {
			t.Fatalf("row %d: %v, strconv.ParseFloat %v", i, x[i], want[i])
		}
	}
}
