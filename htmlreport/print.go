package htmlreport

import (
	"bytes"
	"html/template"
	"path"
	"regexp"
	"strconv"
	"strings"
	"sync"

	"github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/util"
)

// The printed page, in millimetres: A4 (210 × 297 mm) less the margins
// of the style's @page rule (15 mm top, 17 mm bottom, 14 mm each side).
// A figure's image may take at most the height given here, which leaves
// room for its caption and the heading above it.
const (
	portraitWidthMM, portraitFigureMM   = 210 - 2*14, 200.0
	landscapeWidthMM, landscapeFigureMM = 297 - 2*14, 160.0
	// landscapeGain is how much larger a figure must print on a
	// landscape page than on a portrait one to be given a page of its
	// own turned sideways: a turned page interrupts the reading, so only
	// for a clear gain in the size of its text.
	landscapeGain = 1.15
)

// printScale is the scale at which a figure of w × h millimetres prints
// in a column of width × height millimetres: shrunk to fit, never
// enlarged.
func printScale(w, h, width, height float64) float64 {
	return min(1, width/w, height/h)
}

// landscape reports whether a figure of w × h millimetres (as drawn)
// is printed on a landscape page: when it is wider than the portrait
// column and a landscape page shows it at least landscapeGain times as
// large (the subgroup chart, 11 inches wide, prints at 65% on a portrait
// page and at 86% turned).
func landscape(w, h float64) bool {
	if w <= portraitWidthMM || h <= 0 {
		return false
	}
	p := printScale(w, h, portraitWidthMM, portraitFigureMM)
	l := printScale(w, h, landscapeWidthMM, landscapeFigureMM)
	return l >= landscapeGain*p
}

// svgPatterns are the expressions svgSize reads an SVG root element
// with, compiled at the first use (not at every start of the program).
var svgPatterns = sync.OnceValue(func() svgRegexps {
	return svgRegexps{
		tag:    regexp.MustCompile(`(?s)<svg\b[^>]*>`),
		width:  regexp.MustCompile(`\swidth\s*=\s*["']\s*([0-9.]+)\s*([a-z]*)\s*["']`),
		height: regexp.MustCompile(`\sheight\s*=\s*["']\s*([0-9.]+)\s*([a-z]*)\s*["']`),
	}
})

// svgRegexps match an SVG document's root element and its width and
// height attributes.
type svgRegexps struct {
	tag, width, height *regexp.Regexp
}

// mmPer is the length of one unit of an SVG width or height in
// millimetres (CSS units: 96 px an inch, 72 pt an inch).
var mmPer = map[string]float64{"": 25.4 / 96, "px": 25.4 / 96, "pt": 25.4 / 72, "pc": 25.4 / 6, "in": 25.4, "mm": 1, "cm": 10}

// svgSize is the drawn size in millimetres of an SVG document, read from
// the width and height of its root element; ok is false when either is
// missing, a percentage or not a positive length.
func svgSize(b []byte) (w, h float64, ok bool) {
	re := svgPatterns()
	tag := re.tag.Find(b)
	if tag == nil {
		return 0, 0, false
	}
	length := func(re *regexp.Regexp) (float64, bool) {
		m := re.FindSubmatch(tag)
		if m == nil {
			return 0, false
		}
		v, err := strconv.ParseFloat(string(m[1]), 64)
		per, known := mmPer[string(bytes.ToLower(m[2]))]
		if err != nil || !known || !(v > 0) {
			return 0, false
		}
		return v * per, true
	}
	w, okw := length(re.width)
	h, okh := length(re.height)
	if !okw || !okh {
		return 0, 0, false
	}
	return w, h, true
}

// figureClass is the class of the figure that shows the file dest:
// "landscape" when it prints larger on a page turned sideways, else "".
func (r *nodes) figureClass(dest string) string {
	if !strings.EqualFold(path.Ext(dest), ".svg") {
		return ""
	}
	if w, h, ok := svgSize(r.files[dest]); ok && landscape(w, h) {
		return "landscape"
	}
	return ""
}

// kindTokens is the node kind of a table cell's text rendered as
// words that do not break inside (tokens).
var kindTokens = ast.NewNodeKind("RiskauditTokens")

// tokens is a numeric cell's text in a wide table: it may wrap between
// its words, never inside one, so that a date such as 2026-01-31 or a
// number such as −0.125 is not split at its hyphen or minus sign.
type tokens struct {
	ast.BaseInline
	text string
}

// Kind implements ast.Node.
func (t *tokens) Kind() ast.NodeKind { return kindTokens }

// Dump implements ast.Node.
func (t *tokens) Dump(src []byte, level int) {
	ast.DumpHelper(t, src, level, map[string]string{"text": t.text}, nil)
}

// renderTokens writes each word in a span that does not wrap, the words
// separated by spaces.
func (r *nodes) renderTokens(w util.BufWriter, _ []byte, node ast.Node, entering bool) (ast.WalkStatus, error) {
	if entering {
		for i, f := range strings.Fields(node.(*tokens).text) {
			if i > 0 {
				_, _ = w.WriteString(" ")
			}
			_, _ = w.WriteString(`<span class="nw">`)
			_, _ = w.WriteString(template.HTMLEscapeString(f))
			_, _ = w.WriteString("</span>")
		}
	}
	return ast.WalkSkipChildren, nil
}

// asTokens replaces the content of a numeric cell with its text as
// tokens.
func asTokens(c ast.Node, text string) {
	for c.FirstChild() != nil {
		c.RemoveChild(c, c.FirstChild())
	}
	c.AppendChild(c, &tokens{text: text})
}

// maxKeptRows is the longest table (body rows) printed on one page
// rather than split across two: a short table cut in half is harder to
// read than one moved to the next page.
const maxKeptRows = 15
