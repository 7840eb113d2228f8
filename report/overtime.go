package report

import (
	"fmt"
	"strings"

	"github.com/riskaudit/riskaudit/monitor"
)

// overTime writes the section on the cohort in date order.
func (r *renderer) overTime() {
	s := r.a.OverTime
	if s == nil {
		return
	}
	r.p("## Performance over time\n\n")
	r.p("The %s patients with a date in column %s, from %s to %s, in date order (patients with the same date in file order).", count(s.Patients), code(s.DateColumn), s.FirstDate, s.LastDate)
	if s.LeftOutMissing+s.LeftOutInvalid > 0 {
		var parts []string
		if s.LeftOutMissing > 0 {
			parts = append(parts, plural(s.LeftOutMissing, "1 row", count(s.LeftOutMissing)+" rows")+" without a date")
		}
		if s.LeftOutInvalid > 0 {
			parts = append(parts, plural(s.LeftOutInvalid, "1 row", count(s.LeftOutInvalid)+" rows")+" whose value is not a date")
		}
		r.p(" Left out of this section, and only of it (the missing-value policy leaves them out; the other sections do not use dates): %s.", strings.Join(parts, " and "))
	}
	r.p("\n\n")
	r.p("**Alarms.**\n\n")
	for _, c := range s.CUSUM {
		r.p("- %s\n", chartSentence(c, s.Patients))
	}
	r.p("- %s\n\n", ewmaSentence(s.EWMA))
	dir := "fewer"
	if s.VLADEnd < 0 {
		dir = "more"
	}
	r.p("Over the whole period there were %s events than the model predicted (cumulative expected − observed: %s; lowest %s, highest %s along the way).\n\n",
		fmt.Sprintf("%.1f %s", abs(s.VLADEnd), dir), num(s.VLADEnd, "%+.1f"), num(s.VLADMin, "%+.1f"), num(s.VLADMax, "%+.1f"))
	what := "month"
	switch s.Period {
	case "quarter":
		what = "quarter"
	case "block":
		what = fmt.Sprintf("block of %s patients in date order", count(s.PeriodSize))
	}
	r.p("### Calibration by %s\n\n", what)
	t := &table{head: []string{"period", "dates", "n", "events", "expected", "O/E (95% CI)", "CITL (95% CI)", "AUC (95% CI)"}}
	for _, q := range s.Periods {
		dates := q.Start
		if q.End != q.Start {
			dates += " to " + q.End
		}
		t.add(q.Label, dates, count(q.N), count(q.Events), num(q.Expected, "%.1f"),
			f3(q.OE)+" ("+Interval(q.OECI, "%.3f", "not estimable")+")",
			f3(q.CITL)+" ("+Interval(q.CITLCI, "%.3f", "not estimable")+")",
			f3(q.AUC)+" ("+Interval(q.AUCCI, "%.3f", "not estimable")+")")
	}
	t.write(r.w)
	r.figure("over_time_periods.svg")
	r.p("### Cumulative expected minus observed events\n\n")
	r.figure("over_time_vlad.svg")
	r.p("### Risk-adjusted CUSUM charts\n\n")
	lt := &table{head: []string{"chart", "odds ratio", "limit h (MC SE)", "in-control ARL (MC SE)", "runs", "signals", "first signal"}}
	for _, c := range s.CUSUM {
		first := "none"
		if c.First.Patient > 0 {
			first = fmt.Sprintf("%s (patient %s)", c.First.Date, count(c.First.Patient))
		}
		l := c.Limit
		lt.add(c.Name, fmt.Sprintf("%g", l.R), fmt.Sprintf("%.2f (%.2f)", l.H, l.HSE),
			fmt.Sprintf("%s (%.0f)", count(int(l.TargetARL)), l.ARLSE), count(l.Runs), count(c.Signals), first)
	}
	lt.write(r.w)
	r.figure("over_time_cusum.svg")
	r.p("### Risk-adjusted EWMA\n\n")
	r.figure("over_time_ewma.svg")
	r.p("A signal is a prompt to look at the patients and the care around that date, not a finding that care or the model changed: with an in-control ARL of %s patients, a calibrated model on this case mix raises a false signal about once in that many patients.\n\n", count(int(s.CUSUM[0].Limit.TargetARL)))
}

func chartSentence(c monitor.ChartSummary, n int) string {
	what := "more events than predicted (odds of the event multiplied by " + fmt.Sprintf("%g", c.Limit.R) + ")"
	if c.Limit.R < 1 {
		what = "fewer events than predicted (odds multiplied by " + fmt.Sprintf("%g", c.Limit.R) + ")"
	}
	if c.First.Patient == 0 {
		return fmt.Sprintf("The %s chart, looking for %s, did not signal in %s patients.", c.Name, what, count(n))
	}
	more := ""
	if c.Signals > 1 {
		more = fmt.Sprintf(", and %s times in all (restarting at zero after each signal)", count(c.Signals))
	}
	return fmt.Sprintf("The %s chart, looking for %s, signalled on %s, after %s patients%s.", c.Name, what, c.First.Date, count(c.First.Patient), more)
}

func ewmaSentence(e monitor.EWMASummary) string {
	var s string
	switch {
	case e.FirstAbove.Patient > 0 && e.FirstBelow.Patient > 0:
		s = fmt.Sprintf("crossed its upper limit (more events than predicted) on %s, after %s patients, and its lower limit on %s, after %s", e.FirstAbove.Date, count(e.FirstAbove.Patient), e.FirstBelow.Date, count(e.FirstBelow.Patient))
	case e.FirstAbove.Patient > 0:
		s = fmt.Sprintf("crossed its upper limit (more events than predicted) on %s, after %s patients", e.FirstAbove.Date, count(e.FirstAbove.Patient))
	case e.FirstBelow.Patient > 0:
		s = fmt.Sprintf("crossed its lower limit (fewer events than predicted) on %s, after %s patients", e.FirstBelow.Date, count(e.FirstBelow.Patient))
	default:
		s = "stayed within its limits"
	}
	return fmt.Sprintf("The EWMA of observed − expected (λ = %g, limits ±%g SD) %s.", e.Lambda, e.Width, s)
}

func (r *renderer) overTimeMethods() []string {
	s := r.a.OverTime
	if s == nil {
		return nil
	}
	l := s.CUSUM[0].Limit
	return []string{
		"Performance over time: patients ordered by date (stable sort). Cumulative expected − observed events, Σ(p − y) (variable life-adjusted display, Lovegrove et al. 1997).",
		fmt.Sprintf("Risk-adjusted Bernoulli CUSUMs (Steiner, Cook, Farewell & Treasure 2000): weights W = y·log R − log(1 − p + R·p), S_t = max(0, S_{t−1} + W_t), restarted at 0 after a signal. The limit h of each chart was chosen by simulation for an in-control ARL of %s patients: %s sequences of patients drawn with replacement from this cohort's predicted risks, outcomes drawn from those risks, each followed for %d × the ARL (seed %d); h is where the mean first passage reaches the target, with its Monte Carlo standard error by the delta method.", count(int(l.TargetARL)), count(l.Runs), l.Horizon, l.Seed),
		fmt.Sprintf("Risk-adjusted EWMA of O − E (Grigg & Spiegelhalter 2007): Z_t = (1 − λ)Z_{t−1} + λ(y_t − p_t), λ = %g, with the exact variance V_t = (1 − λ)²V_{t−1} + λ²p_t(1 − p_t) and limits ±%g·√V_t.", s.EWMA.Lambda, s.EWMA.Width),
	}
}

// count writes n with thousands separated by commas.
func count(n int) string {
	if n < 0 {
		return "-" + count(-n)
	}
	s := fmt.Sprint(n)
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

func abs(v float64) float64 {
	if v < 0 {
		return -v
	}
	return v
}

// overTimeLines are the one-screen summary's lines on the charts' first
// alarms (none without a date column).
func overTimeLines(s *monitor.Summary) []string {
	if s == nil {
		return nil
	}
	var parts []string
	for _, c := range s.CUSUM {
		if c.First.Patient == 0 {
			parts = append(parts, c.Name+" chart no signal")
			continue
		}
		parts = append(parts, fmt.Sprintf("%s chart signalled %s, after %s patients (%s)", c.Name, c.First.Date, count(c.First.Patient),
			plural(c.Signals, "1 signal", count(c.Signals)+" signals")))
	}
	if e := s.EWMA; e.FirstAbove.Patient > 0 {
		parts = append(parts, fmt.Sprintf("EWMA crossed its upper limit (more events than predicted) on %s, after %s patients", e.FirstAbove.Date, count(e.FirstAbove.Patient)))
	}
	if e := s.EWMA; e.FirstBelow.Patient > 0 {
		parts = append(parts, fmt.Sprintf("EWMA crossed its lower limit (fewer events than predicted) on %s, after %s patients", e.FirstBelow.Date, count(e.FirstBelow.Patient)))
	}
	return []string{"over time   " + strings.Join(parts, "; ")}
}
