package cohort

import (
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// TestParquetLevelsMatchCSV reads a categorical column of 20 levels in
// an order that keeps replacing levelCache's entries, with missing
// markers among them, from Parquet and from the same rows as CSV (the
// CSV reader does not use the cache): the same levels in the same
// order, the same code on every row and the same count of missing
// values.
func TestParquetLevelsMatchCSV(t *testing.T) {
	dir := t.TempDir()
	rows := 400
	x, n, g, tx := make([]float64, rows), make([]int64, rows), make([]string, rows), make([]string, rows)
	var csv strings.Builder
	csv.WriteString("x,n,g,t\n")
	for i := range rows {
		x[i], n[i], tx[i] = float64(i), int64(i), fmt.Sprint(i)
		switch {
		case i%13 == 5:
			g[i] = "NA"
		case i%3 == 0:
			g[i] = "common"
		default:
			g[i] = fmt.Sprintf("level %02d", (i*7)%20)
		}
		fmt.Fprintf(&csv, "%g,%d,%s,%s\n", x[i], n[i], g[i], tx[i])
	}
	pq := filepath.Join(dir, "d.parquet")
	writeParquet(t, pq, x, nil, n, g, tx)
	cf := filepath.Join(dir, "d.csv")
	if err := os.WriteFile(cf, []byte(csv.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	reqs := []Request{{Name: "g", Kind: Categorical}}
	a, err := Load(cf, reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	b, err := Load(pq, reqs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	ca, cb := a.Column("g"), b.Column("g")
	if len(ca.Levels) != 21 {
		t.Fatalf("CSV read %d levels, want 21", len(ca.Levels))
	}
	if !slices.Equal(ca.Levels, cb.Levels) {
		t.Errorf("levels: CSV %q, Parquet %q", ca.Levels, cb.Levels)
	}
	if !slices.Equal(ca.Codes, cb.Codes) {
		t.Errorf("codes differ: CSV %v, Parquet %v", ca.Codes, cb.Codes)
	}
	if ca.Missing != cb.Missing || ca.Missing == 0 {
		t.Errorf("missing: CSV %d, Parquet %d", ca.Missing, cb.Missing)
	}
}

// TestLevelCache checks the cache's own bookkeeping: a remembered text
// gives its code, an unknown one is not found, and past eight entries
// the oldest goes first.
func TestLevelCache(t *testing.T) {
	var lc levelCache
	for i := range 10 {
		lc.put([]byte(fmt.Sprint("v", i)), int32(i))
	}
	tests := []struct {
		text string
		code int32
		ok   bool
	}{
		{"v0", 0, false}, {"v1", 0, false}, // replaced by v8 and v9
		{"v2", 2, true}, {"v7", 7, true}, {"v8", 8, true}, {"v9", 9, true},
		{"v", 0, false}, {"", 0, false},
	}
	for _, tc := range tests {
		code, ok := lc.get([]byte(tc.text))
		if ok != tc.ok || ok && code != tc.code {
			t.Errorf("get(%q) = %d, %v; want %d, %v", tc.text, code, ok, tc.code, tc.ok)
		}
	}
}
