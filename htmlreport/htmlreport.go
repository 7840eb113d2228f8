// Package htmlreport renders a riskaudit Markdown report (report.md,
// compare.md, trend.md) as one self-contained HTML page: the same
// content, a table of contents, the figures inline as data: URIs, a
// style sheet of its own with print rules for A4, and nothing that
// makes the browser fetch anything.
//
// The Markdown is parsed and rendered by goldmark (CommonMark with
// GitHub-style pipe tables, from the sub-package mdtable). Text is
// always escaped; raw HTML in the Markdown never reaches the page as
// markup: it is shown as the text it is, so a name such as <script>
// reads as written and runs nothing.
package htmlreport

import (
	"bytes"
	"encoding/base64"
	"fmt"
	"html/template"
	"path"
	"strings"

	"github.com/yuin/goldmark"
	"github.com/yuin/goldmark/ast"
	extast "github.com/yuin/goldmark/extension/ast"
	"github.com/yuin/goldmark/parser"
	"github.com/yuin/goldmark/renderer"
	"github.com/yuin/goldmark/text"
	"github.com/yuin/goldmark/util"

	"github.com/riskaudit/riskaudit/htmlreport/mdtable"
)

// ContentSecurityPolicy is the policy the page declares: nothing may be
// loaded from anywhere (images only from data: URIs, styles only from
// the page itself) and no script runs, so a page opened in a browser
// makes no request and a hostile string in it cannot act.
const ContentSecurityPolicy = "default-src 'none'; img-src data:; style-src 'unsafe-inline'; base-uri 'none'; form-action 'none'"

// Page renders the Markdown md as a complete HTML document. Files are
// the files the Markdown's images name (relative names such as
// "roc.svg"), each embedded where it is named; an image naming a file
// that is not among them is an error, since the page would show a hole.
// The first level-1 heading is the page's title; the level-2 headings
// make the table of contents and, in print, each starts a new page
// unless its section is short (markRunOn).
func Page(md []byte, files map[string][]byte) ([]byte, error) {
	r := &nodes{files: files}
	gm := goldmark.New(
		goldmark.WithExtensions(mdtable.New()),
		goldmark.WithParserOptions(parser.WithAutoHeadingID()),
		goldmark.WithRendererOptions(renderer.WithNodeRenderers(util.Prioritized(r, 100))),
	)
	doc := gm.Parser().Parse(text.NewReader(md))
	title, toc := outline(doc, md)
	markNumbers(doc, md)
	markRunOn(doc, md)
	var body bytes.Buffer
	if err := gm.Renderer().Render(&body, md, doc); err != nil {
		return nil, fmt.Errorf("rendering the HTML page: %w", err)
	}
	if r.err != nil {
		return nil, r.err
	}
	var nav bytes.Buffer
	if err := contents().Execute(&nav, toc); err != nil {
		return nil, fmt.Errorf("writing the HTML page's contents: %w", err)
	}
	// The contents go after the title and the opening paragraphs, before
	// the first section. Every text in the body is escaped, so "<h2"
	// there can only be goldmark's own heading.
	html := body.String()
	if i := strings.Index(html, "<h2"); i >= 0 {
		html = html[:i] + nav.String() + html[i:]
	} else {
		html += nav.String()
	}
	var out bytes.Buffer
	err := page().Execute(&out, pageData{Title: title, CSP: ContentSecurityPolicy, Style: template.CSS(style),
		Body: template.HTML(html)})
	if err != nil {
		return nil, fmt.Errorf("writing the HTML page: %w", err)
	}
	return out.Bytes(), nil
}

// Entry is one line of the table of contents.
type Entry struct {
	ID, Text string
}

// outline returns the text of the first level-1 heading and the
// level-2 headings.
func outline(doc ast.Node, src []byte) (string, []Entry) {
	var title string
	var toc []Entry
	_ = ast.Walk(doc, func(n ast.Node, entering bool) (ast.WalkStatus, error) {
		h, ok := n.(*ast.Heading)
		if !entering || !ok {
			return ast.WalkContinue, nil
		}
		switch {
		case h.Level == 1 && title == "":
			title = plainText(h, src)
		case h.Level == 2:
			id, _ := h.AttributeString("id")
			b, _ := id.([]byte)
			toc = append(toc, Entry{ID: string(b), Text: plainText(h, src)})
		}
		return ast.WalkSkipChildren, nil
	})
	if title == "" {
		title = "riskaudit report"
	}
	return title, toc
}

// markNumbers gives every table cell whose text is a number, an
// interval or a count with its share (such as "0.317 to 0.529" or
// "446 (16.1%)"), or a short word or two, the class "num", which keeps
// it on one line, in tables
// of up to maxNumColumns columns; a wider table is marked "wide" and
// its numbers may wrap between their words (never inside one: see
// tokens), so that it fits the page. A table of at most maxKeptRows
// body rows is marked "keep": in print it is not split across pages.
func markNumbers(doc ast.Node, src []byte) {
	_ = ast.Walk(doc, func(n ast.Node, entering bool) (ast.WalkStatus, error) {
		tb, ok := n.(*extast.Table)
		if !entering || !ok {
			return ast.WalkContinue, nil
		}
		wide := len(tb.Alignments) > maxNumColumns
		var class []string
		if wide {
			class = append(class, "wide")
		}
		if bodyRows(tb) <= maxKeptRows {
			class = append(class, "keep")
		}
		if class != nil {
			tb.SetAttributeString("class", []byte(strings.Join(class, " ")))
		}
		_ = ast.Walk(tb, func(n ast.Node, entering bool) (ast.WalkStatus, error) {
			if c, ok := n.(*extast.TableCell); ok && entering {
				t := plainText(c, src)
				switch {
				case wide && numeric(t):
					asTokens(c, t)
				case !wide && (numeric(t) || len([]rune(t)) <= maxShortCell):
					c.SetAttributeString("class", []byte("num"))
				}
				return ast.WalkSkipChildren, nil
			}
			return ast.WalkContinue, nil
		})
		return ast.WalkSkipChildren, nil
	})
}

// bodyRows counts the rows of a table below its heading row.
func bodyRows(tb *extast.Table) int {
	n := 0
	for c := tb.FirstChild(); c != nil; c = c.NextSibling() {
		if _, ok := c.(*extast.TableRow); ok {
			n++
		}
	}
	return n
}

// maxShortCell is the longest text of a cell kept on one line as a
// number is ("not met", "review").
const maxShortCell = 12

// maxNumColumns is the widest table whose numbers are kept on one line.
const maxNumColumns = 6

// numeric reports whether s is short and made of numbers: digits, signs,
// decimal points, percent signs, brackets, comparison signs and the word
// "to" between two numbers.
func numeric(s string) bool {
	s = strings.TrimSpace(s)
	if s == "" || len([]rune(s)) > 28 {
		return false
	}
	digits := false
	for _, f := range strings.Fields(s) {
		if f == "to" {
			continue
		}
		for _, c := range f {
			switch {
			case c >= '0' && c <= '9':
				digits = true
			case strings.ContainsRune(".,%+-−–()<>≥≤=×/*", c):
			default:
				return false
			}
		}
	}
	return digits
}

// plainText is the text of a node's inline content, unescaped (the
// template escapes it again).
func plainText(n ast.Node, src []byte) string {
	var b strings.Builder
	_ = ast.Walk(n, func(c ast.Node, entering bool) (ast.WalkStatus, error) {
		if !entering {
			return ast.WalkContinue, nil
		}
		switch t := c.(type) {
		case *ast.Text:
			v := t.Segment.Value(src)
			if !t.IsRaw() {
				v = util.ResolveEntityNames(util.ResolveNumericReferences(util.UnescapePunctuations(v)))
			}
			b.Write(v)
			if t.SoftLineBreak() {
				b.WriteByte(' ')
			}
		case *ast.String:
			b.Write(t.Value)
		case *ast.RawHTML:
			for i := 0; i < t.Segments.Len(); i++ {
				s := t.Segments.At(i)
				b.Write(s.Value(src))
			}
		}
		return ast.WalkContinue, nil
	})
	return b.String()
}

// nodes renders the nodes whose HTML the page decides itself: images
// (embedded), a paragraph that is only an image (a figure with its
// caption) and raw HTML (shown as text).
type nodes struct {
	files map[string][]byte
	err   error
}

// RegisterFuncs registers the renderers with goldmark.
func (r *nodes) RegisterFuncs(reg renderer.NodeRendererFuncRegisterer) {
	reg.Register(ast.KindImage, r.image)
	reg.Register(ast.KindParagraph, r.paragraph)
	reg.Register(ast.KindRawHTML, r.rawHTML)
	reg.Register(ast.KindHTMLBlock, r.htmlBlock)
	reg.Register(ast.KindCodeSpan, r.codeSpan)
	reg.Register(kindTokens, r.renderTokens)
}

// dataURI is the file named dest as a data: URI, or "" (and r.err set)
// when it is not one of the page's files.
func (r *nodes) dataURI(dest string) string {
	data, ok := r.files[dest]
	if !ok {
		if r.err == nil {
			r.err = fmt.Errorf("the report names the image %q, which is not among its files", dest)
		}
		return ""
	}
	mime := "application/octet-stream"
	switch strings.ToLower(path.Ext(dest)) {
	case ".svg":
		mime = "image/svg+xml"
	case ".png":
		mime = "image/png"
	}
	return "data:" + mime + ";base64," + base64.StdEncoding.EncodeToString(data)
}

func (r *nodes) writeImage(w util.BufWriter, src []byte, n *ast.Image) {
	alt := plainText(n, src)
	fmt.Fprintf(w, `<img src="%s" alt="%s">`, r.dataURI(string(n.Destination)), template.HTMLEscapeString(alt))
}

func (r *nodes) image(w util.BufWriter, src []byte, node ast.Node, entering bool) (ast.WalkStatus, error) {
	if entering {
		r.writeImage(w, src, node.(*ast.Image))
	}
	return ast.WalkSkipChildren, nil
}

func (r *nodes) paragraph(w util.BufWriter, src []byte, node ast.Node, entering bool) (ast.WalkStatus, error) {
	if img, ok := node.FirstChild().(*ast.Image); ok && node.ChildCount() == 1 {
		if entering {
			// A figure right under its heading stays upright: turned, it
			// would leave the heading alone on the page before.
			_, underHeading := node.PreviousSibling().(*ast.Heading)
			if c := r.figureClass(string(img.Destination)); c != "" && !underHeading {
				fmt.Fprintf(w, `<figure class="%s">`, c)
			} else {
				_, _ = w.WriteString("<figure>")
			}
			r.writeImage(w, src, img)
			fmt.Fprintf(w, "<figcaption>%s</figcaption></figure>\n", template.HTMLEscapeString(plainText(img, src)))
		}
		return ast.WalkSkipChildren, nil
	}
	if entering {
		_, _ = w.WriteString("<p>")
	} else {
		_, _ = w.WriteString("</p>\n")
	}
	return ast.WalkContinue, nil
}

func (r *nodes) rawHTML(w util.BufWriter, src []byte, node ast.Node, entering bool) (ast.WalkStatus, error) {
	if entering {
		n := node.(*ast.RawHTML)
		for i := 0; i < n.Segments.Len(); i++ {
			s := n.Segments.At(i)
			_, _ = w.WriteString(template.HTMLEscapeString(string(s.Value(src))))
		}
	}
	return ast.WalkSkipChildren, nil
}

func (r *nodes) htmlBlock(w util.BufWriter, src []byte, node ast.Node, entering bool) (ast.WalkStatus, error) {
	n := node.(*ast.HTMLBlock)
	if entering {
		_, _ = w.WriteString("<p>")
		for i := 0; i < n.Lines().Len(); i++ {
			s := n.Lines().At(i)
			_, _ = w.WriteString(template.HTMLEscapeString(string(s.Value(src))))
		}
		if n.HasClosure() {
			_, _ = w.WriteString(template.HTMLEscapeString(string(n.ClosureLine.Value(src))))
		}
		_, _ = w.WriteString("</p>\n")
	}
	return ast.WalkSkipChildren, nil
}

// codeSpan writes inline code (file paths, column names, levels: user
// text) escaped, with break opportunities after the characters that
// separate a name's parts and every breakRun characters of a run
// without one, so that a long name wraps inside its table column
// instead of widening the table; copying the text copies no extra
// character.
func (r *nodes) codeSpan(w util.BufWriter, src []byte, node ast.Node, entering bool) (ast.WalkStatus, error) {
	if !entering {
		return ast.WalkContinue, nil
	}
	var b strings.Builder
	for c := node.FirstChild(); c != nil; c = c.NextSibling() {
		if t, ok := c.(*ast.Text); ok {
			b.Write(t.Segment.Value(src))
		}
	}
	_, _ = w.WriteString("<code>")
	_, _ = w.WriteString(breakable(strings.ReplaceAll(b.String(), "\n", " ")))
	_, _ = w.WriteString("</code>")
	return ast.WalkSkipChildren, nil
}

// breakRun is the longest run of characters a name is left without a
// break opportunity.
const breakRun = 16

// breakable escapes s for HTML and adds <wbr> after '_', '/', '.', '-',
// ':', ',', '=' and '+', and within any longer run of other characters;
// never inside a number (the '.' or ',' of 27.5 or 1,000 between two
// digits), so that a cut such as 24.3-<27.5 is not printed "27." above "5".
func breakable(s string) string {
	var b strings.Builder
	run := 0
	r := []rune(s)
	digit := func(k int) bool { return k >= 0 && k < len(r) && r[k] >= '0' && r[k] <= '9' }
	for k, c := range r {
		b.WriteString(template.HTMLEscapeString(string(c)))
		run++
		inNumber := (c == '.' || c == ',') && digit(k-1) && digit(k+1)
		switch {
		case c == ' ':
			run = 0
		case inNumber:
		case strings.ContainsRune("_/.-:,=+", c) || run >= breakRun:
			b.WriteString("<wbr>")
			run = 0
		}
	}
	return b.String()
}

var _ renderer.NodeRenderer = (*nodes)(nil)
