package report

import (
	"fmt"
	"math"
	"strings"

	"github.com/riskaudit/riskaudit/validate"
)

// ImputedSection is the heading of the section on multiply imputed data.
const ImputedSection = "Multiply imputed data"

// imputed writes the section on a multiply imputed cohort: what was
// pooled and how, the pooled measures with their variance parts, the
// averaged measures (labelled as averages), each imputation's measures,
// and why the pooled figures differ from a complete-case analysis.
func (r *renderer) imputed() {
	im := r.a.Imputation
	if im == nil {
		return
	}
	r.p("## %s\n\n", ImputedSection)
	from := fmt.Sprintf("the %d files given", im.M)
	if im.Column != "" {
		from = fmt.Sprintf("one file, numbered in its column %s", code(im.Column))
	}
	r.p("The cohort came as %d completed datasets (imputations) of the same %d patients, from %s. ", im.M, im.Rows, from)
	if im.PatientsImputed >= 0 {
		r.p("In %d patients at least one of the model's predictor values differs between the imputations: those values were imputed (a value imputed alike in every imputation would not be seen). ", im.PatientsImputed)
	}
	r.p("The model scored every imputation, and every measure was taken in each. " +
		"The AUC (on the logit scale), O/E (on the log scale), calibration-in-the-large, the calibration slope and the Brier score are pooled by Rubin's rules: " +
		"the pooled value is their average across the imputations; its total variance is the average variance within an imputation plus the variance between the imputations, " +
		"the latter inflated a little for the finite number of imputations; and the 95%% interval is a t interval on Barnard and Rubin's degrees of freedom. " +
		"An interval is therefore wider, the more the imputations disagree. " +
		"The fraction of missing information says what share of a measure's uncertainty the missing values cause. " +
		"The figures at the top of this report are these pooled values. " +
		"ICI, E50, E90, Emax, the scaled Brier score and net benefit have no usable variance: they are averages across the imputations, and the calibration curve is the average of the per-imputation curves. " +
		"The Hosmer–Lemeshow test, the risk groups, the ROC curve, the classification table and the risk histogram are the first imputation's.\n\n")
	t := table{head: []string{"pooled measure", "estimate (95% CI)", "within-imputation variance", "between-imputation variance", "total variance", "df", "fraction of missing information", "scale"}}
	for _, m := range imputedMeasures(im) {
		p := m.pm
		if p.Note != "" {
			t.add(m.name, Escape(p.Note), "", "", "", "", "", p.Scale)
			continue
		}
		t.add(m.name, fmt.Sprintf("%s (%s)", num(p.Estimate, m.format), Interval(p.CI, m.format, "")),
			small(p.WithinVariance), small(p.BetweenVariance), small(p.TotalVariance), num(p.DF, "%.1f"), num(p.FMI, "%.3f"), p.Scale)
	}
	t.write(r.w)
	r.p("The variances are on the scale named, the one on which each measure is pooled.\n\n")
	at := table{head: []string{"averaged measure", "average", "lowest imputation", "highest imputation"}}
	av := im.Averaged
	for _, m := range []struct {
		name string
		v    validate.AveragedMeasure
	}{{"ICI", av.ICI}, {"E50", av.E50}, {"E90", av.E90}, {"Emax", av.Emax}, {"scaled Brier score", av.ScaledBrier}} {
		at.add(m.name+" (average)", f4(m.v.Average), f4(m.v.Min), f4(m.v.Max))
	}
	at.write(r.w)
	r.p("The net benefit in the section on clinical usefulness is likewise the average across the imputations.\n\n")
	pt := table{head: []string{"imputation", "AUC", "O/E", "CITL", "slope", "Brier"}}
	p := im.Pooled
	for j, label := range im.Labels {
		pt.add(code(label), f3(p.AUC.PerImputation[j]), f3(p.OE.PerImputation[j]), f3(p.CITL.PerImputation[j]), f3(p.Slope.PerImputation[j]), f4(p.Brier.PerImputation[j]))
	}
	pt.write(r.w)
	r.completeCase(im)
}

// completeCase explains in one paragraph why the pooled figures differ
// from a complete-case analysis, and sets the two side by side.
func (r *renderer) completeCase(im *validate.Imputation) {
	cc := im.CompleteCase
	if cc == nil {
		return
	}
	r.p("**Why the pooled figures differ from a complete-case analysis.** A complete-case analysis would keep only the %d patients without any imputed value (%d events) and leave out the other %d. "+
		"When values are missing at random — their absence depending on what was recorded, such as age or the outcome itself — the patients kept are not a random sample of the cohort: "+
		"if patients with the event, say, more often lack a value, the complete cases hold fewer events than the cohort, and O/E and calibration-in-the-large drift away from the cohort's. "+
		"The pooled figures keep every patient and carry the uncertainty of the imputed values in their wider intervals. "+
		"They are sound if the imputation model is right (the values missing at random given what it used, with the outcome among its variables), which the data cannot show; "+
		"a large difference between the two columns says the missing values matter, not which column is right if the imputation model was wrong.\n\n",
		cc.N, cc.Events, im.Rows-cc.N)
	if cc.Note != "" {
		r.p("Note: %s.\n\n", cc.Note)
		return
	}
	t := table{head: []string{"compared measure", "pooled, all patients", "complete cases only"}}
	p := im.Pooled
	t.add("AUC", f3(p.AUC.Estimate), f3(cc.AUC))
	t.add("O/E", f3(p.OE.Estimate), f3(cc.OE))
	t.add("calibration-in-the-large", f3(p.CITL.Estimate), f3(cc.CITL))
	t.add("calibration slope", f3(p.Slope.Estimate), f3(cc.Slope))
	t.add("Brier score", f4(p.Brier.Estimate), f4(cc.Brier))
	t.write(r.w)
}

type namedImputed struct {
	name, format string
	pm           validate.ImputedMeasure
}

func imputedMeasures(im *validate.Imputation) []namedImputed {
	p := im.Pooled
	return []namedImputed{{"AUC", "%.3f", p.AUC}, {"O/E", "%.3f", p.OE}, {"calibration-in-the-large", "%.3f", p.CITL},
		{"calibration slope", "%.3f", p.Slope}, {"Brier score", "%.4f", p.Brier}}
}

// small writes a variance in fixed point with three significant digits
// (at least three decimals), so that a variance of 2.2e-05 reads
// 0.0000220; 0 is 0.000.
func small(v float64) string {
	if !finite(v) || v == 0 {
		return num(v, "%.3f")
	}
	d := max(3, 2-int(math.Floor(math.Log10(math.Abs(v)))))
	return num(v, fmt.Sprintf("%%.%df", d))
}

// imputedMethods is the methods' item on multiple imputation.
func (r *renderer) imputedMethods() []string {
	if r.a.Imputation == nil {
		return nil
	}
	return []string{strings.Join([]string{
		"Multiply imputed cohort: every measure in every imputation, pooled by Rubin's rules (Rubin 1987) on the scales of the pooling across clusters — logit AUC with DeLong's variance by the delta method, ln O/E with variance (1 − O/n)/O, calibration-in-the-large and slope with their fits' variances, the Brier score with the variance of the mean squared error — as Marshall et al. (2009) and Wood, Royston & White (2015) advise for measures of performance;",
		"t intervals on the Barnard & Rubin (1999) degrees of freedom (the complete-data degrees of freedom: the patients less the measure's parameters), the fraction of missing information as van Buuren (2018) gives it;",
		"with clusters, each measure pooled within each cluster across imputations first, then meta-analysed across clusters.",
	}, " ")}
}

// imputedLine is the command line's summary line on the imputations, or
// "" for a cohort that was not imputed.
func imputedLine(im *validate.Imputation) string {
	if im == nil {
		return ""
	}
	s := fmt.Sprintf("imputed     %d completed datasets pooled by Rubin's rules", im.M)
	if im.PatientsImputed >= 0 {
		s += fmt.Sprintf("; %d of %d patients had a predictor imputed", im.PatientsImputed, im.Rows)
	}
	return s
}
