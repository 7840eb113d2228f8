package report

import (
	"fmt"
	"io"

	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/trend"
)

// WriteTrend renders the trend report of an audit history.
func WriteTrend(w io.Writer, tr *trend.Trend, source string, figures []plots.Figure) error {
	ew := &errWriter{w: w}
	r := &renderer{w: ew, figs: map[string]plots.Figure{}}
	for _, f := range figures {
		r.figs[f.Name] = f
	}
	r.p("# Audit trend\n\n")
	r.p("%d audits recorded in %s, from %s to %s.\n\n", len(tr.Points), code(source), tr.Points[0].Date, tr.Points[len(tr.Points)-1].Date)
	if tr.FirstOutside >= 0 {
		p := tr.Points[tr.FirstOutside]
		r.p("**The audit of %s is the first whose O/E (%s) lies outside its 99.8%% control limits (%s)**: the drift in calibration is larger than chance explains at that audit's size.\n\n",
			p.Date, f3(p.Record.OE[0]), Interval(p.Limit998, "%.3f", ""))
	} else {
		r.p("Every audit's O/E lies within its 99.8%% control limits: no calibration drift beyond chance.\n\n")
	}
	r.p("Control limits for O/E are funnel-type limits that widen for smaller audits: under a well-calibrated model the observed events are about Poisson with mean E, the expected events, so O/E has variance 1/E and the limits are 1 ± z/√E, z = 1.96 (95%%) and 3.09 (99.8%%) (Spiegelhalter 2005). They use the normal approximation, adequate from about 20 expected events.\n\n")
	t := table{head: []string{"audit date", "cohort", "patients", "events", "expected", "AUC (95% CI)", "O/E (95% CI)", "99.8% limits", "slope", "CITL", "verdict"}}
	for i, p := range tr.Points {
		rec := p.Record
		flag := ""
		if p.Outside {
			flag = " **outside**"
		}
		if i == tr.FirstOutside {
			flag = " **first outside**"
		}
		t.add(rec.AuditDate, code(rec.Cohort), fmt.Sprint(rec.Used), fmt.Sprint(rec.Events), num(rec.Expected, "%.1f"),
			fmt.Sprintf("%s (%s)", f3(rec.AUC[0]), interval([2]float64{rec.AUC[1], rec.AUC[2]}, "%.3f", "–", "")),
			fmt.Sprintf("%s (%s)%s", f3(rec.OE[0]), interval([2]float64{rec.OE[1], rec.OE[2]}, "%.3f", "–", ""), flag),
			interval(p.Limit998, "%.3f", "–", ""),
			f3(rec.Slope[0]), f3(rec.CITL[0]), rec.Verdict)
	}
	t.write(r.w)
	for _, f := range figures {
		r.figure(f.Name)
	}
	r.p("## Caution\n\n%s\n", cautionText)
	return ew.err
}
