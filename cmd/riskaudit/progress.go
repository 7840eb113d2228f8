package main

import (
	"fmt"
	"strings"
	"time"
)

// progress reports the steps of a long command on stderr, only when
// stderr is a terminal and the command is not quiet.
type progress struct {
	s     *streams
	on    bool
	start time.Time
	width int
}

func newProgress(s *streams, quiet bool) *progress {
	return &progress{s: s, on: s.errTTY && !quiet, start: time.Now()}
}

// step replaces the progress line with the named step.
func (p *progress) step(what string) {
	if !p.on {
		return
	}
	line := fmt.Sprintf("riskaudit: %s… (%.1fs)", what, time.Since(p.start).Seconds())
	pad := max(0, p.width-len(line))
	fmt.Fprintf(p.s.err, "\r%s%s", line, strings.Repeat(" ", pad))
	p.width = len(line)
}

// done clears the progress line.
func (p *progress) done() {
	if p.on && p.width > 0 {
		fmt.Fprintf(p.s.err, "\r%s\r", strings.Repeat(" ", p.width))
	}
}

// commandLine is the command as typed, each argument quoted for a POSIX
// shell when it needs it.
func (s *streams) commandLine() string {
	parts := []string{"riskaudit"}
	for _, a := range s.args {
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

// count shows how many of total items are done, the rate and the time
// left.
func (p *progress) count(what string, done, total int, start time.Time) {
	if !p.on {
		return
	}
	el := time.Since(start).Seconds()
	rate := float64(done) / max(el, 1e-9)
	left := float64(total-done) / max(rate, 1e-9)
	line := fmt.Sprintf("riskaudit: %s %d/%d (%.0f/s, %.0fs left)", what, done, total, rate, left)
	pad := max(0, p.width-len(line))
	fmt.Fprintf(p.s.err, "\r%s%s", line, strings.Repeat(" ", pad))
	p.width = len(line)
}
