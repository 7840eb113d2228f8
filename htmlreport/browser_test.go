package htmlreport_test

// The browser test: report.html of the demo and of a stress audit (long
// and hostile names, many subgroups) loaded in headless Chromium, which
// must show every figure, log nothing to its console, make no request
// and lay the page out without horizontal overflow at screen width and
// at the width of an A4 page; a screenshot and a PDF are made of each.
// How it measures is described in DEVELOPERS.md ("The browser test").

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"golang.org/x/net/html"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/htmlreport"
	"github.com/riskaudit/riskaudit/internal/fixture"
)

// chromium finds the browser: $RISKAUDIT_CHROMIUM, else chromium,
// chromium-browser or google-chrome on PATH. Without one the test is
// skipped, unless RISKAUDIT_REQUIRE_CHROMIUM=1 (as CI sets it), when it
// fails.
func chromium(t *testing.T) string {
	t.Helper()
	if p := os.Getenv("RISKAUDIT_CHROMIUM"); p != "" {
		return p
	}
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("RISKAUDIT_REQUIRE_CHROMIUM") == "1" {
		t.Fatal("RISKAUDIT_REQUIRE_CHROMIUM=1 but no chromium binary was found (set RISKAUDIT_CHROMIUM or install Debian's chromium)")
	}
	t.Skip("no chromium binary found (set RISKAUDIT_CHROMIUM to run the browser test)")
	return ""
}

// browser runs one headless Chromium command on the page and returns
// its standard output and the console lines of its log.
func browser(t *testing.T, bin string, page string, args ...string) (string, []string) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
	defer cancel()
	base := []string{"--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-extensions",
		"--disable-dev-shm-usage", "--hide-scrollbars", "--user-data-dir=" + t.TempDir(),
		"--enable-logging=stderr", "--v=0", "--virtual-time-budget=10000"}
	cmd := exec.CommandContext(ctx, bin, append(append(base, args...), "file://"+page)...)
	var stdout, stderr bytes.Buffer
	cmd.Stdout, cmd.Stderr = &stdout, &stderr
	if err := cmd.Run(); err != nil {
		t.Fatalf("%s %s: %v\n%s", bin, strings.Join(args, " "), err, stderr.String())
	}
	var console []string
	for _, l := range strings.Split(stderr.String(), "\n") {
		if strings.Contains(l, ":CONSOLE") {
			console = append(console, l)
		}
	}
	return stdout.String(), console
}

// probe is put first in <head> of a test-only copy of the page. It
// collects script errors, resources that failed to load and content
// security policy violations from the first moment, and after the load
// event writes the layout's widths into the DOM as JSON.
const probe = `<script nonce="riskaudit-probe">
(function () {
  var found = {errors: [], blocked: []};
  window.addEventListener('error', function (e) {
    var el = e.target;
    if (el && el !== window && el.tagName) { found.errors.push('failed to load <' + el.tagName.toLowerCase() + '> ' + (el.alt || el.src || '').slice(0, 80)); }
    else { found.errors.push('script error: ' + e.message); }
  }, true);
  document.addEventListener('securitypolicyviolation', function (e) { found.blocked.push(e.violatedDirective + ' ' + e.blockedURI); });
  var ce = console.error;
  console.error = function () { found.errors.push('console.error: ' + Array.prototype.join.call(arguments, ' ')); ce.apply(console, arguments); };
  window.addEventListener('load', function () {
    var de = document.documentElement, width = de.clientWidth;
    var out = {clientWidth: width, scrollWidth: de.scrollWidth, tables: [], images: [], outside: [], errors: found.errors, blocked: found.blocked};
    document.querySelectorAll('table').forEach(function (t) {
      var r = t.getBoundingClientRect();
      out.tables.push({right: r.right, width: r.width, head: (t.rows[0] ? t.rows[0].textContent : '').replace(/\s+/g, ' ').slice(0, 60)});
    });
    Array.prototype.forEach.call(document.images, function (i) {
      var fig = i.closest('figure');
      out.images.push({alt: i.alt, loaded: i.complete && i.naturalWidth > 0, width: i.getBoundingClientRect().width, right: i.getBoundingClientRect().right,
        natural: i.naturalWidth, turned: !!(fig && fig.classList.contains('landscape'))});
    });
    document.querySelectorAll('body *').forEach(function (el) {
      var r = el.getBoundingClientRect();
      if (r.right > width + 0.5 && out.outside.length < 5) { out.outside.push(el.tagName.toLowerCase() + ' ' + r.right.toFixed(0) + ': ' + (el.textContent || '').replace(/\s+/g, ' ').slice(0, 60)); }
    });
    var pre = document.createElement('pre');
    pre.id = 'riskaudit-probe';
    pre.textContent = JSON.stringify(out);
    document.body.appendChild(pre);
  });
})();
</script>`

// measured is what the probe writes.
type measured struct {
	ClientWidth, ScrollWidth float64
	Tables                   []struct {
		Right, Width float64
		Head         string
	}
	Images []struct {
		Alt          string
		Loaded       bool
		Width, Right float64
		// Natural is the image's drawn width in CSS pixels; Turned,
		// whether its figure prints on a landscape page.
		Natural float64
		Turned  bool
	}
	Outside, Errors, Blocked []string
}

var probeOut = regexp.MustCompile(`(?s)<pre id="riskaudit-probe">(.*?)</pre>`)

// a4ContentWidth is the width in CSS pixels (96 per inch) of an A4 page
// (210 mm) less the print style's left and right margins (14 mm each).
const a4ContentWidth = 687 // (210 - 2·14) mm at 96 px per inch, 687.9, rounded down

// a4TurnedWidth is the same for an A4 page turned sideways (297 mm).
const a4TurnedWidth = 1016 // (297 - 2·14) mm at 96 px per inch, 1016.7, rounded down

// minPrintScale is the smallest share of its drawn size at which a
// figure may print: its 9 pt tick labels at 5.4 pt, the least a reader
// of a board paper can still read; turned pages must do better
// (minTurnedScale), or turning them gains nothing.
const (
	minPrintScale  = 0.6
	minTurnedScale = 0.8
)

// printScales checks the scale at which each figure prints, measured in
// the print layout at the width of the page: in the portrait layout the
// figures on portrait pages, in the turned one (turned true) those on
// landscape pages. It returns how many figures are on landscape pages.
func printScales(t *testing.T, m measured, what string, turned bool) int {
	t.Helper()
	n := 0
	for _, i := range m.Images {
		if i.Turned {
			n++
		}
		if i.Turned != turned || i.Natural <= 0 {
			continue
		}
		want := minPrintScale
		if turned {
			want = minTurnedScale
		}
		if s := i.Width / i.Natural; s < want {
			t.Errorf("%s: the figure %q prints at %.0f%% of its drawn size (%.0f of %.0f px), want at least %.0f%%",
				what, i.Alt, 100*s, i.Width, i.Natural, 100*want)
		}
	}
	return n
}

// measure loads a test-only copy of the page with the probe at the
// window width w; with print, the page's print rules apply on screen
// (so the layout is the printed one, at the width of the page).
func measure(t *testing.T, bin, page string, w int, print bool) measured {
	t.Helper()
	b, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	s := string(b)
	// The page's policy allows no script; the copy allows the probe alone.
	csp := `content="` + html.EscapeString(htmlreport.ContentSecurityPolicy) + `"`
	if !strings.Contains(s, csp) {
		t.Fatalf("%s does not declare the content security policy", page)
	}
	s = strings.Replace(s, csp, `content="`+html.EscapeString(htmlreport.ContentSecurityPolicy+"; script-src 'nonce-riskaudit-probe'")+`"`, 1)
	s = strings.Replace(s, "<head>", "<head>\n"+probe, 1)
	if print {
		s = strings.ReplaceAll(s, "@media print", "@media all")
	}
	cp := filepath.Join(t.TempDir(), fmt.Sprintf("probe-%d.html", w))
	if err := os.WriteFile(cp, []byte(s), 0o644); err != nil {
		t.Fatal(err)
	}
	dom, console := browser(t, bin, cp, fmt.Sprintf("--window-size=%d,1200", w), "--dump-dom")
	m := probeOut.FindStringSubmatch(dom)
	if m == nil {
		t.Fatalf("the probe wrote nothing at width %d (did the page load?)", w)
	}
	var got measured
	if err := json.Unmarshal([]byte(html.UnescapeString(m[1])), &got); err != nil {
		t.Fatalf("the probe's output: %v", err)
	}
	for _, l := range console {
		got.Errors = append(got.Errors, "console: "+l)
	}
	return got
}

// check fails on what problems finds.
func check(t *testing.T, m measured, what string, figures int) {
	t.Helper()
	if m.ClientWidth <= 0 {
		t.Fatalf("%s: no layout width measured", what)
	}
	for _, p := range problems(m, figures) {
		t.Errorf("%s: %s", what, p)
	}
}

// problems lists what a reader would see as broken in the measured
// page: script errors, resources that failed, blocked requests, a
// sideways scroll, anything beyond the right edge, a table wider than
// the page, and a figure missing or not loaded.
func problems(m measured, figures int) []string {
	var p []string
	p = append(p, m.Errors...)
	for _, b := range m.Blocked {
		p = append(p, "the page asked for something its policy blocks (an outside request): "+b)
	}
	if m.ScrollWidth > m.ClientWidth {
		p = append(p, fmt.Sprintf("the page scrolls sideways (%v px of content in %v)", m.ScrollWidth, m.ClientWidth))
	}
	for _, o := range m.Outside {
		p = append(p, "beyond the right edge: "+o)
	}
	for _, tb := range m.Tables {
		if tb.Right > m.ClientWidth+0.5 {
			p = append(p, fmt.Sprintf("the table %q is wider than the page (right edge at %.0f of %v px)", tb.Head, tb.Right, m.ClientWidth))
		}
	}
	if len(m.Images) != figures {
		p = append(p, fmt.Sprintf("%d images on the page, want the %d figures", len(m.Images), figures))
	}
	for _, i := range m.Images {
		if !i.Loaded || i.Width < 100 {
			p = append(p, fmt.Sprintf("the figure %q did not load or shows %v px wide", i.Alt, i.Width))
		}
	}
	return p
}

// TestProbeFindsFaults: the probe and problems see each fault the
// browser test exists for, on a page made to have them (so the test of
// the real report can fail).
func TestProbeFindsFaults(t *testing.T) {
	bin := chromium(t)
	dir := t.TempDir()
	good := `data:image/svg+xml;base64,PHN2ZyB4bWxucz0iaHR0cDovL3d3dy53My5vcmcvMjAwMC9zdmciIHdpZHRoPSIyMDAiIGhlaWdodD0iMTAwIi8+`
	page := `<!DOCTYPE html><html><head><meta charset="utf-8">` +
		`<meta http-equiv="Content-Security-Policy" content="` + html.EscapeString(htmlreport.ContentSecurityPolicy) + `"></head><body>` +
		`<img alt="fine" src="` + good + `">` +
		`<img alt="outside" src="http://127.0.0.1:9/x.png">` +
		`<img alt="broken" src="data:image/png;base64,AAAA">` +
		`<table><tr><td>` + strings.Repeat("x", 400) + `</td></tr></table></body></html>`
	path := filepath.Join(dir, "faulty.html")
	if err := os.WriteFile(path, []byte(page), 0o644); err != nil {
		t.Fatal(err)
	}
	m := measure(t, bin, path, 800, false)
	got := strings.Join(problems(m, 2), "\n")
	for _, want := range []string{"policy blocks", "sideways", "wider than the page", "3 images on the page, want the 2", `"broken" did not load`} {
		if !strings.Contains(got, want) {
			t.Errorf("the faulty page's problems lack %q:\n%s", want, got)
		}
	}
	if strings.Contains(got, `"fine"`) {
		t.Errorf("a good figure was reported:\n%s", got)
	}
}

func TestReportInBrowser(t *testing.T) {
	bin := chromium(t)
	for _, c := range []struct {
		name string
		make func(t *testing.T, dir string) string
		// turns is how many figures print on a turned page: the subgroup
		// chart of 12 rows; the stress audit's, of 26 rows, is as tall as
		// it is wide and gains nothing turned.
		turns int
	}{
		{"demo", demoAudit, 0},
		{"stress", stressAudit, 0},
		{"subgroups", subgroupAudit, 1},
	} {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			dir := c.make(t, t.TempDir())
			page := filepath.Join(dir, "report.html")
			figures := countFigures(t, dir)
			check(t, measure(t, bin, page, 1280, false), "screen, 1280 px", figures)
			check(t, measure(t, bin, page, 500, false), "screen, 500 px (the narrowest headless window)", figures)
			portrait := measure(t, bin, page, a4ContentWidth, true)
			check(t, portrait, "print layout, A4 width", figures)
			turned := printScales(t, portrait, "print layout, A4 width", false)
			if turned != c.turns {
				t.Errorf("%d figures marked to print on a turned page, want %d", turned, c.turns)
			}
			if turned > 0 {
				printScales(t, measure(t, bin, page, a4TurnedWidth, true), "print layout, A4 turned", true)
			}

			out := os.Getenv("RISKAUDIT_BROWSER_OUT")
			if out == "" {
				out = t.TempDir()
			} else if err := os.MkdirAll(out, 0o755); err != nil {
				t.Fatal(err)
			}
			shot := filepath.Join(out, c.name+"-report.png")
			browser(t, bin, page, "--window-size=1200,1600", "--screenshot="+shot)
			f, err := os.Open(shot)
			if err != nil {
				t.Fatalf("no screenshot: %v", err)
			}
			cfg, err := png.DecodeConfig(f)
			f.Close()
			if err != nil || cfg.Width != 1200 || cfg.Height != 1600 {
				t.Errorf("screenshot %s: %v, %dx%d, want a 1200x1600 PNG", shot, err, cfg.Width, cfg.Height)
			}

			pdf := filepath.Join(out, c.name+"-report.pdf")
			_, console := browser(t, bin, page, "--no-pdf-header-footer", "--print-to-pdf="+pdf)
			for _, l := range console {
				t.Errorf("console while printing: %s", l)
			}
			checkPDF(t, pdf, turned)
		})
	}
}

// mediaBox is the page size Chromium writes; A4 is 595.28 x 841.89 pt,
// which Chromium rounds to whole device pixels (594.96 x 841.92).
var mediaBox = regexp.MustCompile(`/MediaBox \[0 0 ([0-9.]+) ([0-9.]+)\]`)

// checkPDF fails unless the PDF's pages are all A4, turned pages
// exactly as many as the figures printed on them, and there are several
// (one section a page at least).
func checkPDF(t *testing.T, path string, turned int) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("no PDF: %v", err)
	}
	if !bytes.HasPrefix(b, []byte("%PDF-")) {
		t.Fatalf("%s is not a PDF", path)
	}
	boxes := mediaBox.FindAllSubmatch(b, -1)
	if len(boxes) < 4 {
		t.Errorf("%s has %d pages, want one at least for each of the report's sections", path, len(boxes))
	}
	a4 := func(w, h float64) bool { return w >= 594 && w <= 596 && h >= 841 && h <= 843 }
	landscapes := 0
	for _, m := range boxes {
		var w, h float64
		fmt.Sscan(string(m[1]), &w)
		fmt.Sscan(string(m[2]), &h)
		switch {
		case a4(w, h):
		case a4(h, w):
			landscapes++
		default:
			t.Errorf("%s: a page of %s x %s pt, want A4 (595 x 842, or 842 x 595 turned)", path, m[1], m[2])
		}
	}
	if landscapes != turned {
		t.Errorf("%s has %d landscape pages, want one for each of the %d figures printed turned", path, landscapes, turned)
	}
}

// countFigures counts the SVG figures of the audit folder, which the
// page must show.
func countFigures(t *testing.T, dir string) int {
	t.Helper()
	svgs, err := filepath.Glob(filepath.Join(dir, "*.svg"))
	if err != nil || len(svgs) == 0 {
		t.Fatalf("no figures in %s (%v)", dir, err)
	}
	return len(svgs)
}

// runAudit runs and writes an audit into dir/audit.
func runAudit(t *testing.T, cfg audit.Config, dir string) string {
	t.Helper()
	cfg.Tool = "riskaudit test"
	cfg.Clock = func() time.Time { return time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC) }
	r, err := audit.Run(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "audit")
	if _, err := audit.Write(out, r, audit.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	return out
}

// demoAudit is the demo's audit, as 'riskaudit demo' makes it.
func demoAudit(t *testing.T, dir string) string {
	d := fixture.WriteDemo(t, dir)
	return runAudit(t, audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, Dev: audit.Input{Path: d.Development}}, dir)
}

// subgroupAudit is the demo's audit measured in subgroups of sex,
// smoker, lung disease and hospital (12 rows): its subgroup chart is 11
// inches wide and prints on a landscape page.
func subgroupAudit(t *testing.T, dir string) string {
	d := fixture.WriteDemo(t, dir)
	return runAudit(t, audit.Config{Model: d.Frozen, Cohort: audit.Input{Path: d.Later}, Dev: audit.Input{Path: d.Development},
		Subgroups: []string{"sex", "smoker", "lung_disease", "hospital"}}, dir)
}

// stressAudit is an audit whose user text is long and hostile: a model
// name of 180 characters with markup in it, a subgroup column with a
// long name and 24 levels (some long, some markup, one a single
// 70-character word), and a second subgroup column.
func stressAudit(t *testing.T, dir string) string {
	d := fixture.WriteDemo(t, dir)
	spec, err := os.ReadFile(d.Frozen)
	if err != nil {
		t.Fatal(err)
	}
	name := `<script>alert(1)</script> Regional post-operative pulmonary complication model for elective abdominal surgery, recalibrated edition with an unusually long descriptive title (stress)`
	first, rest, _ := strings.Cut(string(spec), "\n")
	if !strings.HasPrefix(first, "name:") {
		t.Fatalf("the frozen model does not start with its name: %q", first)
	}
	stress := filepath.Join(dir, "stress.yaml")
	if err := os.WriteFile(stress, []byte("name: '"+strings.ReplaceAll(name, "'", "''")+"'\n"+rest), 0o644); err != nil {
		t.Fatal(err)
	}
	levels := []string{`<img src=x onerror=alert(1)>`, `Referral from the regional surgical assessment and pre-habilitation service`,
		strings.Repeat("Unbrokenlevelname", 4) + "xx", `a|b \ c * _d_ [e](f)`}
	for i := len(levels); i < 24; i++ {
		levels = append(levels, fmt.Sprintf("Referring site %02d", i+1))
	}
	col := "referral_pathway_recorded_at_listing_for_surgery_in_the_regional_patient_administration_system"
	cohortPath, devPath := filepath.Join(dir, "stress.csv"), filepath.Join(dir, "stress_development.csv")
	addColumn(t, d.Later, cohortPath, col, levels)
	addColumn(t, d.Development, devPath, col, levels)
	return runAudit(t, audit.Config{Model: stress, Cohort: audit.Input{Path: cohortPath}, Dev: audit.Input{Path: devPath},
		Subgroups: []string{col, "smoker"}}, dir)
}

// addColumn copies the CSV file from to to with the column col added,
// its rows taking the levels in turn.
func addColumn(t *testing.T, from, to, col string, levels []string) {
	t.Helper()
	csv, err := os.ReadFile(from)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimRight(string(csv), "\n"), "\n")
	var b strings.Builder
	b.WriteString(lines[0] + "," + col + "\n")
	for i, l := range lines[1:] {
		b.WriteString(l + `,"` + strings.ReplaceAll(levels[i%len(levels)], `"`, `""`) + "\"\n")
	}
	if err := os.WriteFile(to, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
}
