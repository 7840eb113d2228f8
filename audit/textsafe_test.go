package audit_test

import (
	"bytes"
	"context"
	"encoding/xml"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"unicode/utf8"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/fixture"
)

// TestMessyLevelKeepsOutputsWellFormed: a subgroup level with an
// invalid UTF-8 byte and a control character still gives SVG figures
// that encoding/xml reads to the end (the outside check), and a report
// and page that are valid UTF-8.
func TestMessyLevelKeepsOutputsWellFormed(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	data, err := os.ReadFile(d.Later)
	if err != nil {
		t.Fatal(err)
	}
	messy := filepath.Join(t.TempDir(), "messy.csv")
	if err := os.WriteFile(messy, bytes.ReplaceAll(data, []byte("Ostbrook North"), []byte("Ostbrook\xff N\x01orth")), 0o600); err != nil {
		t.Fatal(err)
	}
	res, err := audit.Run(context.Background(), audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: messy}, Subgroups: []string{"hospital"}, Clock: fixedClock})
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "audit")
	if _, err := audit.Write(out, res, audit.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	entries, err := os.ReadDir(out)
	if err != nil {
		t.Fatal(err)
	}
	svgs := 0
	for _, e := range entries {
		b, err := os.ReadFile(filepath.Join(out, e.Name()))
		if err != nil {
			t.Fatal(err)
		}
		switch filepath.Ext(e.Name()) {
		case ".svg":
			svgs++
			dec := xml.NewDecoder(bytes.NewReader(b))
			for {
				if _, err := dec.Token(); err == io.EOF {
					break
				} else if err != nil {
					t.Errorf("%s: not well-formed XML: %v", e.Name(), err)
					break
				}
			}
		case ".md", ".html":
			if !utf8.Valid(b) {
				t.Errorf("%s is not valid UTF-8", e.Name())
			}
			if e.Name() == "report.md" && !strings.Contains(string(b), "Ostbrook\uFFFD N\uFFFDorth") {
				t.Errorf("report.md does not show the level with U+FFFD")
			}
		}
	}
	if svgs < 5 {
		t.Errorf("only %d SVG figures checked", svgs)
	}
}
