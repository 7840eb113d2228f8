package cohort

import (
	"crypto/sha256"
	"encoding/hex"
	"os"
	"path/filepath"
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
