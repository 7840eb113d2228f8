package htmlreport

import (
	"bytes"
	"encoding/base64"
	"strings"
	"testing"

	"golang.org/x/net/html"
)

// parse reads the page with golang.org/x/net/html, an HTML5 parser
// independent of the renderer, so the checks see the document a browser
// builds.
func parse(t *testing.T, page []byte) *html.Node {
	t.Helper()
	doc, err := html.Parse(bytes.NewReader(page))
	if err != nil {
		t.Fatal(err)
	}
	return doc
}

func each(n *html.Node, f func(*html.Node)) {
	f(n)
	for c := n.FirstChild; c != nil; c = c.NextSibling {
		each(c, f)
	}
}

func attr(n *html.Node, key string) (string, bool) {
	for _, a := range n.Attr {
		if a.Key == key {
			return a.Val, true
		}
	}
	return "", false
}

func textOf(n *html.Node) string {
	var b strings.Builder
	each(n, func(c *html.Node) {
		if c.Type == html.TextNode {
			b.WriteString(c.Data)
		}
	})
	return b.String()
}

const hostile = `<script>alert(1)</script>`

// A report as report.Write makes it: user text escaped for Markdown
// (report.Escape puts a backslash before < and >) or in code spans, and
// raw HTML that a careless writer could let through.
var sample = "# Model audit: \\<script\\>alert(1)\\</script\\>\n\n" +
	"Audit of `" + hostile + "` on the cohort `later.csv`.\n\n" +
	"## Stated purpose\n\n| | as stated |\n|---|---|\n| level `" + hostile + "` | 0.317 to 0.529 |\n| name | " + hostile + " |\n\n" +
	"> This audit is statistical evidence.\n\n" +
	"## Calibration\n\n![Calibration plot](calibration.svg)\n\n" +
	"<div onclick=\"x()\">raw block</div>\n\nInline <img src=\"http://example.invalid/x.png\"> raw.\n\n" +
	"[a link](javascript:alert(1))\n"

func TestPage(t *testing.T) {
	svg := []byte(`<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"/>`)
	page, err := Page([]byte(sample), map[string][]byte{"calibration.svg": svg})
	if err != nil {
		t.Fatal(err)
	}
	doc := parse(t, page)
	var title, h1, csp string
	var toc []string
	var imgs, figures int
	var nums []string
	each(doc, func(n *html.Node) {
		if n.Type != html.ElementNode {
			return
		}
		switch n.Data {
		case "script", "iframe", "object", "embed", "link", "base", "form":
			t.Errorf("the page has a <%s> element", n.Data)
		case "meta":
			if v, _ := attr(n, "http-equiv"); v == "Content-Security-Policy" {
				csp, _ = attr(n, "content")
			}
		case "title":
			title = textOf(n)
		case "h1":
			h1 = textOf(n)
		case "nav":
			each(n, func(a *html.Node) {
				if a.Type == html.ElementNode && a.Data == "a" {
					href, _ := attr(a, "href")
					toc = append(toc, href+" "+textOf(a))
				}
			})
		case "figure":
			figures++
		case "img":
			imgs++
			src, _ := attr(n, "src")
			want := "data:image/svg+xml;base64," + base64.StdEncoding.EncodeToString(svg)
			if src != want {
				t.Errorf("img src = %.60q, want the figure as a data: URI", src)
			}
		case "td":
			if c, _ := attr(n, "class"); c == "num" {
				nums = append(nums, textOf(n))
			}
		}
		for _, a := range n.Attr {
			if strings.HasPrefix(a.Key, "on") {
				t.Errorf("<%s> has the event attribute %s", n.Data, a.Key)
			}
			if v := strings.ToLower(a.Val); (a.Key == "href" || a.Key == "src") && (strings.HasPrefix(v, "http") || strings.HasPrefix(v, "javascript")) {
				t.Errorf("<%s %s=%q> would leave the page", n.Data, a.Key, a.Val)
			}
		}
	})
	if title != "Model audit: "+hostile || h1 != title {
		t.Errorf("title %q, h1 %q: want the hostile name as text", title, h1)
	}
	if want := []string{"#stated-purpose Stated purpose", "#calibration Calibration"}; strings.Join(toc, "|") != strings.Join(want, "|") {
		t.Errorf("contents %q, want %q", toc, want)
	}
	if imgs != 1 || figures != 1 {
		t.Errorf("%d images in %d figures, want 1 in 1", imgs, figures)
	}
	if strings.Join(nums, "|") != "0.317 to 0.529|name" {
		t.Errorf("cells marked as numbers: %q", nums)
	}
	body := textOf(doc)
	for _, want := range []string{
		"Audit of " + hostile,      // code span
		"level " + hostile,         // code span in a table
		"name " + hostile,          // raw HTML in a table cell, shown as text
		`<div onclick="x()">`,      // raw HTML block, shown as text
		`<img src="http://example`, // raw inline HTML, shown as text
		"This audit is statistical evidence.",
	} {
		if !strings.Contains(strings.Join(strings.Fields(body), " "), want) {
			t.Errorf("the page's text lacks %q", want)
		}
	}
	if csp != ContentSecurityPolicy {
		t.Errorf("the page's content security policy is %q, want %q", csp, ContentSecurityPolicy)
	}
}

func TestPageMissingImage(t *testing.T) {
	_, err := Page([]byte("# r\n\n![ROC](roc.svg)\n"), map[string][]byte{"calibration.svg": nil})
	if err == nil || !strings.Contains(err.Error(), `"roc.svg"`) {
		t.Errorf("err = %v, want one naming roc.svg", err)
	}
}

func TestNumeric(t *testing.T) {
	for _, c := range []struct {
		s    string
		want bool
	}{
		{"0.746", true}, {"0.317 to 0.529", true}, {"446 (16.1%)", true}, {"-0.0489", true},
		{"1.3%–5.6%", true}, {"< 0.0001", true}, {"≥ 0.7", true},
		{"", false}, {"to", false}, {"met", false}, {"10 groups, 10 df", false}, {"age 65", false},
		{"0.0028 (least, at threshold 0.05)", false},
	} {
		if got := numeric(c.s); got != c.want {
			t.Errorf("numeric(%q) = %v, want %v", c.s, got, c.want)
		}
	}
}

func TestBreakable(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"net_benefit_gain", "net_<wbr>benefit_<wbr>gain"},
		{"a<b", "a&lt;b"},
		{strings.Repeat("x", 20), strings.Repeat("x", 16) + "<wbr>xxxx"},
		{"two words", "two words"},
		{"bmi=24.3-<27.5", "bmi=<wbr>24.3-<wbr>&lt;27.5"},
		{"1,000 a.b", "1,000 a.<wbr>b"},
	} {
		if got := breakable(c.in); got != c.want {
			t.Errorf("breakable(%q) = %q, want %q", c.in, got, c.want)
		}
	}
}
