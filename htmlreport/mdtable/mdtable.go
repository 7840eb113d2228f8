// Package mdtable is a goldmark extension for GitHub-style pipe tables:
// a paragraph whose second line is a delimiter row (such as
// "|---|:--:|--:|") becomes a table of the extension/ast node types,
// rendered as <table>, <thead>, <tbody>, <tr>, <th> and <td> with each
// column's alignment as a text-align style.
//
// It takes the place of goldmark's extension package for riskaudit's
// reports: that package compiles its link-detection regular expressions
// when the program starts, whichever of its extensions is used, and every
// start of riskaudit paid for it. The tables parsed and the HTML written
// are the same as goldmark's table extension gives (mdtable_test.go
// compares the two).
package mdtable

import (
	"fmt"

	"github.com/yuin/goldmark"
	gast "github.com/yuin/goldmark/ast"
	"github.com/yuin/goldmark/extension/ast"
	"github.com/yuin/goldmark/parser"
	"github.com/yuin/goldmark/renderer"
	"github.com/yuin/goldmark/renderer/html"
	"github.com/yuin/goldmark/text"
	"github.com/yuin/goldmark/util"
)

// New returns the extension: the paragraph transformer that makes the
// tables, the transformer that unescapes "\|" inside code spans of a
// cell, and the tables' HTML renderer.
func New() goldmark.Extender {
	return extender{}
}

type extender struct{}

// Extend adds the table parser and renderer to m.
func (extender) Extend(m goldmark.Markdown) {
	m.Parser().AddOptions(
		parser.WithParagraphTransformers(util.Prioritized(paragraphs{}, 200)),
		parser.WithASTTransformers(util.Prioritized(codePipes{}, 0)),
	)
	m.Renderer().AddOptions(renderer.WithNodeRenderers(util.Prioritized(newHTMLRenderer(), 500)))
}

// pipesKey keys the parser context's list of the cells with an escaped
// pipe inside inline code (a []pipeCell).
var pipesKey = parser.NewContextKey()

// pipeCell is a cell with "\|" after a backtick; at is the offset in the
// source of each such backslash.
type pipeCell struct {
	cell *ast.TableCell
	at   []int
}

// paragraphs turns a paragraph with a delimiter row into a table.
type paragraphs struct{}

// Transform makes a table of the lines of node from the first line
// followed by a delimiter row with as many columns as it has cells. The
// lines before that heading line stay a paragraph.
func (paragraphs) Transform(node *gast.Paragraph, reader text.Reader, pc parser.Context) {
	lines := node.Lines()
	for i := 1; i < lines.Len(); i++ {
		delim := lines.At(i)
		aligns := delimiterRow(delim.Value(reader.Source()))
		if aligns == nil {
			continue
		}
		head := splitRow(lines.At(i-1), aligns, true, reader.Source(), pc)
		if head.ChildCount() != len(aligns) {
			return
		}
		tb := ast.NewTable()
		tb.Alignments = aligns
		tb.SetPos(node.Pos())
		tb.AppendChild(tb, ast.NewTableHeader(head))
		for j := i + 1; j < lines.Len(); j++ {
			tb.AppendChild(tb, splitRow(lines.At(j), aligns, false, reader.Source(), pc))
		}
		parent := node.Parent()
		lines.SetSliced(0, i-1)
		parent.InsertAfter(parent, node, tb)
		if lines.Len() == 0 {
			parent.RemoveChild(parent, node)
			return
		}
		// The paragraph left above the table ends without its newline.
		last := lines.At(i - 2)
		last.Stop--
		lines.Set(i-2, last)
		return
	}
}

// delimiterRow returns the alignment of each column of a delimiter row,
// or nil when line is not one: at most three columns of indentation,
// then cells of dashes with an optional colon at either end, separated
// by pipes, with at least one pipe or colon on the line.
func delimiterRow(line []byte) []ast.Alignment {
	if w, _ := util.IndentWidth(line, 0); w > 3 {
		return nil
	}
	dashesOnly := true
	for _, c := range line {
		if c != '-' {
			dashesOnly = false
		}
		if !util.IsSpace(c) && c != '-' && c != '|' && c != ':' {
			return nil
		}
	}
	if dashesOnly {
		return nil
	}
	cols := splitPipes(line)
	if util.IsBlank(cols[0]) {
		cols = cols[1:]
	}
	if n := len(cols); n > 0 && util.IsBlank(cols[n-1]) {
		cols = cols[:n-1]
	}
	var aligns []ast.Alignment
	for _, col := range cols {
		a, ok := alignment(col)
		if !ok {
			return nil
		}
		aligns = append(aligns, a)
	}
	return aligns
}

// splitPipes splits line at every '|'.
func splitPipes(line []byte) [][]byte {
	var cols [][]byte
	start := 0
	for k, c := range line {
		if c == '|' {
			cols = append(cols, line[start:k])
			start = k + 1
		}
	}
	return append(cols, line[start:])
}

// alignment reads one delimiter cell: one or more dashes, with a colon
// before them (left), after them (right) or both (center), and blanks
// (tab, newline, form feed, carriage return, space) around.
func alignment(col []byte) (ast.Alignment, bool) {
	col = trimBlank(col)
	left := len(col) > 0 && col[0] == ':'
	if left {
		col = col[1:]
	}
	right := len(col) > 0 && col[len(col)-1] == ':'
	if right {
		col = col[:len(col)-1]
	}
	if len(col) == 0 {
		return ast.AlignNone, false
	}
	for _, c := range col {
		if c != '-' {
			return ast.AlignNone, false
		}
	}
	switch {
	case left && right:
		return ast.AlignCenter, true
	case left:
		return ast.AlignLeft, true
	case right:
		return ast.AlignRight, true
	}
	return ast.AlignNone, true
}

// trimBlank drops the tabs, newlines, form feeds, carriage returns and
// spaces at both ends of b.
func trimBlank(b []byte) []byte {
	blank := func(c byte) bool { return c == '\t' || c == '\n' || c == '\f' || c == '\r' || c == ' ' }
	for len(b) > 0 && blank(b[0]) {
		b = b[1:]
	}
	for len(b) > 0 && blank(b[len(b)-1]) {
		b = b[:len(b)-1]
	}
	return b
}

// splitRow makes a row of the cells of one line, split at the pipes not
// escaped by a backslash, without the pipes at its ends. A body row
// keeps no more cells than the table has columns, and one with fewer
// cells gets empty ones; a heading row keeps all its cells (the caller
// refuses a heading row that does not fit the delimiter row).
func splitRow(seg text.Segment, aligns []ast.Alignment, head bool, src []byte, pc parser.Context) *ast.TableRow {
	row := ast.NewTableRow(aligns)
	row.SetPos(seg.Start)
	base := seg.Start - seg.Padding
	line := seg.TrimLeftSpace(src)
	line = line.TrimRightSpace(src)
	s := line.Value(src)
	pos, end := 0, len(s)
	if end > 0 && s[0] == '|' {
		pos++
	}
	if end > 0 && s[end-1] == '|' {
		end--
	}
	col := 0
	for ; pos < end; col++ {
		a := ast.AlignNone
		if col < len(aligns) {
			a = aligns[col]
		} else if !head {
			return row
		}
		cell := ast.NewTableCell()
		cell.SetPos(base + pos)
		cell.Alignment = a
		stop := cellEnd(s, pos, end, line.Start, cell, pc)
		cs := text.NewSegment(line.Start+pos, line.Start+stop)
		cs = cs.TrimLeftSpace(src)
		cs = cs.TrimRightSpace(src)
		cell.Lines().Append(cs)
		row.AppendChild(row, cell)
		pos = stop + 1
	}
	for ; col < len(aligns); col++ {
		row.AppendChild(row, ast.NewTableCell())
	}
	return row
}

// cellEnd returns the index in s of the pipe that ends the cell starting
// at pos (or end). A pipe after a backslash does not end it; when a
// backtick came before it in the cell, the backslash's source offset
// (off + its index) is noted in pc for codePipes.
func cellEnd(s []byte, pos, end, off int, cell *ast.TableCell, pc parser.Context) int {
	backtick := false
	var noted *pipeCell
	k := pos
	for ; k < end; k++ {
		switch s[k] {
		case '`':
			backtick = true
		case '|':
			if k == 0 || s[k-1] != '\\' {
				return k
			}
			if !backtick {
				continue
			}
			if noted == nil {
				noted = &pipeCell{cell: cell}
				list, _ := pc.Get(pipesKey).([]*pipeCell)
				pc.Set(pipesKey, append(list, noted))
			}
			noted.at = append(noted.at, off+k-1)
		}
	}
	return k
}

// codePipes removes the backslash of each "\|" inside the inline code
// of a table cell, where the inline parser keeps backslashes: in a
// table, "\|" is how a pipe is written in a cell, code or not.
type codePipes struct{}

// Transform splits the text of each such code span around its escaping
// backslashes.
func (codePipes) Transform(doc *gast.Document, reader text.Reader, pc parser.Context) {
	list, _ := pc.Get(pipesKey).([]*pipeCell)
	if list == nil {
		return
	}
	pc.Set(pipesKey, nil)
	for _, pcell := range list {
		_ = gast.Walk(pcell.cell, func(n gast.Node, entering bool) (gast.WalkStatus, error) {
			if entering && n.Kind() == gast.KindCodeSpan {
				dropBackslashes(n, pcell.at)
			}
			return gast.WalkContinue, nil
		})
	}
}

// dropBackslashes replaces each text child of span holding one of the
// offsets at by raw text segments without the byte at that offset.
func dropBackslashes(span gast.Node, at []int) {
	for c := span.FirstChild(); c != nil; {
		next := c.NextSibling()
		t, ok := c.(*gast.Text)
		if !ok {
			c = next
			continue
		}
		whole := t.Segment
		cur := gast.Node(t)
		for _, p := range at {
			if p < whole.Start || p >= whole.Stop {
				continue
			}
			seg := cur.(*gast.Text).Segment
			before := gast.NewRawTextSegment(seg.WithStop(p))
			after := gast.NewRawTextSegment(seg.WithStart(p + 1))
			span.InsertAfter(span, cur, before)
			span.InsertAfter(span, before, after)
			span.RemoveChild(span, cur)
			cur = after
		}
		c = next
	}
}

// htmlRenderer writes the table nodes as HTML5, each element keeping the
// attributes the HTML standard gives it (class and style among them).
type htmlRenderer struct {
	tableAttrs, headAttrs, rowAttrs, cellAttrs util.BytesFilter
}

func newHTMLRenderer() *htmlRenderer {
	g := html.GlobalAttributeFilter
	return &htmlRenderer{
		tableAttrs: g.ExtendString("align,bgcolor,border,cellpadding,cellspacing,frame,rules,summary,width"),
		headAttrs:  g.ExtendString("align,bgcolor,char,charoff,valign"),
		rowAttrs:   g.ExtendString("align,bgcolor,char,charoff,valign"),
		cellAttrs:  g.ExtendString("abbr,align,axis,bgcolor,char,charoff,colspan,headers,height,rowspan,scope,valign,width"),
	}
}

// RegisterFuncs registers the renderers of the table nodes.
func (r *htmlRenderer) RegisterFuncs(reg renderer.NodeRendererFuncRegisterer) {
	reg.Register(ast.KindTable, r.table)
	reg.Register(ast.KindTableHeader, r.header)
	reg.Register(ast.KindTableRow, r.row)
	reg.Register(ast.KindTableCell, r.cell)
}

// open writes the start tag of element name with n's attributes.
func open(w util.BufWriter, name string, n gast.Node, attrs util.BytesFilter) {
	_, _ = w.WriteString("<" + name)
	if n.Attributes() != nil {
		html.RenderAttributes(w, n, attrs)
	}
	_, _ = w.WriteString(">")
}

func (r *htmlRenderer) table(w util.BufWriter, _ []byte, n gast.Node, entering bool) (gast.WalkStatus, error) {
	if entering {
		open(w, "table", n, r.tableAttrs)
		_, _ = w.WriteString("\n")
	} else {
		_, _ = w.WriteString("</table>\n")
	}
	return gast.WalkContinue, nil
}

// header writes the heading row, inside <thead>, and opens <tbody> when
// body rows follow.
func (r *htmlRenderer) header(w util.BufWriter, _ []byte, n gast.Node, entering bool) (gast.WalkStatus, error) {
	if entering {
		open(w, "thead", n, r.headAttrs)
		_, _ = w.WriteString("\n<tr>\n")
		return gast.WalkContinue, nil
	}
	_, _ = w.WriteString("</tr>\n</thead>\n")
	if n.NextSibling() != nil {
		_, _ = w.WriteString("<tbody>\n")
	}
	return gast.WalkContinue, nil
}

// row writes a body row, closing <tbody> after the last.
func (r *htmlRenderer) row(w util.BufWriter, _ []byte, n gast.Node, entering bool) (gast.WalkStatus, error) {
	if entering {
		open(w, "tr", n, r.rowAttrs)
		_, _ = w.WriteString("\n")
		return gast.WalkContinue, nil
	}
	_, _ = w.WriteString("</tr>\n")
	if n.Parent().LastChild() == n {
		_, _ = w.WriteString("</tbody>\n")
	}
	return gast.WalkContinue, nil
}

// cell writes a <th> (heading row) or <td>, its alignment added to its
// style attribute.
func (r *htmlRenderer) cell(w util.BufWriter, _ []byte, node gast.Node, entering bool) (gast.WalkStatus, error) {
	n := node.(*ast.TableCell)
	tag := "td"
	if n.Parent().Kind() == ast.KindTableHeader {
		tag = "th"
	}
	if !entering {
		_, _ = fmt.Fprintf(w, "</%s>\n", tag)
		return gast.WalkContinue, nil
	}
	if n.Alignment != ast.AlignNone {
		style := "text-align:" + n.Alignment.String()
		if v, ok := n.AttributeString("style"); ok {
			switch v := v.(type) {
			case []byte:
				style = string(v) + ";" + style
			case string:
				style = v + ";" + style
			default:
				style = ";" + style
			}
		}
		n.SetAttributeString("style", []byte(style))
	}
	open(w, tag, n, r.cellAttrs)
	return gast.WalkContinue, nil
}

var _ renderer.NodeRenderer = (*htmlRenderer)(nil)
