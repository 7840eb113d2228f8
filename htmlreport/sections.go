package htmlreport

import (
	"github.com/yuin/goldmark/ast"
	extast "github.com/yuin/goldmark/extension/ast"
)

// In print, each level-2 section starts a new page, so that a board
// member can find a section by its page and file it on its own. A short
// section (a paragraph or two and a small table, no figure) would leave
// most of its page blank: one of at most runOnMM of estimated printed
// height runs on after the section before it instead, with its heading
// kept on the page of its first lines.
const (
	// runOnMM is the longest section, in millimetres of the printed
	// column (A4 portrait less its margins: 182 × 265 mm), that runs on:
	// about a third of a page.
	runOnMM = 90.0
	// lineChars is how many characters of body text a line of the
	// printed column holds (9.5 pt type, 182 mm; a common-practice
	// estimate of half an em a character).
	lineChars = 105
	// textLineMM and tableLineMM are the height of a line of body text
	// (9.5 pt at 1.4 line spacing) and of a table row's line (8.3 pt,
	// with the cell's padding); blockGapMM is the space between blocks.
	textLineMM, tableLineMM, blockGapMM = 4.7, 5.6, 3.4
	// headingMM is a level-3 or level-4 heading with its margins.
	headingMM = 9.0
)

// markRunOn gives every level-2 heading whose section is short (see
// runOnMM) the class "run-on": the print style does not start a new
// page there.
func markRunOn(doc ast.Node, src []byte) {
	for n := doc.FirstChild(); n != nil; {
		h, ok := n.(*ast.Heading)
		if !ok || h.Level != 2 {
			n = n.NextSibling()
			continue
		}
		height, figure := 0.0, false
		n = h.NextSibling()
		for ; n != nil && !isSectionStart(n); n = n.NextSibling() {
			mm, fig := blockHeight(n, src)
			height += mm
			figure = figure || fig
		}
		if !figure && height <= runOnMM {
			h.SetAttributeString("class", []byte("run-on"))
		}
	}
}

// isSectionStart reports whether n opens a new level-2 (or level-1)
// section.
func isSectionStart(n ast.Node) bool {
	h, ok := n.(*ast.Heading)
	return ok && h.Level <= 2
}

// blockHeight estimates the printed height in millimetres of one block
// of a section, and whether it holds a figure (an image), which always
// makes its section start a page of its own.
func blockHeight(n ast.Node, src []byte) (mm float64, figure bool) {
	switch b := n.(type) {
	case *ast.Heading:
		return headingMM, false
	case *ast.Paragraph, *ast.TextBlock:
		if hasImage(b) {
			return 0, true
		}
		return lines(len(plainText(b, src)), lineChars)*textLineMM + blockGapMM, false
	case *extast.Table:
		return tableHeight(b, src) + blockGapMM, false
	case *ast.FencedCodeBlock, *ast.CodeBlock, *ast.HTMLBlock:
		return float64(max(1, n.Lines().Len()))*textLineMM + blockGapMM, false
	case *ast.ThematicBreak:
		return blockGapMM, false
	}
	// Lists, blockquotes and anything else: the sum of their blocks.
	for c := n.FirstChild(); c != nil; c = c.NextSibling() {
		h, fig := blockHeight(c, src)
		mm += h
		figure = figure || fig
	}
	return mm, figure
}

// tableHeight is a table's estimated height: each row as tall as its
// cell of most lines, a cell's width an equal share of the column.
func tableHeight(t *extast.Table, src []byte) float64 {
	cols := max(1, len(t.Alignments))
	cellChars := max(8, lineChars*115/100/cols) // table type is smaller
	var mm float64
	for r := t.FirstChild(); r != nil; r = r.NextSibling() {
		tall := 1.0
		for c := r.FirstChild(); c != nil; c = c.NextSibling() {
			tall = max(tall, lines(len(plainText(c, src)), cellChars))
		}
		mm += tall * tableLineMM
	}
	return mm
}

// lines is how many lines of width chars n characters take (at least
// one).
func lines(n, width int) float64 {
	return float64(max(1, (n+width-1)/width))
}

// hasImage reports whether an image is among n's descendants.
func hasImage(n ast.Node) bool {
	found := false
	_ = ast.Walk(n, func(c ast.Node, entering bool) (ast.WalkStatus, error) {
		if _, ok := c.(*ast.Image); ok && entering {
			found = true
			return ast.WalkStop, nil
		}
		return ast.WalkContinue, nil
	})
	return found
}
