package cohort

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync/atomic"
	"testing"
)

// countdown is a context that reports itself cancelled from its n-th
// call of Err on, so a test can stop a read part-way, deterministically.
type countdown struct {
	context.Context
	n atomic.Int64
}

func newCountdown(n int64) *countdown {
	c := &countdown{Context: context.Background()}
	c.n.Store(n)
	return c
}

func (c *countdown) Err() error {
	if c.n.Add(-1) <= 0 {
		return context.Canceled
	}
	return nil
}

// TestLoadContextStopsPartWay: a context cancelled while a file is read
// stops the read with context.Canceled; the same read with a live context
// succeeds.
func TestLoadContextStopsPartWay(t *testing.T) {
	dir := t.TempDir()
	var b strings.Builder
	b.WriteString("x,g\n")
	const rows = 300_000
	for i := 0; i < rows; i++ {
		fmt.Fprintf(&b, "%d,%c\n", i, 'a'+i%3)
	}
	csv := filepath.Join(dir, "big.csv")
	if err := os.WriteFile(csv, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	x := make([]float64, rows)
	n := make([]int64, rows)
	g := make([]string, rows)
	for i := range x {
		x[i], n[i], g[i] = float64(i), int64(i), "a"
	}
	pq := filepath.Join(dir, "big.parquet")
	writeParquetRows(t, pq, 50_000, x, nil, n, g, g)
	reqs := []Request{{Name: "x", Kind: Numeric}, {Name: "g", Kind: Categorical}}
	for _, path := range []string{csv, pq} {
		fr, err := LoadContext(context.Background(), path, reqs, Options{Workers: 1})
		if err != nil || fr.Rows != rows {
			t.Fatalf("%s with a live context: %v", path, err)
		}
		// The first call is the check before reading; the later ones are
		// inside the read.
		for _, after := range []int64{1, 3} {
			fr, err = LoadContext(newCountdown(after), path, reqs, Options{Workers: 1})
			if !errors.Is(err, context.Canceled) || fr != nil {
				t.Errorf("%s cancelled at check %d: frame %v, error %v", filepath.Ext(path), after, fr != nil, err)
			}
		}
	}
}
