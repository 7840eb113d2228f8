package htmlreport

import (
	"regexp"
	"strings"
	"testing"
)

// TestRunOn: which level-2 sections start a printed page. A short
// section without a figure runs on after the one before it; a section
// with a figure, or longer than about a third of the A4 column, starts
// a page (the limits are this project's layout choice, runOnMM).
func TestRunOn(t *testing.T) {
	long := strings.Repeat("A sentence of ordinary length in a report paragraph. ", 60) // about 3,200 characters: 31 lines
	rows := func(n int) string {
		var b strings.Builder
		b.WriteString("| measure | value |\n|---|---|\n")
		for range n {
			b.WriteString("| a measure | 0.123 |\n")
		}
		return b.String()
	}
	md := "# Title\n\nOpening.\n\n" +
		"## Short\n\nOne paragraph.\n\n" + rows(5) + "\n" +
		"## Figure\n\n![A figure](f.png)\n\n" +
		"## Long text\n\n" + long + "\n\n" + long + "\n\n" +
		"## Long table\n\n" + rows(20) + "\n" +
		"## Subsections\n\n### One\n\nText.\n\n### Two\n\nText.\n\n" +
		"## Listed figure\n\n- item ![inline](f.png)\n"
	page, err := Page([]byte(md), map[string][]byte{"f.png": {0x89, 'P', 'N', 'G'}})
	if err != nil {
		t.Fatal(err)
	}
	got := map[string]bool{}
	for _, m := range regexp.MustCompile(`<h2 id="([a-z-]+)"( class="run-on")?>`).FindAllStringSubmatch(string(page), -1) {
		got[m[1]] = m[2] != ""
	}
	want := map[string]bool{"short": true, "figure": false, "long-text": false, "long-table": false, "subsections": true, "listed-figure": false}
	for id, w := range want {
		if r, ok := got[id]; !ok || r != w {
			t.Errorf("section %q: run on %v (found %v), want %v", id, r, ok, w)
		}
	}
	if !strings.Contains(style, "h2.run-on { break-before: auto;") {
		t.Error("the print style does not let a run-on heading continue the page")
	}
}
