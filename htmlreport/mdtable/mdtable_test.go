package mdtable

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/yuin/goldmark"
	gast "github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension"
	"github.com/yuin/goldmark/parser"
	"github.com/yuin/goldmark/text"
)

// render converts md to HTML with goldmark and the table extension ext,
// after giving every table and cell a class attribute when mark is set
// (as htmlreport does, so that attributes reach the renderer too).
func render(t *testing.T, ext goldmark.Extender, md []byte, mark bool) string {
	t.Helper()
	gm := goldmark.New(goldmark.WithExtensions(ext), goldmark.WithParserOptions(parser.WithAutoHeadingID()))
	doc := gm.Parser().Parse(text.NewReader(md))
	if mark {
		_ = gast.Walk(doc, func(n gast.Node, entering bool) (gast.WalkStatus, error) {
			if entering && (n.Kind().String() == "Table" || n.Kind().String() == "TableCell") {
				n.SetAttributeString("class", []byte("num"))
			}
			return gast.WalkContinue, nil
		})
	}
	var b bytes.Buffer
	if err := gm.Renderer().Render(&b, md, doc); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

// same checks that New gives the HTML that goldmark's own table
// extension (github.com/yuin/goldmark/extension, the reference) gives.
func same(t *testing.T, name string, md []byte) {
	t.Helper()
	for _, mark := range []bool{false, true} {
		want := render(t, extension.Table, md, mark)
		got := render(t, New(), md, mark)
		if got != want {
			t.Errorf("%s (attributes %v): HTML differs from goldmark's table extension\ngot:\n%s\nwant:\n%s", name, mark, got, want)
		}
	}
}

// TestDemoReports: the reports riskaudit writes (copied to testdata:
// the demo's two report.md, and a compare.md and a trend.md made from
// the demo's files with riskaudit compare and riskaudit trend) render
// as goldmark's table extension renders them, and have their tables.
func TestDemoReports(t *testing.T) {
	for f, tables := range map[string]int{"demo_report.md": 21, "demo_imputed_report.md": 18, "compare.md": 4, "trend.md": 2} {
		md, err := os.ReadFile(filepath.Join("testdata", f))
		if err != nil {
			t.Fatal(err)
		}
		if n := strings.Count(render(t, New(), md, false), "<table>"); n < tables {
			t.Fatalf("%s: %d tables rendered, want at least %d", f, n, tables)
		}
		same(t, f, md)
	}
}

// TestEdgeCases compares each table syntax case with goldmark's table
// extension (the reference).
func TestEdgeCases(t *testing.T) {
	cases := map[string]string{
		"plain":           "| a | b |\n|---|---|\n| 1 | 2 |\n",
		"no outer pipes":  "a | b\n--- | ---\n1 | 2\n",
		"alignments":      "| l | c | r | n |\n|:---|:---:|---:|---|\n| 1 | 2 | 3 | 4 |\n",
		"spaced delims":   "| a | b |\n| :-- | --: |\n| 1 | 2 |\n",
		"head only":       "| a | b |\n|---|---|\n",
		"ragged short":    "| a | b | c |\n|---|---|---|\n| 1 |\n| 1 | 2 |\n",
		"ragged long":     "| a | b |\n|---|---|\n| 1 | 2 | 3 | 4 |\n",
		"head mismatch":   "| a | b | c |\n|---|---|\n| 1 | 2 |\n",
		"escaped pipe":    "| a | b |\n|---|---|\n| x \\| y | 2 |\n",
		"code pipe":       "| a | b |\n|---|---|\n| `x \\| y` | `p\\|q\\|r` |\n",
		"code raw pipe":   "| a | b |\n|---|---|\n| `x | y` | 2 |\n",
		"code after":      "| a | b |\n|---|---|\n| u \\| `v \\| w` | 2 |\n",
		"emphasis, links": "| *a* | **b** |\n|---|---|\n| [l](http://example.invalid) | _e_ `c` |\n",
		"paragraph above": "Some text\nmore text\n| a | b |\n|---|---|\n| 1 | 2 |\n",
		"not a delimiter": "| a | b |\n|-x-|---|\n| 1 | 2 |\n",
		"dashes only":     "a\n---\nb\n",
		"colon only":      "| a | b |\n|:|---|\n| 1 | 2 |\n",
		"double colon":    "| a | b |\n|::|---|\n",
		"indented delim":  "| a | b |\n    |---|---|\n",
		"tab delim":       "| a | b |\n|\t---\t|---|\n| 1 | 2 |\n",
		"empty cells":     "| a | b |\n|---|---|\n| | |\n||x|\n",
		"html in cell":    "| a | b |\n|---|---|\n| <b>x</b> | &amp; |\n",
		"in a list":       "- item\n\n  | a | b |\n  |---|---|\n  | 1 | 2 |\n",
		"in a quote":      "> | a | b |\n> |---|---|\n> | 1 | 2 |\n",
		"two tables":      "| a |\n|---|\n| 1 |\n\n| b | c |\n|--:|:--|\n| 2 | 3 |\n",
		"unicode":         "| é | ≥ |\n|---|---|\n| 0.317 to 0.529 | −1 |\n",
		"trailing spaces": "| a | b |   \n|---|---|   \n| 1 | 2 |   \n",
		"backslash end":   "| a | b |\n|---|---|\n| 1 \\\\| 2 |\n",
		"one column":      "|a|\n|-|\n|1|\n",
	}
	for name, md := range cases {
		same(t, name, []byte(md))
	}
}

// TestAlignment checks delimiter cells against the expressions goldmark's
// table extension matches them with (the reference): `^\s*:-+\s*$` left,
// `^\s*-+:\s*$` right, `^\s*:-+:\s*$` center, `^\s*-+\s*$` none.
func TestAlignment(t *testing.T) {
	for _, c := range []struct {
		col  string
		want string
		ok   bool
	}{
		{":--", "left", true}, {" --: ", "right", true}, {"\t:-:\n", "center", true},
		{"---", "none", true}, {":", "", false}, {"::", "", false}, {"-:-", "", false},
		{"", "", false}, {"- -", "", false}, {"\v-", "", false},
	} {
		a, ok := alignment([]byte(c.col))
		if ok != c.ok || (ok && a.String() != c.want) {
			t.Errorf("alignment(%q) = %v, %v; want %s, %v", c.col, a, ok, c.want, c.ok)
		}
	}
}
