package htmlreport

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"golang.org/x/net/html"
)

// TestSVGSize: the drawn size of an SVG from its root's width and
// height, in the CSS units (1 in = 25.4 mm = 72 pt = 96 px, the CSS
// Values and Units specification's absolute lengths).
func TestSVGSize(t *testing.T) {
	for _, c := range []struct {
		svg  string
		w, h float64
		ok   bool
	}{
		{`<svg width="792pt" height="526.67pt" viewBox="0 0 792 526.67">`, 279.4, 185.79, true}, // 11 in wide
		{"<?xml version=\"1.0\"?>\n<svg\n\twidth='96px' height=\"48\">", 25.4, 12.7, true},
		{`<svg width="8.5in" height="11in">`, 215.9, 279.4, true},
		{`<svg height="20mm" width="3cm">`, 30, 20, true},
		{`<svg width="100%" height="50%">`, 0, 0, false},
		{`<svg viewBox="0 0 10 10">`, 0, 0, false},
		{`<svg width="0pt" height="10pt">`, 0, 0, false},
		{`<svg width="10em" height="10pt">`, 0, 0, false},
		{`<rect width="10" height="10"/>`, 0, 0, false},
	} {
		w, h, ok := svgSize([]byte(c.svg))
		if ok != c.ok || math.Abs(w-c.w) > 0.01 || math.Abs(h-c.h) > 0.01 {
			t.Errorf("svgSize(%q) = %.2f, %.2f, %v; want %.2f, %.2f, %v", c.svg, w, h, ok, c.w, c.h, c.ok)
		}
	}
}

// TestLandscape: which figures print on a turned page. The portrait
// column is 182 × 200 mm for a figure, the turned one 269 × 160 mm
// (A4, 210 × 297 mm, less 14 mm margins each side; figure heights of
// the style sheet); a figure turns when it prints at least 15% larger.
func TestLandscape(t *testing.T) {
	pt := 25.4 / 72
	for _, c := range []struct {
		name string
		w, h float64 // points, as the figures are drawn
		want bool
	}{
		// 65.1% upright (182/279.4), 86.1% turned (160/185.8): turned.
		{"subgroup chart, 16 rows", 792, 526.67, true},
		// 65.1% upright, 61.1% turned (160/262.0): upright.
		{"subgroup chart, 26 rows of long labels", 792, 742.68, false},
		{"calibration figure, fits upright", 432, 623.93, false},
		{"cluster forest, 7 in", 504, 328.48, false},
		// 14 mm too wide: 92.9% upright, 100% turned, a gain of 7.7%.
		{"a little too wide", 555.6, 283.5, false},
		// 50% upright, 74% turned.
		{"twice the column", 1032, 400, true},
	} {
		if got := landscape(c.w*pt, c.h*pt); got != c.want {
			p := printScale(c.w*pt, c.h*pt, portraitWidthMM, portraitFigureMM)
			l := printScale(c.w*pt, c.h*pt, landscapeWidthMM, landscapeFigureMM)
			t.Errorf("%s (%v × %v pt): landscape %v, want %v (upright %.3f, turned %.3f)", c.name, c.w, c.h, got, c.want, p, l)
		}
	}
}

// classOf returns the class attribute of n, "" without one.
func classOf(n *html.Node) string {
	v, _ := attr(n, "class")
	return v
}

// TestPrintClasses: the page marks a too-wide figure landscape (unless
// it comes right under its heading, which would be left alone), short
// tables keep and wide ones wide, and writes a wide table's numbers as
// words that do not break (so a date is not split at its hyphen).
func TestPrintClasses(t *testing.T) {
	row := func(cells ...string) string { return "| " + strings.Join(cells, " | ") + " |\n" }
	var md strings.Builder
	md.WriteString("# Report\n\n## Figures\n\nThe figures:\n\n![Wide chart](wide.svg)\n\n![Narrow chart](narrow.svg)\n\n![A picture](photo.png)\n\n")
	md.WriteString("## Wide first\n\n![Wide under its heading](wide.svg)\n\n")
	md.WriteString("## Tables\n\nShort, wide:\n\n")
	md.WriteString(row("period", "dates", "n", "events", "expected", "O/E (95% CI)", "CITL (95% CI)"))
	md.WriteString(row("---", "---", "---", "---", "---", "---", "---"))
	md.WriteString(row("2026-01", "2026-01-01 to 2026-01-31", "233", "33", "28.5", "1.159 (0.845 to 1.589)", "`level-name`"))
	md.WriteString("\nLong, narrow:\n\n")
	md.WriteString(row("item", "value"))
	md.WriteString(row("---", "---"))
	for i := 0; i < maxKeptRows+1; i++ {
		md.WriteString(row(fmt.Sprint(i), "−0.125"))
	}
	md.WriteString("\nShort, narrow:\n\n")
	md.WriteString(row("item", "value"))
	md.WriteString(row("---", "---"))
	for i := 0; i < maxKeptRows; i++ {
		md.WriteString(row(fmt.Sprint(i), "2026-01-31"))
	}
	files := map[string][]byte{
		"wide.svg":   []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="792pt" height="526.67pt"/>`),
		"narrow.svg": []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="432pt" height="380pt"/>`),
		"photo.png":  {0x89, 'P', 'N', 'G'},
	}
	page, err := Page([]byte(md.String()), files)
	if err != nil {
		t.Fatal(err)
	}
	doc := parse(t, page)
	figures := map[string]string{}
	var tables []string
	var spans []string
	var wideCells []string
	each(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		switch n.Data {
		case "figure":
			for c := n.FirstChild; c != nil; c = c.NextSibling {
				if c.Type == html.ElementNode && c.Data == "img" {
					alt, _ := attr(c, "alt")
					figures[alt] = classOf(n)
				}
			}
		case "table":
			tables = append(tables, classOf(n))
			if classOf(n) == "wide keep" {
				each(n, func(c *html.Node) {
					if c.Type == html.ElementNode && c.Data == "td" {
						wideCells = append(wideCells, classOf(c))
					}
					if c.Type == html.ElementNode && c.Data == "span" && classOf(c) == "nw" {
						spans = append(spans, textOf(c))
					}
				})
			}
		}
	})
	for alt, want := range map[string]string{"Wide chart": "landscape", "Narrow chart": "", "A picture": "", "Wide under its heading": ""} {
		if got, ok := figures[alt]; !ok || got != want {
			t.Errorf("figure %q: class %q (found %v), want %q", alt, got, ok, want)
		}
	}
	if want := []string{"wide keep", "", "keep"}; fmt.Sprint(tables) != fmt.Sprint(want) {
		t.Errorf("table classes %q, want %q", tables, want)
	}
	// Every numeric cell's words, and only those: the code span is text.
	wantSpans := []string{"2026-01", "2026-01-01", "to", "2026-01-31", "233", "33", "28.5", "1.159", "(0.845", "to", "1.589)"}
	if fmt.Sprint(spans) != fmt.Sprint(wantSpans) {
		t.Errorf("unbreakable words of the wide table %q, want %q", spans, wantSpans)
	}
	if strings.Contains(string(page), `<span class="nw">level-name`) {
		t.Error("a code span in a wide table was made unbreakable words")
	}
	// The text reads as written: words and the spaces between them.
	if !strings.Contains(string(page), `<span class="nw">2026-01-01</span> <span class="nw">to</span> <span class="nw">2026-01-31</span>`) {
		t.Error("the dates' words are not separated by single spaces")
	}
	// The style sheet has the rules these classes are for.
	for _, rule := range []string{"@page turned { size: A4 landscape; }", "figure.landscape { page: turned;", "table.keep { break-inside: avoid; }", ".nw { white-space: nowrap; }"} {
		if !strings.Contains(style, rule) && !strings.Contains(style, strings.Replace(rule, ".nw {", "td.num, .nw {", 1)) {
			t.Errorf("the style sheet lacks %q", rule)
		}
	}
}
