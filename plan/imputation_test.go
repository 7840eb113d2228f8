package plan

import (
	"errors"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestImputationKeys: the keys of a multiply imputed cohort are read and
// marked as set, and a list of fewer than 2 files is refused on its line.
func TestImputationKeys(t *testing.T) {
	for _, tt := range []struct {
		yaml, column string
		files        []string
		err          string
	}{
		{"imputation_column: imp\n", "imp", nil, ""},
		{"imputed: [a.csv, b.csv, c.csv]\n", "", []string{"a.csv", "b.csv", "c.csv"}, ""},
		{"imputed: [a.csv]\n", "", nil, "line 1"},
		{"imputed: a.csv\n", "", nil, "must be a list"},
	} {
		path := filepath.Join(t.TempDir(), "plan.yaml")
		if err := os.WriteFile(path, []byte(tt.yaml), 0o644); err != nil {
			t.Fatal(err)
		}
		pl, err := Load(path)
		if tt.err != "" {
			if err == nil || !strings.Contains(err.Error(), tt.err) || !errors.Is(err, ErrValue) {
				t.Errorf("%q: %v, want an error with %q", tt.yaml, err, tt.err)
			}
			continue
		}
		if err != nil {
			t.Fatalf("%q: %v", tt.yaml, err)
		}
		im := pl.Imputation
		if im.Column != tt.column || !slices.Equal(im.Files, tt.files) || pl.Set["imputation_column"] != (tt.column != "") || pl.Set["imputed"] != (tt.files != nil) {
			t.Errorf("%q: %+v set %v", tt.yaml, im, pl.Set)
		}
	}
}
