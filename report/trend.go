package report

import (
	"fmt"
	"io"
	"strings"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/trend"
	"github.com/riskaudit/riskaudit/validate"
)

// WriteTrend renders the trend report of an audit history: the models
// the audits measured (a series each, with the model each updates and
// the dates a new model entered), each series' O/E drift against its
// control limits, the criteria drawn, a table of every audit naming its
// model, and the charts.
func WriteTrend(w io.Writer, tr *trend.Trend, source string, figures []plots.Figure) error {
	ew := &errWriter{w: w}
	r := &renderer{w: ew, figs: map[string]plots.Figure{}}
	for _, f := range figures {
		r.figs[f.Name] = f
	}
	if len(tr.Points) == 0 {
		return fmt.Errorf("a trend without audits")
	}
	r.p("# Audit trend\n\n")
	first, last := tr.Points[0].Date, tr.Points[len(tr.Points)-1].Date
	r.p("%d %s of %d %s recorded in %s, from %s to %s.\n\n", len(tr.Points), plural(len(tr.Points), "audit", "audits"),
		len(tr.Series), plural(len(tr.Series), "model", "models"), code(source), first, last)

	r.p("## Models\n\n")
	r.p("Each model is a series of its own, known by its name and the SHA-256 of its file (a model updated by recalibration or revision keeps its name but not its file, so it is a new series); no line joins the audits of two models, and a control limit or drift flag of one model never carries over to another.\n\n")
	t := table{head: []string{"model", "name", "SHA-256", "updates", "audits", "first audit", "last audit"}}
	for i, s := range tr.Series {
		t.add(fmt.Sprint(i+1), Escape(s.Model.Name), sha(s.Model.SHA256), parentText(tr, s), fmt.Sprint(len(s.Points)),
			tr.Points[s.Points[0]].Date, tr.Points[s.Points[len(s.Points)-1]].Date)
	}
	t.write(r.w)
	for i, s := range tr.Series {
		if s.Parent < 0 && s.ParentSHA != "" {
			r.p("- Model %d (%s) updates the model with SHA-256 %s, of which this trend holds no audit.\n", i+1, modelWords(s.Model), sha(s.ParentSHA))
		}
	}
	for _, c := range tr.Changes {
		s := tr.Series[c.Series]
		r.p("- **From %s: model %d** (%s) enters after model %d", tr.Points[c.Point].Date, c.Series+1, modelWords(s.Model), c.Before+1)
		switch {
		case s.Parent >= 0:
			r.p("; its provenance names model %d as the model it updates.\n", s.Parent+1)
		case s.ParentSHA != "":
			r.p("; it updates a model of which this trend holds no audit (above).\n")
		default:
			r.p("; its provenance names no model it updates, so the history cannot tell whether it replaces model %d or runs beside it.\n", c.Before+1)
		}
	}
	if hasParentOutside(tr) || len(tr.Changes) > 0 {
		r.p("\n")
	}
	if len(tr.Changes) > 0 {
		r.p("The charts mark %s with a dashed vertical line.\n\n", plural(len(tr.Changes), "this date", "each of these dates"))
	}

	r.p("## Calibration drift\n\n")
	for i, s := range tr.Series {
		who := ""
		if len(tr.Series) > 1 {
			who = fmt.Sprintf("Model %d: ", i+1)
		}
		if s.FirstOutside >= 0 {
			p := tr.Points[s.FirstOutside]
			r.p("- **%sthe audit of %s is the first whose O/E (%s) lies outside its 99.8%% control limits (%s)**: the drift in calibration is larger than chance explains at that audit's size.\n",
				who, p.Date, f3(p.Record.OE[0]), Interval(p.Limit998, "%.3f", ""))
		} else {
			every := everyAudit(len(s.Points))
			if who != "" {
				every = strings.ToLower(every[:1]) + every[1:]
			}
			r.p("- %s%s O/E lies within its 99.8%% control limits: no calibration drift beyond chance.\n", who, every)
		}
	}
	r.p("\nControl limits for O/E are funnel-type limits that widen for smaller audits: under a well-calibrated model the observed events are about Poisson with mean E, the expected events, so O/E has variance 1/E and the limits are 1 ± z/√E, z = 1.96 (95%%) and 3.09 (99.8%%) (Spiegelhalter 2005). They use the normal approximation, adequate from about 20 expected events.\n\n")

	r.alarms(tr)

	r.p("## How the charts are drawn\n\n")
	r.p("Audits are placed on a time axis by their audit dates. Audits that share a date are spread around it, %.1f%% of the axis apart, so that none hides another; the table below gives every date exactly.\n\n", 100*plots.DodgeShare)
	r.criteria(tr)

	r.p("## Audits\n\n")
	at := table{head: []string{"record", "audit date", "model", "cohort", "patients", "events", "expected", "AUC (95% CI)", "O/E (95% CI)", "99.8% limits", "slope", "CITL", "verdict"}}
	for i, p := range tr.Points {
		rec := p.Record
		flag := ""
		if p.Outside {
			flag = " **outside**"
		}
		if i == tr.Series[p.Series].FirstOutside {
			flag = " **first outside**"
		}
		at.add(fmt.Sprint(rec.ID), rec.AuditDate, modelCell(p.Series, rec.ModelSHA), Escape(rec.Cohort),
			fmt.Sprint(rec.Used), fmt.Sprint(rec.Events), num(rec.Expected, "%.1f"),
			fmt.Sprintf("%s (%s)", f3(rec.AUC[0]), interval([2]float64{rec.AUC[1], rec.AUC[2]}, "%.3f", "–", "")),
			fmt.Sprintf("%s (%s)%s", f3(rec.OE[0]), interval([2]float64{rec.OE[1], rec.OE[2]}, "%.3f", "–", ""), flag),
			interval(p.Limit998, "%.3f", "–", ""),
			f3(rec.Slope[0]), f3(rec.CITL[0]), rec.Verdict)
	}
	at.write(r.w)
	r.p("The model column gives the model's number above and the first eight hex digits of its SHA-256.\n\n")
	for _, f := range figures {
		r.figure(f.Name)
	}
	r.p("## Caution\n\n%s\n", validate.TrendCaution)
	return ew.err
}

// criteria says which acceptance criteria the charts draw, from the
// criteria each audit was recorded with.
func (r *renderer) criteria(tr *trend.Trend) {
	var seen []string
	known := map[string]bool{}
	unknown := 0
	for _, p := range tr.Points {
		if p.Record.Criteria == nil {
			unknown++
			continue
		}
		for _, c := range p.Record.Criteria {
			if !charted(c.Measure) {
				continue
			}
			s := fmt.Sprintf("%s %s (%s)", code(c.Measure), c.Bound(), c.Severity)
			if !known[s] {
				known[s] = true
				seen = append(seen, s)
			}
		}
	}
	if len(seen) > 0 {
		r.p("The charts draw, as dark (fail) or grey (review) dash-dotted lines, the acceptance criteria on AUC, O/E, slope and calibration-in-the-large that each audit was judged by, as recorded with it, over the audits judged by each: %s. A bound on an end of the 95%% interval (such as `auc_ci.lower`) is drawn on the measure's chart, where that end of each audit's bar must lie on its permitted side.\n\n", strings.Join(seen, "; "))
	} else if unknown < len(tr.Points) {
		r.p("The audits were judged by no criterion on AUC, O/E, slope or calibration-in-the-large, so no bounds are drawn.\n\n")
	}
	if unknown > 0 {
		r.p("%d of the %d audits were recorded without the criteria they were judged by (by an earlier version, whose records cannot be read for them): no bounds are drawn for those audits.\n\n", unknown, len(tr.Points))
	}
}

// charted reports whether a criterion's measure is drawn on a trend
// chart.
func charted(measure string) bool {
	base, _, _ := strings.Cut(measure, ".")
	switch base {
	case "auc", "auc_ci", "oe", "oe_ci", "slope", "slope_ci", "citl", "citl_ci":
		return true
	}
	return false
}

// modelCell is the audits table's model: its number and short hash.
func modelCell(series int, sha string) string {
	if sha == "" {
		return fmt.Sprint(series + 1)
	}
	return fmt.Sprintf("%d (%s)", series+1, trend.ShortSHA(sha))
}

// modelWords names a model in a sentence: its name and short hash.
func modelWords(m trend.Model) string {
	if m.SHA256 == "" {
		return Escape(m.Name)
	}
	return Escape(m.Name) + ", sha256 " + trend.ShortSHA(m.SHA256)
}

// sha writes a SHA-256 as code, or "none" for a column of risks.
func sha(s string) string {
	if s == "" {
		return "none (a column of risks)"
	}
	return code(s)
}

// parentText is what the models table says a model updates.
func parentText(tr *trend.Trend, s trend.Series) string {
	switch {
	case s.Parent >= 0:
		return fmt.Sprintf("model %d", s.Parent+1)
	case s.ParentSHA != "":
		return "sha256 " + trend.ShortSHA(s.ParentSHA) + " (not in this trend)"
	}
	return "—"
}

// hasParentOutside reports whether a series updates a model the trend
// does not hold.
func hasParentOutside(tr *trend.Trend) bool {
	for _, s := range tr.Series {
		if s.Parent < 0 && s.ParentSHA != "" {
			return true
		}
	}
	return false
}

// everyAudit is "The audit's" for one audit, "Every audit's" for more.
func everyAudit(n int) string {
	if n == 1 {
		return "The audit's"
	}
	return "Every audit's"
}

// alarms says, for each model, which audit's charts in date order first
// signalled, from the alarm state recorded with each audit; nothing when
// no audit charted its cohort in date order.
func (r *renderer) alarms(tr *trend.Trend) {
	charted := 0
	for _, p := range tr.Points {
		if p.Record.Alarms != nil {
			charted++
		}
	}
	if charted == 0 {
		return
	}
	r.p("## Alarms in date order\n\n")
	r.p("%d of the %d audits charted their cohort in date order (`--date-column`), and the alarm state of those charts is recorded with each: the signals of the two one-sided risk-adjusted CUSUMs and the EWMA's crossings of its limits.\n\n", charted, len(tr.Points))
	for i, s := range tr.Series {
		who := ""
		if len(tr.Series) > 1 {
			who = fmt.Sprintf("Model %d: ", i+1)
		}
		n, signalled := 0, []string{}
		for _, k := range s.Points {
			p := tr.Points[k]
			if p.Record.Alarms != nil {
				n++
			}
			if p.Alarm {
				signalled = append(signalled, fmt.Sprintf("%s (record %d)", p.Date, p.Record.ID))
			}
		}
		switch {
		case n == 0:
			r.p("- %sno audit charted in date order.\n", who)
		case s.FirstAlarm < 0:
			r.p("- %sthe charts of none of its %d %s in date order signalled.\n", who, n, plural(n, "audit", "audits"))
		default:
			p := tr.Points[s.FirstAlarm]
			r.p("- **%sthe audit of %s (record %d) is the first whose charts in date order signalled**: %s.", who, p.Date, p.Record.ID, alarmWords(p.Record.Alarms))
			if len(signalled) > 1 {
				r.p(" Audits with a signal: %s.", strings.Join(signalled, ", "))
			}
			r.p("\n")
		}
	}
	r.p("\n")
}

// alarmWords describes the signals of one audit's charts.
func alarmWords(a *history.Alarms) string {
	var parts []string
	for _, c := range a.CUSUM {
		if c.Signals == 0 {
			continue
		}
		parts = append(parts, fmt.Sprintf("the %s CUSUM signalled %d %s, first on %s, after %s patients", c.Name, c.Signals, plural(c.Signals, "time", "times"), c.First.Date, count(c.First.Patient)))
	}
	for _, e := range []struct {
		side string
		at   history.FirstAlarm
	}{{"upper", a.EWMAAbove}, {"lower", a.EWMABelow}} {
		if e.at.Patient > 0 {
			parts = append(parts, fmt.Sprintf("the EWMA crossed its %s limit on %s, after %s patients", e.side, e.at.Date, count(e.at.Patient)))
		}
	}
	return strings.Join(parts, "; ")
}
