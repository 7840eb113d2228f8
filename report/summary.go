package report

import (
	"fmt"
	"io"
	"path/filepath"
	"strings"

	"github.com/riskaudit/riskaudit/validate"
)

// WriteSummary writes the plain-text summary of an audit that the audit
// command prints on stdout: the cohort, each headline measure with its
// 95% interval, the development data's figures, the verdict, and the
// files written to dir (nfig figures). A value or interval that does not
// exist reads "not estimable", with the reason where there is one, as in
// the report.
func WriteSummary(w io.Writer, a *validate.Audit, dir string, nfig int) error {
	ew := &errWriter{w: w}
	p := func(format string, args ...any) { fmt.Fprintf(ew, format, args...) }
	d, c, ov := a.Discrimination, a.Calibration, a.Overall
	cohortFile := ""
	for _, in := range a.Provenance.Inputs {
		if in.Role == "cohort" {
			cohortFile = in.FileText()
		}
	}
	p("Audit of %s on %s\n", a.Model.Name, cohortFile)
	if co := a.Model.CohortOutcome; co != nil {
		p("  outcome     read from column %s, event %s (the model's: %s = %s)\n", co.Column, co.Event, co.ModelColumn, co.ModelEvent)
	}
	p("  patients    %d used of %d, %d %s (%s)\n", a.Cohort.Used, a.Cohort.Rows, a.Cohort.Events, plural(a.Cohort.Events, "event", "events"), pct(a.Cohort.EventRate))
	p("  AUC         %s\n", withCI(d.AUC, d.CI, a.AUCCIReason()))
	p("  O/E         %s\n", withCI(c.OE, c.OECI, ""))
	p("  CITL        %s\n", withCI(c.CITL, c.CITLCI, ""))
	p("  slope       %s\n", withCI(c.Slope, c.SlopeCI, ""))
	p("  ICI         %s   E90 %s\n", f4(c.ICI), f4(c.E90))
	p("  Brier       %s   scaled %s\n", f4(ov.Brier), f3(ov.ScaledBrier))
	if a.Development != nil {
		ap := a.Development.Apparent
		p("  development AUC %s, O/E %s, slope %s\n", f3(ap.AUC), f3(ap.OE), f3(ap.Slope))
	}
	if v := a.Verdict; v != nil {
		failed := 0
		for _, cr := range v.Criteria {
			if !cr.Passed {
				failed++
			}
		}
		p("  verdict     %s (%d of %d criteria not met%s)\n", v.Status, failed, len(v.Criteria), subgroupCounts(v, "; "))
	}
	if s := a.SampleSize; s != nil && s.Short != nil && *s.Short && s.Required != nil {
		p("  size        short: the %s criterion needs %d patients, %d analysed\n", s.Driver, *s.Required, s.Have)
	}
	for _, l := range overTimeLines(a.OverTime) {
		p("  %s\n", l)
	}
	if l := imputedLine(a.Imputation); l != "" {
		p("  %s\n", l)
	}
	if co := a.Cohort; co.Excluded > 0 && co.Rows > 0 {
		p("  missing     %d of %d rows (%.1f%%) left out: complete cases only\n", co.Excluded, co.Rows, 100*float64(co.Excluded)/float64(co.Rows))
	}
	p("Wrote %s, %s, %s and %d figures\n", filepath.Join(dir, "report.md"), filepath.Join(dir, "report.html"), filepath.Join(dir, "audit.json"), nfig)
	if fm := a.Model.FittedModel; fm != nil {
		p("Wrote %s (the model fitted from the recipe %s)\n", fm.Path, a.Model.Spec)
	}
	if u := a.Update; u != nil && u.ModelFile != "" {
		p("Wrote %s (the model updated on this cohort: %s)\n", u.ModelFile, u.Chosen)
	}
	if in := a.Internal; in != nil && in.ShrunkenModel != "" {
		p("Wrote %s (the model shrunk by the bootstrap's uniform shrinkage factor)\n", in.ShrunkenModel)
	}
	return ew.err
}

// withCI writes a measure with three decimals and its 95% interval, or
// "not estimable" alone when the measure itself is not.
func withCI(v float64, ci [2]float64, why string) string {
	if !finite(v) {
		return num(v, "%.3f")
	}
	return fmt.Sprintf("%.3f (95%% CI %s)", v, Interval(ci, "%.3f", why))
}

// subgroupCounts says how many subgroup checks of the verdict were not
// met and how many subgroups were not judged, after sep; "" when no
// subgroup was checked.
func subgroupCounts(v *validate.Verdict, sep string) string {
	n := v.CountSubgroups()
	if n.Checks == 0 {
		return ""
	}
	s := n.String()
	if v.SubgroupCriteria == validate.SubgroupIgnore && n.Failed > 0 {
		s = strings.Replace(s, "not met", "not met (not counted)", 1)
	}
	return sep + s
}
