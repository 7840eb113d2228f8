package figcheck

import (
	"strconv"
	"strings"
	"testing"
)

// TestCheckFinds checks the checker itself on made-up SVGs: a clean
// figure passes, and each fault is found (a checker that cannot fail
// would prove nothing).
func TestCheckFinds(t *testing.T) {
	head := `<svg width="100pt" height="50pt" viewBox="0 0 100 50"><g transform="scale(1, -1) translate(0, -50)">`
	text := func(x, y float64, s string) string {
		return `<text x="` + ftoa(x) + `" y="` + ftoa(-y) + `" transform="scale(1, -1)"
	style="font-family:'Liberation Sans';font-weight:normal;font-size:10px;fill:#000">` + s + `</text>`
	}
	// A text in a group turned by deg degrees, its baseline starting at
	// (x, y) of the turned frame (as gonum/plot writes slanted labels).
	turned := func(deg, x, y float64, s string) string {
		return `<g transform="rotate(` + ftoa(deg) + `)">` + "\n" + text(x, y, s) + "\n</g>"
	}
	for _, tt := range []struct {
		name, body, want string
	}{
		{"clean", text(5, 20, "ab") + text(60, 20, "cd"), ""},
		{"overlap", text(5, 20, "abcdef") + text(12, 22, "gh"), "overlap"},
		{"outside", text(90, 20, "a long text"), "outside"},
		// "0.8" at 10 pt is about 13.9 points wide: at x 5 and 19.5 the
		// two labels are 0.6 points apart and read as one number; at 23
		// they are clear.
		{"touch", text(5, 20, "0.8") + text(19.5, 20, "0.4"), "touch"},
		{"apart", text(5, 20, "0.8") + text(23, 20, "0.4"), ""},
		{"above", text(5, 49.5, "top"), "outside"},
		{"below", text(5, -1, "low"), "outside"},
		// At 36°, (20, 10) of the turned frame is about (10.3, 19.8) up
		// from the bottom left; labels 12 points apart along the baseline
		// direction's normal do not touch, though their upright boxes do.
		{"slanted apart", turned(36, 20, 10, "2026-01") + turned(36, 20, -2, "2026-02"), ""},
		{"slanted overlap", turned(36, 20, 10, "2026-01") + turned(36, 24, 6, "2026-02"), "overlap"},
		{"slanted outside", turned(36, 100, 10, "2026-01"), "outside"},
		{"y label inside", turned(90, 5, -15, "share"), ""},
		{"y label outside", turned(90, 5, 20, "share"), "outside"},
		{"nan", text(5, 20, "a") + `<path d="M1,NaN"/>`, "does not exist"},
	} {
		got := strings.Join(Check([]byte(head+tt.body+"</g></svg>")), "; ")
		if (tt.want == "") != (got == "") || !strings.Contains(got, tt.want) {
			t.Errorf("%s: problems %q, want %q", tt.name, got, tt.want)
		}
	}
}

func ftoa(v float64) string { return strings.TrimRight(strings.TrimRight(strconvF(v), "0"), ".") }

func strconvF(v float64) string { return strconv.FormatFloat(v, 'f', 3, 64) }
