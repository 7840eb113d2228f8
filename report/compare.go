package report

import (
	"fmt"
	"io"

	"github.com/riskaudit/riskaudit/validate"
)

// WriteComparison renders a comparison of two models as Markdown; figure
// is the file name of the decision-curve figure beside it.
func WriteComparison(w io.Writer, c *validate.Comparison, figure string) error {
	ew := &errWriter{w: w}
	p := func(format string, args ...any) { fmt.Fprintf(ew, format, args...) }
	d := c.DeLong
	p("# Model comparison: %s against %s\n\n", Escape(c.ModelA), Escape(c.ModelB))
	p("On the %d patients of %s with every value both models need (%d events). Made %s by %s. %s\n\n", c.Used, Escape(c.Cohort), c.Events,
		c.Provenance.StartedAt, Escape(c.Tool), auditDateLine(c.Provenance))
	if l := cohortOutcomeLine(c.CohortOutcome, true); l != "" {
		p("%s\n\n", l)
	}
	better := "a"
	if d.Difference < 0 {
		better = "b"
	}
	verdict := fmt.Sprintf("The AUCs differ by %s (a − b; 95%% CI %s; z = %s, p %s): ", f4(d.Difference), Interval(d.DifferenceCI, "%.4f", ""), num(d.Z, "%.2f"), FormatP(d.P))
	switch {
	case d.Difference == 0 && d.DifferenceSE == 0:
		verdict += "the two models order every pair of patients alike (the difference and its SE are 0), so there is nothing to test."
	case !finite(d.DifferenceCI[0]) || !finite(d.DifferenceCI[1]):
		verdict += "the difference's interval is not estimable, so whether either discriminates better cannot be judged."
	case d.DifferenceCI[0] > 0 || d.DifferenceCI[1] < 0:
		verdict += fmt.Sprintf("model %s discriminates better, beyond chance.", better)
	default:
		verdict += "no evidence that either discriminates better."
	}
	p("## Discrimination\n\n%s\n\n", verdict)
	p("| | AUC |\n|---|---|\n| a: %s | %s |\n| b: %s | %s |\n\n", Escape(c.ModelA), f4(d.AUCA), Escape(c.ModelB), f4(d.AUCB))
	p("Paired DeLong test (DeLong, DeLong & Clarke-Pearson 1988): the variance of the difference uses the covariance of the two models' structural components over the same patients (correlation of the two AUCs %s).\n\n", f3(d.Correlation))
	b := c.Brier
	p("## Overall accuracy\n\nBrier score a %s, b %s; difference a − b: %s, 95%% bootstrap percentile interval %s (%d replicates, seed %d). A negative difference favours a.\n\n",
		f4(b.A), f4(b.B), f4(b.Difference), Interval(b.DifferenceCI, "%.4f", ""), b.Replicates, b.Seed)
	writeCompareCalibration(ew, c)
	p("## Clinical usefulness\n\n| threshold | net benefit a | net benefit b | treat everyone |\n|---|---|---|---|\n")
	for _, nb := range c.NetBenefit {
		p("| %.1f%% | %s | %s | %s |\n", 100*nb.Threshold, f4(nb.A), f4(nb.B), f4(nb.TreatAll))
	}
	p("\n![Decision curves of both models](%s)\n\n", figure)
	writeCompareProvenance(ew, c.Provenance)
	p("## Caution\n\n%s\n", c.Caution)
	return ew.err
}

// writeCompareCalibration writes both models' calibration side by side.
func writeCompareCalibration(w *errWriter, c *validate.Comparison) {
	k := c.Calibration
	a, b := k.A, k.B
	fmt.Fprint(w, "## Calibration\n\n")
	t := table{head: []string{"measure", "ideal", "a: " + Escape(c.ModelA), "b: " + Escape(c.ModelB)}}
	both := func(name, ideal string, va, vb float64, ca, cb [2]float64, format string) {
		cell := func(v float64, ci [2]float64) string {
			return fmt.Sprintf("%s (%s)", num(v, format), Interval(ci, format, ""))
		}
		t.add(name, ideal, cell(va, ca), cell(vb, cb))
	}
	both("calibration-in-the-large", "0", a.CITL, b.CITL, a.CITLCI, b.CITLCI, "%.3f")
	both("calibration slope", "1", a.Slope, b.Slope, a.SlopeCI, b.SlopeCI, "%.3f")
	both("observed / expected (O/E)", "1", a.OE, b.OE, a.OECI, b.OECI, "%.3f")
	t.add("events observed / expected", "", fmt.Sprintf("%.0f / %s", a.Observed, num(a.Expected, "%.1f")), fmt.Sprintf("%.0f / %s", b.Observed, num(b.Expected, "%.1f")))
	ici := func(v float64, ci [2]float64) string {
		return validate.FormatMeasure("ici", v) + " (" + measureInterval("ici", ci) + "*)"
	}
	t.add("ICI", "0", ici(a.ICI, a.ICICI), ici(b.ICI, b.ICICI))
	t.write(w)
	fmt.Fprintf(w, "Each model measured as `riskaudit audit` measures it on the same patients: calibration-in-the-large and slope with Wald 95%% intervals, O/E with its 95%% interval, and the ICI of the LOWESS calibration curve. \\* 95%% bootstrap percentile intervals from %d resamples of the patients (seed %d; the models fixed; the curve in each resample with δ = %g of the risk range).\n\n",
		k.Replicates, k.Seed, k.ICIDelta)
	for _, n := range a.Notes {
		fmt.Fprintf(w, "Note (a): %s.\n\n", n)
	}
	for _, n := range b.Notes {
		fmt.Fprintf(w, "Note (b): %s.\n\n", n)
	}
}

// writeCompareProvenance writes the comparison's inputs with their
// SHA-256, the renames, the date, the tool and the command line.
func writeCompareProvenance(w *errWriter, pv validate.Provenance) {
	fmt.Fprint(w, "## Provenance\n\n")
	t := table{head: []string{"input", "file", "SHA-256"}}
	for _, in := range pv.Inputs {
		t.add(in.Role, code(in.FileText()), code(in.SHA256))
	}
	t.write(w)
	writeQueries(w, pv.Inputs)
	writeRenames(w, pv.Renames)
	fmt.Fprintf(w, "%s Tool: %s. Started: %s. Command line:\n\n", auditDateLine(pv), Escape(pv.Tool), pv.StartedAt)
	writeCommandLine(w, pv.CommandLine)
}
