package report

import (
	"fmt"
	"strings"

	"github.com/riskaudit/riskaudit/meta"
	"github.com/riskaudit/riskaudit/validate"
)

// clusters writes the section on the validation across clusters: how the
// measures were pooled, one plain sentence per measure on what to expect
// in a new cluster, the per-cluster and pooled tables and the forest
// plots.
func (r *renderer) clusters() {
	c := r.a.Clusters
	if c == nil {
		return
	}
	col := code(c.Column)
	r.p("## Across %s\n\n", col)
	tau := map[meta.Tau2Method]string{meta.REML: "restricted maximum likelihood", meta.DL: "the DerSimonian–Laird method", meta.PM: "the Paule–Mandel method"}[c.Tau2Method]
	ci := map[meta.CIMethod]string{meta.HKSJ: "Hartung–Knapp–Sidik–Jonkman intervals", meta.Wald: "Wald intervals"}[c.CIMethod]
	r.p("The model was measured in each of the %d values of %s, and each measure was pooled across them by random-effects meta-analysis "+
		"(the AUC on the logit scale, O/E on the log scale; between-%s variance τ² by %s; %s). "+
		"The pooled estimate is the average performance; the 95%% prediction interval is where the true performance in a new %s is expected to lie, "+
		"which is what matters when the model is used in a place it has not been measured (Riley, Higgins & Deeks 2011). "+
		"A value of %s with fewer than %d events or non-events is shown but not pooled.",
		len(c.PerCluster), col, col, tau, ci, col, col, c.MinEvents)
	if c.MissingCluster > 0 {
		r.p(" %d audited patients have no value of %s: they are in the overall measures, not here.", c.MissingCluster, col)
	}
	if im := r.a.Imputation; im != nil {
		r.p(" With the %d imputations, each measure was first pooled within each value of %s across the imputations by Rubin's rules; "+
			"those pooled values, with their total variances, are what the meta-analysis pooled.", im.M, col)
	}
	r.p("\n\n")
	b := c.Bounds
	for _, m := range []struct {
		name, format string
		pm           validate.PooledMeasure
		good         string
	}{
		{"the C-statistic", "%.3f", c.Pooled.AUC, fmt.Sprintf("above %g", b.AUCMin)},
		{"O/E", "%.2f", c.Pooled.OE, fmt.Sprintf("between %g and %g", b.OELow, b.OEHigh)},
		{"calibration-in-the-large", "%.2f", c.Pooled.CITL, ""},
		{"the calibration slope", "%.2f", c.Pooled.Slope, fmt.Sprintf("between %g and %g", b.SlopeLow, b.SlopeHigh)},
	} {
		r.p("- %s\n", clusterSentence(m.name, m.format, m.pm, col, m.good))
	}
	r.p("\nEach chance is for one measure on its own, not for all of them at once; with few clusters every interval is wide, and a prediction interval needs at least 3.\n\n")
	t := table{head: []string{col, "patients", "events", "AUC (SE)", "O/E (95% CI)", "CITL (SE)", "slope (SE)", "not pooled"}}
	se := func(v, s float64, f string) string { return fmt.Sprintf("%s (%s)", num(v, f), num(s, f)) }
	for _, g := range c.PerCluster {
		var left []string
		for _, e := range g.Excluded {
			left = append(left, e.Measure+": "+e.Reason)
		}
		t.add(code(g.Cluster), fmt.Sprint(g.N), fmt.Sprint(g.Events), se(g.AUC, g.AUCSE, "%.3f"),
			fmt.Sprintf("%s (%s)", num(g.OE, "%.2f"), Interval(g.OECI, "%.2f", "")), se(g.CITL, g.CITLSE, "%.2f"), se(g.Slope, g.SlopeSE, "%.2f"), Escape(collapse(left)))
	}
	t.write(r.w)
	pt := table{head: []string{"measure", "clusters pooled", "pooled (95% CI)", "95% prediction interval", "τ²", "I²", "acceptable", "chance in a new " + col}}
	for _, m := range []struct {
		name, format string
		pm           validate.PooledMeasure
	}{{"AUC", "%.3f", c.Pooled.AUC}, {"O/E", "%.2f", c.Pooled.OE}, {"CITL", "%.2f", c.Pooled.CITL}, {"slope", "%.2f", c.Pooled.Slope}} {
		chance := "—"
		if m.pm.ProbAcceptable != nil {
			chance = pct(*m.pm.ProbAcceptable)
		}
		pt.add(m.name, fmt.Sprint(m.pm.K), fmt.Sprintf("%s (%s)", num(m.pm.Estimate, m.format), Interval(m.pm.CI, m.format, "")),
			Interval(m.pm.PredictionInterval, m.format, ""), num(m.pm.Tau2, "%.4f"), pct(m.pm.I2), Escape(orDash(m.pm.Acceptable)), chance)
	}
	pt.write(r.w)
	for _, f := range []string{"clusters_auc.svg", "clusters_oe.svg", "clusters_citl.svg", "clusters_slope.svg"} {
		r.figure(f)
	}
}

// clusterSentence says in plain words what a pooled measure means for a
// new cluster.
func clusterSentence(name, format string, pm validate.PooledMeasure, col, good string) string {
	if !finite(pm.Estimate) {
		return fmt.Sprintf("%s is not pooled: %s.", capital(name), strings.TrimPrefix(pm.Note, "not pooled: "))
	}
	s := fmt.Sprintf("%s averages %s across %d values of %s (95%% CI %s)", capital(name), num(pm.Estimate, format), pm.K, col, Interval(pm.CI, format, ""))
	if !finite(pm.PredictionInterval[0]) {
		return s + "; with fewer than 3 of them there is no prediction interval for a new one."
	}
	s += fmt.Sprintf("; in a new %s it is expected between %s and %s", col, num(pm.PredictionInterval[0], format), num(pm.PredictionInterval[1], format))
	if pm.ProbAcceptable != nil && good != "" {
		s += fmt.Sprintf(", and the chance that it is %s there is %s", good, pct(*pm.ProbAcceptable))
	}
	return s + "."
}

func capital(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func collapse(s []string) string {
	if len(s) == 0 {
		return ""
	}
	// The four measures often share one reason: say it once.
	same := true
	reason := func(x string) string { _, r, _ := strings.Cut(x, ": "); return r }
	for _, x := range s {
		same = same && reason(x) == reason(s[0])
	}
	if same && len(s) == 4 {
		return "all measures: " + reason(s[0])
	}
	return strings.Join(s, "; ")
}

func orDash(s string) string {
	if s == "" {
		return "—"
	}
	return s
}
