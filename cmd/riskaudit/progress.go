package main

import (
	"fmt"
	"strings"
	"time"

	"github.com/riskaudit/riskaudit/audit"
)

// progress reports the steps of a long command on one line of stderr,
// only when stderr is a terminal and the command is not quiet; it is the
// terminal's audit.Progress.
type progress struct {
	s     *streams
	on    bool
	start time.Time
	width int
	// counting is the step being counted and since when.
	counting string
	since    time.Time
}

func newProgress(s *streams, quiet bool) *progress {
	return &progress{s: s, on: s.errTTY && !quiet, start: time.Now()}
}

// Step replaces the progress line with the named step.
func (p *progress) Step(what string) {
	p.show(fmt.Sprintf("riskaudit: %s… (%.1fs)", what, time.Since(p.start).Seconds()))
}

// Count shows how many of total items are done, the rate and the time
// left.
func (p *progress) Count(what string, done, total int) {
	if !p.on {
		return
	}
	if what != p.counting {
		p.counting, p.since = what, time.Now()
	}
	el := time.Since(p.since).Seconds()
	rate := float64(done) / max(el, 1e-9)
	left := float64(total-done) / max(rate, 1e-9)
	p.show(fmt.Sprintf("riskaudit: %s %d/%d (%.0f/s, %.0fs left)", what, done, total, rate, left))
}

// Done clears the progress line.
func (p *progress) Done() {
	if p.on && p.width > 0 {
		fmt.Fprintf(p.s.err, "\r%s\r", strings.Repeat(" ", p.width))
		p.width = 0
	}
}

func (p *progress) show(line string) {
	if !p.on {
		return
	}
	pad := max(0, p.width-len(line))
	fmt.Fprintf(p.s.err, "\r%s%s", line, strings.Repeat(" ", pad))
	p.width = len(line)
}

// commandLine is the command as typed, each argument quoted for a POSIX
// shell when it needs it.
func (s *streams) commandLine() string {
	parts := []string{"riskaudit"}
	for _, a := range redactArgs(s.args) {
		parts = append(parts, shellQuote(a))
	}
	return strings.Join(parts, " ")
}

func shellQuote(a string) string {
	if a != "" && strings.IndexFunc(a, func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("-_./=:,+@%", r))
	}) < 0 {
		return a
	}
	return "'" + strings.ReplaceAll(a, "'", `'\''`) + "'"
}

// replacedNote says, after the summary, that an earlier output in dir
// was replaced.
func replacedNote(s *streams, dir, what string, w *audit.Written) {
	if w == nil || !w.Replaced {
		return
	}
	when := ""
	if w.ReplacedAt != "" {
		when = " (written " + w.ReplacedAt + ")"
	}
	fmt.Fprintf(s.out, "Replaced the earlier %s in %s%s\n", what, dir, when)
}
