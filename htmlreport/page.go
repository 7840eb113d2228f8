package htmlreport

import (
	"html/template"
	"sync"
)

// pageData fills the page template.
type pageData struct {
	Title, CSP string
	Style      template.CSS
	Body       template.HTML
}

// page is the document around the rendered Markdown, parsed at its
// first use (not at every start of the program). html/template
// escapes the title and the contents' text; the body is goldmark's
// output, in which every text is already escaped.
var page = sync.OnceValue(func() *template.Template {
	return template.Must(template.New("page").Parse(`<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta http-equiv="Content-Security-Policy" content="{{.CSP}}">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="generator" content="riskaudit">
<title>{{.Title}}</title>
<style>
{{.Style}}
</style>
</head>
<body>
<header class="masthead"><span class="tool">riskaudit</span></header>
<main>
{{.Body}}</main>
</body>
</html>
`))
})

// contents is the table of contents: the level-2 sections, parsed at
// its first use.
var contents = sync.OnceValue(func() *template.Template {
	return template.Must(template.New("contents").Parse(`{{if .}}<nav class="contents" aria-label="Contents">
<p class="contents-title">Contents</p>
<ol>
{{range .}}<li><a href="#{{.ID}}">{{.Text}}</a></li>
{{end}}</ol>
</nav>
{{end}}`))
})

// style is the page's own look: one readable column, quiet tables with
// aligned figures, the caution set apart, and print rules for A4 in
// which every level-2 section starts a page, a table of up to
// maxKeptRows rows is not split, a paragraph introducing a table stays
// with it, and a figure too wide for the portrait column
// (class landscape) gets a page of its own turned sideways. The
// millimetres here are those of print.go's constants. Fonts are the reader's own
// (no font is fetched).
const style = `
:root {
  --ink: #1d262e; --muted: #55616b; --rule: #d3d9de; --faint: #f3f5f7;
  --accent: #1b5e7a; --caution-ink: #7a3b00; --caution-bg: #fdf4e7; --caution-rule: #c8741a;
}
* { box-sizing: border-box; }
html { -webkit-text-size-adjust: 100%; }
body {
  margin: 0 auto; padding: 1.5rem 1.5rem 4rem; max-width: 62rem;
  color: var(--ink); background: #fff;
  font-family: "Source Sans 3", "Noto Sans", "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif;
  font-size: 15px; line-height: 1.5;
  overflow-wrap: break-word;
}
.masthead {
  display: flex; gap: .75rem; align-items: baseline; flex-wrap: wrap;
  border-bottom: 3px solid var(--accent); padding-bottom: .35rem; margin-bottom: 1.25rem;
  font-size: .8rem; color: var(--muted); text-transform: uppercase; letter-spacing: .06em;
}
.masthead .tool { color: var(--accent); font-weight: 700; letter-spacing: .12em; }
h1 { font-size: 1.7rem; line-height: 1.25; margin: .2rem 0 .8rem; font-weight: 650; }
h2 {
  font-size: 1.3rem; margin: 2.4rem 0 .7rem; padding-top: .4rem;
  border-top: 1px solid var(--rule); color: var(--accent); font-weight: 650;
}
h3 { font-size: 1.08rem; margin: 1.6rem 0 .5rem; }
h4 { font-size: 1rem; margin: 1.2rem 0 .4rem; }
p, ul, ol { margin: .5rem 0 .8rem; }
li { margin: .2rem 0; }
a { color: var(--accent); }
code {
  font-family: "DejaVu Sans Mono", "Noto Sans Mono", Consolas, "Liberation Mono", monospace;
  font-size: .86em; background: var(--faint); padding: .05em .3em; border-radius: 3px;
  overflow-wrap: anywhere;
}
pre { background: var(--faint); padding: .6rem .8rem; white-space: pre-wrap; overflow-wrap: anywhere; }
pre code { background: none; padding: 0; }
blockquote {
  margin: 1.2rem 0; padding: .7rem 1rem; border-left: 5px solid var(--caution-rule);
  background: var(--caution-bg); color: var(--caution-ink);
}
blockquote p { margin: .3rem 0; }
strong { font-weight: 650; }
table {
  border-collapse: collapse; margin: .6rem 0 1.2rem; max-width: 100%;
  font-size: .88rem; line-height: 1.35; font-variant-numeric: tabular-nums;
}
th, td {
  padding: .28rem .55rem; text-align: left; vertical-align: top;
  border-bottom: 1px solid var(--rule); overflow-wrap: break-word;
}
td code { overflow-wrap: break-word; }
td.num, .nw { white-space: nowrap; }
table.wide { font-size: .82rem; }
table.wide th, table.wide td { padding: .25rem .4rem; }
thead th { border-bottom: 2px solid var(--ink); font-weight: 650; background: #fff; }
tbody tr:nth-child(even) td { background: var(--faint); }
th:empty { background: none; }
figure { margin: 1.2rem 0 1.6rem; }
figure img { display: block; max-width: 100%; height: auto; margin: 0 auto; }
figcaption { font-size: .85rem; color: var(--muted); margin-top: .4rem; text-align: center; }
img { max-width: 100%; height: auto; }
nav.contents {
  margin: 1rem 0 1.5rem; padding: .6rem 1rem .4rem; border: 1px solid var(--rule); background: var(--faint);
  font-size: .92rem;
}
nav.contents .contents-title { margin: 0 0 .2rem; font-weight: 650; }
nav.contents ol { margin: 0 0 .3rem; padding-left: 1.6rem; columns: 2 16rem; column-gap: 2rem; }
nav.contents li { break-inside: avoid; }
nav.contents a { color: var(--ink); text-decoration: none; }
nav.contents a:hover { text-decoration: underline; }
@media screen and (max-width: 40rem) {
  body { padding: 1rem .6rem 3rem; font-size: 14px; }
  table { font-size: .8rem; }
  th, td { padding: .25rem .3rem; overflow-wrap: anywhere; }
  td.num { white-space: normal; }
}
@page {
  size: A4; margin: 15mm 14mm 17mm;
  @bottom-right {
    content: "page " counter(page) " of " counter(pages); color: #55616b;
    font-family: "Source Sans 3", "Noto Sans", "DejaVu Sans", "Segoe UI", Helvetica, Arial, sans-serif; font-size: 8pt;
  }
}
@page turned { size: A4 landscape; }
@media print {
  html, body { background: #fff; }
  body { max-width: none; margin: 0; padding: 0; font-size: 9.5pt; line-height: 1.4; }
  * { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
  h2 { break-before: page; border-top: none; margin-top: 0; padding-top: 0; }
  h2.run-on { break-before: auto; border-top: 1px solid var(--rule); margin-top: 1.6em; padding-top: .5em; }
  h2, h3, h4 { break-after: avoid; }
  table { font-size: 8.3pt; }
  table.wide { font-size: 7.6pt; }
  tr, figure, blockquote, nav.contents li { break-inside: avoid; }
  thead { display: table-header-group; }
  figure img { max-height: 200mm; }
  table.keep { break-inside: avoid; }
  p:has(+ table) { break-after: avoid; }
  figure.landscape { page: turned; margin: 0; }
  figure.landscape img { max-height: 160mm; }
  a { color: inherit; text-decoration: none; }
  nav.contents { background: none; }
}
`
