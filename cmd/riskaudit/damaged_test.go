package main

import (
	"bytes"
	"context"
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"testing"

	"github.com/riskaudit/riskaudit/internal/fixture"
)

// TestDamagedColumnarFiles: truncated and corrupted Parquet and Arrow IPC
// cohorts are exit status 3 with one line naming the file, for audit and
// score alike, and never a panic (which would be exit status 2 and a
// stack trace).
func TestDamagedColumnarFiles(t *testing.T) {
	dir := t.TempDir()
	quiet := &streams{out: &bytes.Buffer{}, err: &bytes.Buffer{}}
	d := filepath.Join(dir, "d")
	if err := runDemo(context.Background(), d, quiet); err != nil {
		t.Fatal(err)
	}
	pq := filepath.Join(dir, "later.parquet")
	fixture.ToParquet(t, filepath.Join(d, "later.csv"), pq, 500)
	good, err := os.ReadFile(pq)
	if err != nil {
		t.Fatal(err)
	}
	fixture.ToArrow(t, filepath.Join(d, "later.csv"), filepath.Join(dir, "later.arrow"), 500)
	ar, err := os.ReadFile(filepath.Join(dir, "later.arrow"))
	if err != nil {
		t.Fatal(err)
	}
	type damage struct {
		name string
		data []byte
	}
	var cases []damage
	for _, src := range []struct {
		ext  string
		data []byte
	}{{"parquet", good}, {"arrow", ar}} {
		n := len(src.data)
		for k := 1; k < 8; k++ {
			cases = append(cases, damage{fmt.Sprintf("%s-truncated-%d", src.ext, k), src.data[:n*k/8]})
		}
		for _, at := range []int{8, n / 3, n / 2, n - 40, n - 12, n - 9} {
			b := bytes.Clone(src.data)
			for i := at; i < min(n, at+6); i++ {
				b[i] ^= 0xA5
			}
			cases = append(cases, damage{fmt.Sprintf("%s-flipped-at-%d", src.ext, at), b})
		}
	}
	oneLine := regexp.MustCompile(`^riskaudit: \S+\.(parquet|arrow): [^\n]+\n$`)
	for _, c := range cases {
		format := "arrow"
		if c.name[:7] == "parquet" {
			format = "parquet"
		}
		path := filepath.Join(dir, c.name+"."+format)
		if err := os.WriteFile(path, c.data, 0o644); err != nil {
			t.Fatal(err)
		}
		for _, args := range [][]string{
			{"audit", "--model", filepath.Join(d, "frozen.yaml"), "--cohort", path, "--format", format, "--out", filepath.Join(dir, "out-"+c.name), "-q"},
			{"score", "--model", filepath.Join(d, "frozen.yaml"), "--data", path, "--format", format, "--out", filepath.Join(dir, "scored-"+filepath.Base(path)), "-q"},
		} {
			var stderr bytes.Buffer
			code := run(context.Background(), args, &streams{out: &bytes.Buffer{}, err: &stderr})
			if code == exitOK || code == exitCriterion {
				continue // a damage the format survives is not a failure
			}
			if code != exitBadInput || !oneLine.MatchString(stderr.String()) {
				t.Errorf("%s %s: exit status %d, stderr %q", args[0], c.name, code, stderr.String())
			}
		}
	}
}
