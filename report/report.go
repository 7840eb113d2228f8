// Package report writes an audit as Markdown that reads well both as
// plain text and rendered: the summary first, then one section per area,
// each figure with its interval and a plain sentence of what it means,
// then the methods, the provenance and the caution.
package report

import (
	"fmt"
	"io"
	"maps"
	"math"
	"path/filepath"
	"slices"
	"strings"

	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/validate"
)

// Escape makes user text (names, paths, values) literal in Markdown: the
// characters that start emphasis, links, code, headings, tables or HTML
// are preceded by a backslash, and line ends become spaces.
func Escape(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch r {
		case '\\', '`', '*', '_', '{', '}', '[', ']', '<', '>', '#', '|', '~', '!', '$', '&':
			b.WriteByte('\\')
			b.WriteRune(r)
		case '\n', '\r':
			b.WriteByte(' ')
		default:
			b.WriteRune(r)
		}
	}
	return b.String()
}

// Write renders the audit. figures are the SVG files beside the report.
func Write(w io.Writer, a *validate.Audit, figures []plots.Figure) error {
	ew := &errWriter{w: w}
	r := &renderer{w: ew, a: a, figs: map[string]plots.Figure{}}
	for _, f := range figures {
		r.figs[f.Name] = f
	}
	r.header()
	r.purpose()
	r.verdict()
	r.summary()
	r.cohort()
	r.imputed()
	r.discrimination()
	r.calibration()
	r.overall()
	r.usefulness()
	r.sampleSize()
	r.subgroups()
	r.clusters()
	r.overTime()
	r.caseMix()
	r.update()
	r.development()
	r.fit()
	r.internal()
	r.methods()
	r.provenance()
	r.caution()
	r.tripod()
	return ew.err
}

type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) Write(p []byte) (int, error) {
	if e.err != nil {
		return 0, e.err
	}
	n, err := e.w.Write(p)
	e.err = err
	return n, err
}

type renderer struct {
	w    *errWriter
	a    *validate.Audit
	figs map[string]plots.Figure
}

func (r *renderer) p(format string, args ...any) { fmt.Fprintf(r.w, format, args...) }

func (r *renderer) figure(name string) {
	if f, ok := r.figs[name]; ok {
		r.p("![%s](%s)\n\n", f.Title, f.Name)
	}
}

func (r *renderer) header() {
	a := r.a
	r.p("# Model audit: %s\n\n", Escape(a.Model.Name))
	what := "the frozen model " + code(a.Model.Spec)
	if fm := a.Model.FittedModel; fm != nil {
		what = "the recipe " + code(a.Model.Spec) + " as fitted in this audit"
		if dev := a.Development; dev != nil && dev.File != "" {
			what += " on " + code(dev.File)
		}
		what += " (written as " + code(filepath.Base(fm.Path)) + ")"
	}
	if a.Model.Source == "predicted risks" {
		what = "the predicted risks in column " + code(a.Model.Column)
		if a.Model.PredictedPercent {
			what += " (percentages, each divided by 100)"
		}
	}
	cohortFile := ""
	for _, in := range a.Provenance.Inputs {
		if in.Role == "cohort" {
			cohortFile = in.FileText()
		}
	}
	r.p("Audit of %s on the cohort %s, outcome %s = %s. Made %s by %s. %s\n\n",
		what, code(cohortFile), code(a.Model.Outcome), code(a.Model.Event), a.Provenance.StartedAt, Escape(a.Provenance.Tool), auditDateLine(a.Provenance))
	if l := cohortOutcomeLine(a.Model.CohortOutcome, false); l != "" {
		r.p("%s\n\n", l)
	}
	if a.CohortIsDevelopment {
		r.p("No new cohort was given: the measures below are the model's apparent performance on its development data, and the internal validation says how optimistic they are.\n\n")
	}
}

// cohortOutcomeLine says, in Markdown, for an audit (models false) or a
// comparison of models told that the cohort codes the outcome otherwise,
// which column and values were read and what the model names; "" when
// the cohort uses the model's own codes.
func cohortOutcomeLine(co *validate.CohortOutcome, models bool) string {
	if co == nil {
		return ""
	}
	nonEvent := func(v string) string {
		if v == "" {
			return "any other value a non-event"
		}
		return "non-event " + code(v)
	}
	whose, same := "model's", "the model, its SHA-256 and its coefficients are"
	if models {
		whose, same = "models'", "the models, their SHA-256 and their coefficients are"
	}
	return fmt.Sprintf("The cohort's outcome was read from column %s with event value %s (%s) instead of the %s %s = %s (%s), as this cohort was said to code it; %s unchanged.",
		code(co.Column), code(co.Event), nonEvent(co.NonEvent), whose, code(co.ModelColumn), code(co.ModelEvent), nonEvent(co.ModelNonEvent), same)
}

func (r *renderer) fit() {
	d := r.a.Development
	if d == nil || d.Fit == nil {
		return
	}
	st := d.Fit.FitStats
	if len(st.Terms) == 0 {
		return
	}
	r.p("## Model fit on the development data\n\n")
	if r.a.Internal != nil && r.a.Internal.Refitted {
		r.p("The frozen model's terms were refitted as a recipe on %s, since the bootstrap needs a recipe to refit; the fit and the internal validation below describe that refitted model.\n\n", code(d.File))
	} else {
		r.p("The recipe was fitted on %s by %s (%d Newton steps).\n\n", code(d.File), st.Method, st.Iterations)
	}
	t := table{head: []string{"term", "coefficient", "SE", "z", "p", "odds ratio", "95% CI"}}
	for _, term := range st.Terms {
		f3 := func(v float64) string { return num(v, "%.3f") }
		or, ci := OddsRatio(term.OddsRatio, term.Coef, f3),
			OddsRatioEnd(term.ORCI[0], term.CoefCI[0], f3)+" to "+OddsRatioEnd(term.ORCI[1], term.CoefCI[1], f3)
		if term.Term == model.InterceptTerm {
			or, ci = "—", "—"
		}
		t.add(code(term.Term), num(term.Coef, "%.4f"), num(term.SE, "%.4f"), num(term.Z, "%.2f"), FormatFitP(term.P), or, ci)
	}
	t.write(r.w)
	r.p("%s\n\n", InterceptNote)
	if notes := UnitNotes(st.Terms); len(notes) > 0 {
		r.p("Odds ratios are per one unit of the column except:\n\n")
		for _, n := range notes {
			r.p("- %s\n", Escape(n))
		}
		r.p("\n")
	}
	if st.PMethod == model.PPenalisedLR {
		r.p("The p-values are %s tests, each refitting the model with that coefficient held at 0, and the intervals are %s; SE and z are Wald.\n\n", model.PPenalisedLR, model.CIProfilePenalised)
	}
	t = table{head: []string{"statistic", "value"}}
	t.add("rows used (events)", fmt.Sprintf("%d (%d)", st.N, st.Events))
	t.add("−2 log-likelihood", fmt.Sprintf("%s (intercept only %s)", num(st.Neg2LL, "%.3f"), num(st.NullNeg2LL, "%.3f")))
	t.add("likelihood-ratio χ²", fmt.Sprintf("%s on %d df, p %s", num(st.LRChi2, "%.3f"), st.LRDF, FormatP(st.LRP)))
	t.add("AIC / BIC", fmt.Sprintf("%s / %s", num(st.AIC, "%.3f"), num(st.BIC, "%.3f")))
	t.add("Nagelkerke R²", num(st.NagelkerkeR2, "%.4f"))
	t.add("Hosmer–Lemeshow", hlText(st.HL, 3))
	t.write(r.w)
}

func (r *renderer) internal() {
	in := r.a.Internal
	if in == nil {
		return
	}
	r.p("## Internal validation\n\n")
	r.p("Optimism-corrected bootstrap (Efron 1983; Harrell, Lee & Mark 1996): %d samples of the development rows drawn with replacement (seed %d), the recipe refitted on each, and every measure taken on the sample and on the original rows; the optimism is the mean difference, and the corrected figure is the apparent one less the optimism. %d replicates failed to fit and were left out",
		in.Bootstrap, in.Seed, in.Failed)
	if len(in.Reasons) > 0 {
		var parts []string
		for _, k := range slices.Sorted(maps.Keys(in.Reasons)) {
			parts = append(parts, fmt.Sprintf("%s: %d", k, in.Reasons[k]))
		}
		r.p(" (%s)", strings.Join(parts, "; "))
	}
	r.p(".\n\n")
	if in.Warning != "" {
		r.p("**%s**\n\n", in.Warning)
	}
	m := in.Metrics
	t := table{head: []string{"measure", "apparent", "optimism", "corrected", "what the corrected figure means"}}
	add := func(name, key string, c validate.Corrected, meaning string) {
		f := validate.MeasureFormat(key)
		t.add(name, num(c.Apparent, f), signed(c.Optimism, "%+"+f[1:]), num(c.Corrected, f), meaning)
	}
	add("AUC", "auc", m.AUC, "discrimination to expect in new patients from the same population")
	add("calibration slope", "slope", m.Slope, "the uniform shrinkage factor")
	add("calibration-in-the-large", "citl", m.CITL, "average miscalibration to expect")
	add("Brier score", "brier", m.Brier, "")
	add("scaled Brier score", "scaled_brier", m.ScaledBrier, "")
	add("Nagelkerke R²", "nagelkerke_r2", m.R2, "")
	add("ICI", "ici", m.ICI, fmt.Sprintf("LOWESS with δ = %g of the risk range, here and in every replicate", in.ICIDelta))
	t.write(r.w)
	r.p("The apparent ICI here is measured with LOWESS δ = %g of the risk range, the δ every replicate uses so that the optimism compares like with like; it can therefore differ slightly from the development data's ICI elsewhere in this report, which uses the default δ of the flexible calibration curve (see Methods).\n\n", in.ICIDelta)
	r.p("The shrinkage factor %s multiplies every coefficient of a shrunken model, whose intercept is then re-estimated (Van Houwelingen & le Cessie 1990)", num(in.Shrinkage, "%.3f"))
	if in.ShrunkenModel != "" {
		r.p("; it was written to %s", code(in.ShrunkenModel))
	}
	r.p(".\n\n")
}

// code quotes user text as inline code, choosing a fence longer than any
// run of backticks inside it.
func code(s string) string {
	fence := "`"
	for strings.Contains(s, fence) {
		fence += "`"
	}
	pad := ""
	if strings.HasPrefix(s, "`") || strings.HasSuffix(s, "`") {
		pad = " "
	}
	s = strings.NewReplacer("\n", " ", "\r", " ").Replace(s)
	return fence + pad + s + pad + fence
}

func (r *renderer) verdict() {
	v := r.a.Verdict
	if v == nil {
		return
	}
	failed := 0
	for _, c := range v.Criteria {
		if !c.Passed {
			failed++
		}
	}
	word := map[string]string{"pass": "PASS — every criterion is met", "review": "REVIEW — only review criteria are not met",
		"fail": "FAIL — at least one criterion is not met"}[v.Status]
	if n := v.CountSubgroups(); n.Checks > 0 {
		word = map[string]string{"pass": "PASS — every criterion is met, overall and in every subgroup judged",
			"review": "REVIEW — only review criteria, or subgroup checks counted as review, are not met",
			"fail":   "FAIL — at least one criterion is not met"}[v.Status]
		if v.Status == "pass" && n.Failed > 0 {
			word = "PASS — every criterion is met overall; the subgroup checks not met are not counted (subgroup criteria: ignore)"
		}
	}
	r.p("**Verdict: %s** (%d of %d criteria not met%s).\n\n", word, failed, len(v.Criteria), subgroupCounts(v, "; "))
	t := table{head: []string{"criterion", "bound", "value", "result", "severity"}}
	for _, c := range v.Criteria {
		val := validate.FormatMeasure(c.Measure, c.Value)
		if c.Interval != nil {
			val = measureInterval(c.Measure, *c.Interval)
		}
		if c.AtThreshold != nil && c.Note == "" {
			val += fmt.Sprintf(" (least, at threshold %g)", *c.AtThreshold)
		}
		res := "met"
		switch {
		case c.Note == validate.NoThresholdInRange:
			res = "**not met** (cannot be judged: no decision-curve threshold in the range)"
		case c.Note != "" && validate.IsPooledMeasure(c.Measure) && r.a.Clusters != nil:
			res = "**not met** (cannot be judged: " + validate.PooledReason(&r.a.Clusters.Pooled, c.Measure) + ")"
		case c.Note != "":
			res = "**not met** (cannot be judged: not estimable)"
		case !c.Passed:
			res = "**not met**"
		}
		t.add(code(c.Measure), c.Bound, val, res, c.Severity)
	}
	r.subgroupVerdictRows(&t)
	t.write(r.w)
	r.subgroupVerdictNote()
	r.p("Sources of the bounds:\n\n")
	for _, c := range v.Criteria {
		if c.Source != "" {
			r.p("- %s: %s\n", code(c.Measure), Escape(c.Source))
		}
	}
	r.p("\n")
}

func (r *renderer) summary() {
	r.p("## Summary\n\n")
	for _, f := range r.a.Summary {
		r.p("- **%s.** %s\n", capitalise(f.Area), f.Text)
	}
	r.p("\n> %s\n\n", validate.Caution)
}

func capitalise(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func (r *renderer) cohort() {
	c := r.a.Cohort
	r.p("## Cohort\n\n")
	t := table{head: []string{"", "count"}}
	t.add("rows read", fmt.Sprint(c.Rows))
	used := "rows used (complete cases)"
	if r.a.Imputation != nil {
		used = "rows used (each completed dataset)" // completed: no row is left out
	}
	t.add(used, fmt.Sprint(c.Used))
	t.add("rows left out for missing values", fmt.Sprint(c.Excluded))
	for _, e := range c.ExcludedByColumn {
		t.add("  missing "+code(e.Column), fmt.Sprint(e.Rows))
	}
	t.add("events", fmt.Sprintf("%d (%.1f%%)", c.Events, 100*c.EventRate))
	t.add("mean predicted risk", fmt.Sprintf("%.1f%%", 100*c.MeanRisk))
	t.write(r.w)
	if c.Clamped > 0 {
		r.p("%d predicted risks below %g or above 1 − %g (such as risks of exactly 0 or 1) were clamped to that range before taking their logit for the calibration fits.\n\n", c.Clamped, c.Epsilon, c.Epsilon)
	}
}

func (r *renderer) discrimination() {
	d := r.a.Discrimination
	r.p("## Discrimination\n\n")
	t := table{head: []string{"measure", "value", "95% CI", "what it means"}}
	why := r.a.AUCCIReason()
	t.add("AUC (c-statistic)", f3(d.AUC), Interval(d.CI, "%.3f", why), fmt.Sprintf("the chance that a patient with the event has a higher predicted risk than one without (%d events, %d non-events)", d.Events, d.NonEvents))
	t.add("AUC, logit-scale interval", f3(d.AUC), Interval(d.LogitCI, "%.3f", why), "the same interval made on the logit scale, which cannot leave (0, 1)")
	t.add("DeLong standard error", f4(d.SE), "", "")
	t.write(r.w)
	for _, n := range d.Notes {
		r.p("Note: %s.\n\n", n)
	}
	r.figure("roc.svg")
}

func (r *renderer) calibration() {
	c := r.a.Calibration
	r.p("## Calibration\n\n")
	t := table{head: []string{"measure", "value", "95% CI", "ideal", "what it means"}}
	t.add("calibration-in-the-large", f3(c.CITL), ci3(c.CITLCI), "0", citlMeaning(c))
	t.add("calibration slope", f3(c.Slope), ci3(c.SlopeCI), "1", slopeMeaning(c))
	t.add("observed / expected (O/E)", f3(c.OE), ci3(c.OECI), "1", fmt.Sprintf("%.0f events observed, %.1f expected", c.Observed, c.Expected))
	t.add("Hosmer–Lemeshow χ²", num(c.HL.Statistic, "%.2f"), "", "", fmt.Sprintf("%d %s, %d df, p %s", c.HL.Groups, plural(c.HL.Groups, "group", "groups"), c.HL.DF, FormatP(c.HL.P)))
	bci := r.a.BootstrapCI
	bootCI := func(get func(*validate.PercentileCIs) [2]float64) string {
		if bci == nil {
			return ""
		}
		return Interval(get(bci), "%.4f", "") + "*"
	}
	t.add("ICI", f4(c.ICI), bootCI(func(b *validate.PercentileCIs) [2]float64 { return b.ICI }), "0", "mean distance between predicted and smoothed observed risk, on the risk scale")
	t.add("E50", f4(c.E50), bootCI(func(b *validate.PercentileCIs) [2]float64 { return b.E50 }), "0", "median of that distance")
	t.add("E90", f4(c.E90), bootCI(func(b *validate.PercentileCIs) [2]float64 { return b.E90 }), "0", "90th percentile of that distance")
	t.add("Emax", f4(c.Emax), "", "0", "largest distance")
	t.write(r.w)
	if bci != nil {
		r.p("\\* Bootstrap percentile intervals from %d resamples of the cohort (seed %d; the model fixed; the curve in each resample with δ = %g of the risk range).\n\n", bci.Replicates, bci.Seed, bci.ICIDelta)
	}
	delta := "δ = 0: a local fit at every patient"
	if c.Delta > 0 {
		delta = fmt.Sprintf("δ = %.4g (local fits %d, the rest interpolated)", c.Delta, c.FitPoints)
	}
	for _, n := range c.Notes {
		r.p("Note: %s.\n\n", n)
	}
	r.p("The flexible calibration curve is a LOWESS smooth of the outcome on the predicted risk (span %.2f, local linear, tricube weights, no robustness iterations, %s). Its band is %s.\n\n", c.Span, delta, c.Band)
	r.figure("calibration.svg")
	g := r.a.Curves.Groups
	if len(g) > 0 {
		t := table{head: []string{"risk group", "patients", "predicted risk", "mean predicted", "observed", "95% CI"}}
		for i, grp := range g {
			t.add(fmt.Sprint(i+1), fmt.Sprint(grp.N), fmt.Sprintf("%.1f–%.1f%%", 100*grp.MinRisk, 100*grp.MaxRisk),
				pct(grp.MeanRisk), pct(grp.Observed.Value), pctInterval(grp.Observed.CI, "–"))
		}
		r.p("Observed events by group of predicted risk (exact Clopper–Pearson intervals):\n\n")
		t.write(r.w)
	}
}

func citlMeaning(c validate.Calibration) string {
	switch {
	case math.IsNaN(c.CITL):
		return "could not be estimated"
	case c.CITLCI[0] > 0:
		return "predicted risks are too low on average"
	case c.CITLCI[1] < 0:
		return "predicted risks are too high on average"
	}
	return "no evidence that risks are too high or too low on average"
}

func slopeMeaning(c validate.Calibration) string {
	switch {
	case math.IsNaN(c.Slope):
		return "could not be estimated"
	case c.SlopeCI[1] < 1:
		return "risks too extreme (high too high, low too low)"
	case c.SlopeCI[0] > 1:
		return "risks too moderate"
	}
	return "no evidence against a slope of 1"
}

func (r *renderer) overall() {
	o := r.a.Overall
	r.p("## Overall accuracy\n\n")
	t := table{head: []string{"measure", "value", "95% CI", "what it means"}}
	t.add("Brier score", f4(o.Brier), "", "mean squared difference between predicted risk and outcome (0 is perfect)")
	sbCI := ""
	if b := r.a.BootstrapCI; b != nil {
		sbCI = Interval(b.ScaledBrier, "%.3f", "") + " (bootstrap percentile)"
	}
	t.add("scaled Brier score", f3(o.ScaledBrier), sbCI, "share of the error of predicting the event rate for everyone that the model removes (1 is perfect, 0 no better)")
	t.write(r.w)
}

func (r *renderer) usefulness() {
	r.p("## Clinical usefulness\n\n")
	r.p("Net benefit counts the true positives per patient, less the false positives weighted by the odds of the threshold: the exchange rate a clinician accepts by choosing that threshold (Vickers & Elkin 2006).\n\n")
	head := []string{"risk threshold", "model", "treat everyone", "treat no one", "model gains over the better default"}
	b := r.a.BootstrapCI
	if b != nil {
		head = []string{"risk threshold", "model", "95% CI (bootstrap)", "treat everyone", "treat no one", "model gains over the better default", "gain 95% CI (bootstrap)"}
	}
	t := table{head: head}
	for i, nb := range r.a.NetBenefit {
		cells := []string{pct(nb.Threshold), f4(nb.Model)}
		if b != nil && i < len(b.NetBenefit) {
			cells = append(cells, Interval(b.NetBenefit[i].CI, "%.4f", ""))
		}
		cells = append(cells, f4(nb.TreatAll), "0", gainText(nb.Gain(), r.a.NetBenefitMinGain))
		if b != nil && i < len(b.NetBenefitGain) {
			cells = append(cells, Interval(b.NetBenefitGain[i].CI, "%.4f", ""))
		}
		t.add(cells...)
	}
	t.write(r.w)
	r.p("A gain is claimed only where it reaches %s (a gain of %g in net benefit), a minimum of common practice rather than a published threshold: below it the model's advantage is within the rounding of the table and of no practical weight.",
		validate.MinGainText(r.a.NetBenefitMinGain), r.a.NetBenefitMinGain)
	if b != nil {
		r.p(" The gain's interval is the 2.5th to 97.5th percentile of the gain over the better default strategy in each bootstrap replicate, both strategies recomputed on the replicate.")
	}
	r.p("\n\n")
	r.figure("decision_curve.svg")
	if len(r.a.Classification) > 0 {
		r.p("Classifying patients at or above a risk threshold as high risk (exact Clopper–Pearson intervals):\n\n")
		t := table{head: []string{"threshold", "flagged", "sensitivity", "specificity", "PPV", "NPV"}}
		for _, c := range r.a.Classification {
			t.add(pct(c.Threshold), pct(c.Flagged), prop(c.Sensitivity), prop(c.Specificity), prop(c.PPV), prop(c.NPV))
		}
		t.write(r.w)
	}
	r.figure("risk_histogram.svg")
}

func (r *renderer) subgroups() {
	gs := r.a.Subgroups
	if len(gs) == 0 {
		return
	}
	r.p("## Subgroups\n\n")
	r.p("The model's performance in each subgroup, with 95%% intervals. A subgroup with fewer than %d events or non-events is reported as too small: its measures would be too imprecise to act on (common practice), so it is not judged against the criteria. Criteria on AUC, O/E, calibration-in-the-large and slope are checked in every measured subgroup%s.\n\n", r.a.MinSubgroupEvents, subgroupCountsAs(r.a.Verdict))
	r.bands()
	t := table{head: []string{"subgroup", "patients", "events", "AUC (95% CI)", "O/E (95% CI)", "CITL (95% CI)", "slope (95% CI)", "criteria not met"}}
	var g validate.Subgroup
	iv := func(v *float64, ci *[2]float64, digits int) string {
		switch {
		case v == nil && g.TooSmall:
			return "—"
		case v == nil:
			return NotEstimable
		}
		f := fmt.Sprintf("%%.%df", digits)
		return fmt.Sprintf("%s (%s)", num(*v, f), Interval(*ci, f, ""))
	}
	for _, g = range gs {
		failed := strings.Join(g.Failed, "; ")
		if g.TooSmall {
			failed = "too small to measure: not judged"
		}
		t.add(code(g.Column)+" = "+code(g.Level)+bandInterval(g.Band), fmt.Sprint(g.N), fmt.Sprint(g.Events),
			iv(g.AUC, g.AUCCI, 3), iv(g.OE, g.OECI, 2), iv(g.CITL, g.CITLCI, 2), iv(g.Slope, g.SlopeCI, 2), failed)
	}
	t.write(r.w)
	r.figure("subgroups.svg")
}

func (r *renderer) sampleSize() {
	ss := r.a.SampleSize
	if ss == nil {
		return
	}
	r.p("## Was the cohort large enough?\n\n")
	r.p("The minimum sample size for precise estimates, criterion by criterion (after Riley et al. 2021), with the anticipated values taken from %s:\n\n", ss.Basis)
	t := table{head: []string{"criterion", "target", "patients needed", "events needed", "this cohort"}}
	var missing []string
	for _, c := range ss.Criteria {
		if c.N == nil || c.Events == nil || c.Met == nil {
			t.add(c.Measure, c.Target, "cannot be computed: "+c.NotComputable, "", "cannot be judged")
			missing = append(missing, c.Measure)
			continue
		}
		met := "enough"
		if !*c.Met {
			met = "**too few**"
		}
		t.add(c.Measure, c.Target, fmt.Sprint(*c.N), fmt.Sprint(*c.Events), met)
	}
	t.write(r.w)
	if ss.FromOutcomes {
		r.p("These needs use this cohort's outcomes (its calibration or its AUC, as above). 'riskaudit samplesize --model … --data …' on the same file reads no outcomes: it takes the model's risks as calibrated (unless told otherwise) and the C-statistic its linear predictor implies, so it anticipates other values and gives other needs.\n\n")
	}
	switch {
	case ss.Short != nil && *ss.Short:
		r.p("**Caution: the cohort's %d patients fall short of the %d the %s criterion needs; the intervals above are wider than the targets, and the audit's conclusions are correspondingly less certain.**\n\n", ss.Have, *ss.Required, ss.Driver)
	case ss.Short != nil:
		r.p("The cohort's %d patients meet every criterion (the largest need is %d, for the %s).\n\n", ss.Have, *ss.Required, ss.Driver)
	case ss.Required != nil:
		r.p("The cohort's %d patients meet the criteria that could be computed (the largest need is %d, for the %s); whether they are enough for the %s cannot be judged, since %s could not be computed.\n\n",
			ss.Have, *ss.Required, ss.Driver, strings.Join(missing, " and "), plural(len(missing), "its size", "their sizes"))
	default:
		r.p("No criterion's size could be computed, so whether the cohort's %d patients are enough cannot be judged.\n\n", ss.Have)
	}
}

// hlText writes a Hosmer–Lemeshow test: statistic, df, p and groups, or
// that it could not be computed.
func hlText(h metrics.HosmerLemeshowTest, digits int) string {
	if !finite(h.Statistic) {
		return fmt.Sprintf("not computable (%d %s; a group's risks are all 0 or all 1)", h.Groups, plural(h.Groups, "group", "groups"))
	}
	return fmt.Sprintf("%.*f on %d df, p %s (%d %s)", digits, h.Statistic, h.DF, FormatP(h.P), h.Groups, plural(h.Groups, "group", "groups"))
}

// gainText is the net benefit gained over the better default, also per
// 1000 patients.
// gainText writes a net-benefit gain with its meaning per 1000 patients,
// and says "no gain" where it falls short of min.
func gainText(gain, min float64) string {
	if !finite(gain) {
		return NotEstimable
	}
	s := fmt.Sprintf("%s (%s net true positives per 1000 patients)", signed(gain, "%+.4f"), signed(1000*gain, "%+.1f"))
	if !validate.GainReaches(gain, min) {
		s += "; no gain"
	}
	return s
}

// plural picks the singular or plural form for n things.
func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func (r *renderer) caseMix() {
	cm := r.a.CaseMix
	if cm == nil {
		return
	}
	r.p("## Case-mix: development data against this cohort\n\n%s\n\n", Escape(cm.Interpretation))
	diff := func(v float64) string {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return "not defined"
		}
		return signed(v, "%+.2f")
	}
	t := table{head: []string{"predictor", "development", "this cohort", "standardised difference", "missing (dev / new)"}}
	var notes []string
	for _, pm := range cm.Predictors {
		if pm.Note != "" {
			notes = append(notes, code(pm.Column)+": "+Escape(pm.Note)+".")
		}
		miss := fmt.Sprintf("%.1f%% / %.1f%%", 100*pm.DevMissing, 100*pm.NewMissing)
		if pm.Kind == "numeric" {
			t.add(code(pm.Column), fmt.Sprintf("%.3g (SD %.3g)", pm.Dev[0], pm.Dev[1]), fmt.Sprintf("%.3g (SD %.3g)", pm.New[0], pm.New[1]),
				diff(pm.StdDiff[0]), miss)
			continue
		}
		for j, l := range pm.Levels {
			m := ""
			if j == 0 {
				m = miss
			}
			t.add(code(pm.Column)+" = "+code(l), pct(pm.Dev[j]), pct(pm.New[j]), diff(pm.StdDiff[j]), m)
		}
	}
	t.write(r.w)
	for _, n := range notes {
		r.p("- %s\n", n)
	}
	if len(notes) > 0 {
		r.p("\n")
	}
	r.p("Standardised differences (Austin 2009) of 0.1 or more in absolute value are commonly taken as a meaningful imbalance. The membership model (Debray et al. 2015) is a logistic regression of cohort membership on the model's terms and the outcome; ")
	if math.IsNaN(cm.MembershipC) {
		r.p("here it could not be fitted (%s), so its c-statistic is not available.\n\n", Escape(cm.MembershipNote))
	} else {
		r.p("its c-statistic, %.3f, summarises how different the two populations are.", cm.MembershipC)
		if cm.MembershipNote != "" {
			r.p(" Here %s.", Escape(cm.MembershipNote))
		}
		r.p("\n\n")
	}
	if len(cm.MembershipDropped) > 0 {
		r.p("Terms left out of the membership model, which could not estimate them beside the others:\n\n")
		for _, d := range cm.MembershipDropped {
			r.p("- %s: %s.\n", code(d.Term), Escape(d.Reason))
		}
		r.p("\n")
	}
	r.figure("casemix_lp.svg")
	r.figure("casemix_differences.svg")
}

func (r *renderer) update() {
	u := r.a.Update
	if u == nil {
		return
	}
	r.p("## Model updating\n\n")
	r.p("The model was updated on this cohort in increasing order of change — recalibration in the large (intercept, with the linear predictor as offset), logistic recalibration (intercept and slope), model revision (every coefficient, with the original linear predictor as offset) — and the closed testing procedure of Vergouwe et al. (2017) chose among them: the revision is tested against the original model, then each simpler update against the revision, keeping the first not rejected at α = %g.\n\n", u.Alpha)
	t := table{head: []string{"model", "parameters estimated", "−2 log-likelihood", "AIC"}}
	for _, s := range u.Steps {
		t.add(s.Method, fmt.Sprint(s.Params), num(s.Neg2LL, "%.3f"), num(s.AIC, "%.3f"))
	}
	t.write(r.w)
	t = table{head: []string{"test against the revision", "likelihood ratio χ²", "df", "p", "result"}}
	for _, ts := range u.Tests {
		res := "not rejected: kept"
		if ts.Rejected {
			res = "rejected"
		}
		t.add(ts.Simpler, num(ts.LRChi2, "%.3f"), fmt.Sprint(ts.DF), FormatP(ts.P), res)
	}
	t.write(r.w)
	r.p("**Chosen: %s**, written as a frozen model to %s with its provenance (the parent model's file and SHA-256, the cohort's SHA-256, the method).\n\n", u.Chosen, code(u.ModelFile))
	if u.Parent.FittedInAudit {
		r.p("The parent model is the frozen model this audit fitted from the recipe, %s (SHA-256 %s), written into the audit folder.\n\n", code(u.Parent.Path), code(u.Parent.SHA256))
	} else {
		r.p("The parent model is %s (SHA-256 %s).\n\n", code(u.Parent.Path), code(u.Parent.SHA256))
	}
	if e := u.Expected; e != nil {
		r.p("Its performance expected in new patients from this cohort's population, by %d bootstrap replicates of the updating (seed %d, %d failed): AUC %s (apparent %s), calibration slope %s, calibration-in-the-large %s, Brier score %s.\n\n",
			u.Bootstrap, u.Seed, u.Failed, f3(e.AUC.Corrected), f3(e.AUC.Apparent), f3(e.Slope.Corrected), f3(e.CITL.Corrected), f4(e.Brier.Corrected))
	}
	r.p("**An updated model is a new model: it needs its own validation, on patients it was not updated on, before it is used.**\n\n")
}

func (r *renderer) development() {
	d := r.a.Development
	if d == nil || d.Measures == nil {
		return
	}
	dm := d.Measures
	r.p("## Development data compared\n\n")
	r.p("The same measures on the development data %s (%d patients, %d events), beside this cohort.", code(d.File), dm.Cohort.Used, dm.Cohort.Events)
	if d.Fitted {
		r.p(" The model was fitted to these data, so their figures are apparent performance: measured on the rows the model learnt from, they are optimistic.")
	}
	r.p("\n\n")
	t := table{head: []string{"measure", "development", "this cohort", "change"}}
	row := func(name, key string, dev, now float64) {
		change := "—"
		if finite(dev) && finite(now) {
			change = signed(now-dev, "%+"+validate.MeasureFormat(key)[1:])
			if validate.PercentMeasure(key) {
				change = signed(100*(now-dev), "%+.1f") + " points"
			}
		}
		t.add(name, validate.FormatMeasure(key, dev), validate.FormatMeasure(key, now), change)
	}
	row("AUC", "auc", dm.Discrimination.AUC, r.a.Discrimination.AUC)
	row("calibration-in-the-large", "citl", dm.Calibration.CITL, r.a.Calibration.CITL)
	row("calibration slope", "slope", dm.Calibration.Slope, r.a.Calibration.Slope)
	row("O/E", "oe", dm.Calibration.OE, r.a.Calibration.OE)
	row("ICI", "ici", dm.Calibration.ICI, r.a.Calibration.ICI)
	row("Brier score", "brier", dm.Overall.Brier, r.a.Overall.Brier)
	row("scaled Brier score", "scaled_brier", dm.Overall.ScaledBrier, r.a.Overall.ScaledBrier)
	row("event rate", "event_rate", dm.Cohort.EventRate, r.a.Cohort.EventRate)
	row("mean predicted risk", "mean_risk", dm.Cohort.MeanRisk, r.a.Cohort.MeanRisk)
	t.write(r.w)
}

func (r *renderer) methods() {
	c := r.a.Calibration
	r.p("## Methods\n\n")
	items := []string{
		"AUC: the Mann–Whitney probability, ties counted ½ (Hanley & McNeil 1982); standard error by DeLong, DeLong & Clarke-Pearson (1988), computed from mid-ranks (Sun & Xu 2014); 95% CI AUC ± 1.96·SE clipped to [0, 1], and a logit-scale interval.",
		"Calibration-in-the-large: the intercept of a logistic regression of the outcome with logit(risk) as offset; calibration slope: the coefficient of logit(risk) with a free intercept (Cox 1958; Van Calster et al. 2016). Wald intervals.",
		"O/E: observed over expected events, 95% CI exp(ln(O/E) ± 1.96·√((1 − O/n)/O)).",
		fmt.Sprintf("Hosmer–Lemeshow test (Hosmer & Lemeshow 1980): %d groups of predicted risk, ties kept together, df = %d.", c.HL.Groups, c.HL.DF),
		fmt.Sprintf("Flexible calibration curve: LOWESS (Cleveland 1979), span %.2f, local linear, tricube weights, no robustness iterations, the local linear fit clipped to [0, 1] wherever it strays outside (an observed risk cannot), with its pointwise band the clipped fit ± 1.96·SE, each end clipped to [0, 1] too; ICI, E50, E90 and Emax are the distances of the predicted risks from the clipped curve (Austin & Steyerberg 2019). Where a neighbourhood has no spread of predicted risk to fit a line to — its nearest patients all tied with the point, or a weighted variance of the risks at most 1e-10 of their weighted mean square distance from it — the local fit is the local weighted mean of the outcomes (over every patient tied with the point, when the nearest all tie), with the same band formula; when every risk is the same, the curve is the event rate.", c.Span),
		"Brier score (Brier 1950) and scaled Brier score (Steyerberg et al. 2010).",
		"Net benefit (Vickers & Elkin 2006), treating when the predicted risk is at or above the threshold.",
		"Proportions with exact Clopper–Pearson intervals (Clopper & Pearson 1934).",
		"Every 95% interval written with 1.96 uses z = 1.959964, the 97.5% point of the normal distribution.",
	}
	if m := r.a.Model; m.PredictedPercent {
		items = append(items, "Predicted risks: the column "+code(m.Column)+" holds risks in percent (0 to 100), as --predicted-percent (plan key predicted_percent) says; each was divided by 100 before any measure, and every risk in this report is on the scale of 0 to 1.")
	}
	if r.a.SampleSize != nil {
		items = append(items, "Sample size: the minimum size for precise O/E, calibration slope, C-statistic and standardised net benefit, after Riley et al. (2021): var(ln O/E) = (1 − φ)/(nφ); the slope's variance from the Fisher information of the calibration model over the linear predictor's distribution; Newcombe's (2006) variance of the C-statistic; the delta-method variance of NB/φ. Anticipated values as stated in that section.")
	}
	if r.a.CaseMix != nil {
		items = append(items, "Case-mix: standardised differences (Austin 2009) and the membership model (Debray et al. 2015).")
	}
	if r.a.Internal != nil {
		items = append(items, "Internal validation: the optimism-corrected bootstrap (Efron 1983; Harrell, Lee & Mark 1996); shrinkage (Van Houwelingen & le Cessie 1990).")
	}
	if r.a.Update != nil {
		items = append(items, "Updating: recalibration in the large, logistic recalibration and model revision chosen by closed testing (Vergouwe et al. 2017).")
	}
	if len(r.a.Subgroups) > 0 {
		items = append(items, "Subgroups: the measures above within each level of the named columns (numeric columns in half-open bands [lower, upper)), with their intervals; the criteria on AUC, O/E, calibration-in-the-large and slope checked in each subgroup large enough to judge.")
	}
	items = append(items, r.overTimeMethods()...)
	items = append(items, r.imputedMethods()...)
	for _, it := range items {
		r.p("- %s\n", it)
	}
	r.p("\n")
}

func (r *renderer) caution() {
	r.p("## Caution\n\n%s\n", validate.Caution)
}

// table is a Markdown pipe table whose columns are padded so that it
// also lines up as plain text.
type table struct {
	head []string
	rows [][]string
}

func (t *table) add(cells ...string) { t.rows = append(t.rows, cells) }

func (t *table) write(w io.Writer) {
	width := make([]int, len(t.head))
	for i, h := range t.head {
		width[i] = max(3, len([]rune(h)))
	}
	for _, r := range t.rows {
		for i, c := range r {
			width[i] = max(width[i], len([]rune(c)))
		}
	}
	line := func(cells []string) {
		var b strings.Builder
		b.WriteString("|")
		for i := range t.head {
			c := ""
			if i < len(cells) {
				c = cells[i]
			}
			b.WriteString(" " + c + strings.Repeat(" ", width[i]-len([]rune(c))) + " |")
		}
		fmt.Fprintln(w, b.String())
	}
	line(t.head)
	var b strings.Builder
	b.WriteString("|")
	for i := range t.head {
		b.WriteString(strings.Repeat("-", width[i]+2) + "|")
	}
	fmt.Fprintln(w, b.String())
	for _, r := range t.rows {
		line(r)
	}
	fmt.Fprintln(w)
}

func f3(v float64) string { return num(v, "%.3f") }
func f4(v float64) string { return num(v, "%.4f") }

// InterceptNote says why the intercept has no odds ratio in the fit
// tables.
const InterceptNote = "The intercept is the log odds of the event for a patient at every predictor's reference (centred predictors at their centre, categorical ones at their reference level, spline terms at 0); its exponential is those odds, not an odds ratio, so the table leaves its odds-ratio cells empty."

// NotEstimable is how the report and the summary write a value that
// does not exist for the data (NaN).
const NotEstimable = "not estimable"

// num formats v with format, NotEstimable when v is NaN and ∞ or −∞
// when it is infinite, so that no "NaN" or "Inf" reaches the text.
func num(v float64, format string) string {
	switch {
	case math.IsNaN(v):
		return NotEstimable
	case math.IsInf(v, 1):
		return "∞"
	case math.IsInf(v, -1):
		return "−∞"
	}
	return validate.NoNegativeZero(fmt.Sprintf(format, v))
}

// pct writes a share as a percentage with one decimal.
func pct(v float64) string {
	if !finite(v) {
		return num(v, "")
	}
	return validate.NoNegativeZero(fmt.Sprintf("%.1f", 100*v)) + "%"
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// interval writes an interval's ends in format joined by sep, or
// "not estimable (why)" (without the parenthesis when why is empty) when
// an end is NaN or infinite.
func interval(ci [2]float64, format, sep, why string) string {
	if !finite(ci[0]) || !finite(ci[1]) {
		if why == "" {
			return NotEstimable
		}
		return NotEstimable + " (" + why + ")"
	}
	return validate.NoNegativeZero(fmt.Sprintf(format, ci[0])) + sep + validate.NoNegativeZero(fmt.Sprintf(format, ci[1]))
}

// Interval writes a 95% interval as "a to b" with format, or "not
// estimable (why)" when an end is NaN or infinite; the report and the
// command line's summaries write every interval through it.
func Interval(ci [2]float64, format, why string) string { return interval(ci, format, " to ", why) }

// Value writes a measure with format, "not estimable" when it is NaN
// and ∞ or −∞ when it is infinite.
func Value(v float64, format string) string { return num(v, format) }

func ci3(ci [2]float64) string { return Interval(ci, "%.3f", "") }

// measureInterval writes an interval of the named measure in the
// measure's format (validate.MeasureFormat).
func measureInterval(name string, ci [2]float64) string {
	if validate.PercentMeasure(name) {
		ci = [2]float64{100 * ci[0], 100 * ci[1]}
	}
	return Interval(ci, validate.MeasureFormat(name), "")
}

// signed writes v with a sign in format (such as "%+.3f"), but a value
// that rounds to zero without a sign: "0.000", never "-0.000".
func signed(v float64, format string) string {
	s := num(v, format)
	if !finite(v) {
		return s
	}
	if t := strings.TrimLeft(s, "+-"); strings.Trim(t, "0.") == "" {
		return t
	}
	return s
}

// pctInterval writes an interval of shares as percentages, "a% to b%".
func pctInterval(ci [2]float64, sep string) string {
	return interval([2]float64{100 * ci[0], 100 * ci[1]}, "%.1f%%", sep, "")
}

func prop(p metrics.Proportion) string {
	if !finite(p.Value) {
		return "n/a"
	}
	return fmt.Sprintf("%.1f%% (%s)", 100*p.Value, interval([2]float64{100 * p.CI[0], 100 * p.CI[1]}, "%.1f", "–", ""))
}

// FormatP writes a p-value with four decimals, as "< 0.0001" below
// that, or "n/a" when it does not exist. Every p-value riskaudit prints
// goes through it.
func FormatP(p float64) string {
	switch {
	case math.IsNaN(p):
		return "n/a"
	case p < 0.0001:
		return "< 0.0001"
	}
	return fmt.Sprintf("%.4f", p)
}

// OddsRatio writes exp(coef), the odds ratio or, with plain when it is a
// float64 and as "exp(coef)" when it overflows (or underflows to 0).
func OddsRatio(or, coef float64, plain func(float64) string) string {
	if (math.IsInf(or, 1) || or == 0) && finite(coef) {
		return fmt.Sprintf("exp(%.5g)", coef)
	}
	return plain(or)
}

// OddsRatioEnd writes one end of an odds ratio's interval, whose log is
// c: as OddsRatio, "unbounded" when c is infinite, "not found" when it
// could not be computed (a note of the fit says why).
func OddsRatioEnd(or, c float64, plain func(float64) string) string {
	switch {
	case math.IsNaN(c):
		return "not found"
	case math.IsInf(c, 0):
		return "unbounded"
	}
	return OddsRatio(or, c, plain)
}

// FormatFitP is a fit's p-value as FormatP writes it, or "not computed"
// when there is none (the fit's notes say why).
func FormatFitP(p float64) string {
	if math.IsNaN(p) {
		return "not computed"
	}
	return FormatP(p)
}

// subgroupVerdictRows adds to the verdict table every subgroup check that
// was judged and not met, and one row for each subgroup too small to
// judge.
func (r *renderer) subgroupVerdictRows(t *table) {
	v := r.a.Verdict
	size := map[[2]string]validate.Subgroup{}
	for _, g := range r.a.Subgroups {
		size[[2]string{g.Column, g.Level}] = g
	}
	listed := map[[2]string]bool{}
	for _, c := range v.SubgroupChecks {
		where := code(c.Column) + " = " + code(c.Level)
		switch {
		case !c.Judged:
			k := [2]string{c.Column, c.Level}
			if listed[k] {
				continue
			}
			listed[k] = true
			g := size[k]
			t.add("every subgroup criterion in "+where, "—", fmt.Sprintf("%d events, %d non-events", g.Events, g.N-g.Events),
				fmt.Sprintf("not judged: fewer than %d events or non-events", r.a.MinSubgroupEvents), "—")
		case !c.Passed:
			val := validate.FormatMeasure(c.Measure, c.Value)
			if c.Interval != nil {
				val = measureInterval(c.Measure, *c.Interval)
			}
			res := "**not met**"
			if c.Note != "" {
				res += " (cannot be judged: not estimable)"
			}
			sev := c.CountsAs + " (subgroup)"
			if c.CountsAs == "none" {
				res, sev = "not met (not counted)", "not counted"
			}
			t.add(code(c.Measure)+" in "+where, c.Bound, val, res, sev)
		}
	}
}

// subgroupVerdictNote says below the verdict table how the subgroup
// checks count.
func (r *renderer) subgroupVerdictNote() {
	v := r.a.Verdict
	n := v.CountSubgroups()
	if n.Checks == 0 {
		return
	}
	r.p("The table lists every subgroup check not met and every subgroup too small to judge (the Subgroups section has them all): %s. Subgroup checks %s.\n\n",
		n, strings.TrimPrefix(subgroupCountsAs(v), ", where they "))
}

// subgroupCountsAs says how the subgroup checks count in the verdict, as
// a clause beginning ", where they".
func subgroupCountsAs(v *validate.Verdict) string {
	if v == nil {
		return ""
	}
	switch v.SubgroupCriteria {
	case validate.SubgroupFail:
		return ", where they count with the criterion's own severity, as the overall measure's would (subgroup criteria: fail)"
	case validate.SubgroupIgnore:
		return ", where they are listed but not counted in the verdict (subgroup criteria: ignore)"
	case validate.SubgroupReview:
		return ", where they count as review: a subgroup that misses one makes a passing verdict review, never fail (subgroup criteria: review, the default)"
	}
	return ""
}

// bands says how each numeric subgroup column was cut into bands.
func (r *renderer) bands() {
	for _, b := range r.a.SubgroupBands {
		cuts := make([]string, len(b.Cuts))
		for i, c := range b.Cuts {
			cuts[i] = validate.FormatCut(c)
		}
		if b.Quantiles > 0 {
			r.p("%s is cut at its %s in the audited cohort, %s (quantiles of %s).", code(b.Column), quantileWord(b.Quantiles), andList(cuts), validate.QuantileDefinition)
			if b.Note != "" {
				r.p(" As %s.", Escape(b.Note))
			}
		} else {
			r.p("%s is cut at %s.", code(b.Column), andList(cuts))
		}
		r.p(" Each band is the half-open interval [lower, upper): a value exactly on a cut belongs to the band above it.")
		if b.Missing > 0 {
			r.p(" %d audited rows without a value form the band %s.", b.Missing, code(validate.MissingLevel))
		}
		r.p("\n\n")
	}
}

// quantileWord names q quantile bands.
func quantileWord(q int) string {
	if w, ok := map[int]string{2: "median", 3: "tertiles", 4: "quartiles", 5: "quintiles", 10: "deciles"}[q]; ok {
		return w
	}
	return fmt.Sprintf("%d-quantiles", q)
}

// bandInterval writes a banded subgroup's interval, such as " [65, 75)";
// "" for a level of a categorical column.
func bandInterval(b *validate.Band) string {
	if b == nil {
		return ""
	}
	end := func(v float64) string {
		switch {
		case math.IsInf(v, -1):
			return "−∞"
		case math.IsInf(v, 1):
			return "∞"
		}
		return validate.FormatCut(v)
	}
	open := "["
	if math.IsInf(b.Lower, -1) {
		open = "("
	}
	return " " + Escape(fmt.Sprintf("%s%s, %s)", open, end(b.Lower), end(b.Upper)))
}

// UnitNotes gives one line for each odds-ratio unit of the fit's terms
// (model.TermStat.Unit) that is not one unit of the column, the terms
// sharing a unit (the basis terms of one spline) named together:
// "age: per 10 units of age".
func UnitNotes(terms []model.TermStat) []string {
	var order []string
	names := map[string][]string{}
	for _, t := range terms {
		if t.Unit == "" {
			continue
		}
		if _, ok := names[t.Unit]; !ok {
			order = append(order, t.Unit)
		}
		names[t.Unit] = append(names[t.Unit], t.Term)
	}
	lines := make([]string, len(order))
	for i, u := range order {
		lines[i] = strings.Join(names[u], ", ") + ": " + u
	}
	return lines
}
