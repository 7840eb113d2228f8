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
	p("On the %d patients of %s with every value both models need (%d events). Made by %s.\n\n", c.Used, Escape(c.Cohort), c.Events, c.Tool)
	better := "a"
	if d.Difference < 0 {
		better = "b"
	}
	verdict := fmt.Sprintf("The AUCs differ by %s (a − b; 95%% CI %s; z = %s, p %s): ", f4(d.Difference), Interval(d.DifferenceCI, "%.4f", ""), num(d.Z, "%.2f"), FormatP(d.P))
	switch {
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
	p("## Overall accuracy\n\nBrier score a %s, b %s; difference a − b %s, 95%% bootstrap percentile interval %s (%d replicates, seed %d). A negative difference favours a.\n\n",
		f4(b.A), f4(b.B), f4(b.Difference), Interval(b.DifferenceCI, "%.4f", ""), b.Replicates, b.Seed)
	p("## Clinical usefulness\n\n| threshold | net benefit a | net benefit b | treat everyone |\n|---|---|---|---|\n")
	for _, nb := range c.NetBenefit {
		p("| %.1f%% | %s | %s | %s |\n", 100*nb.Threshold, f4(nb.A), f4(nb.B), f4(nb.TreatAll))
	}
	p("\n![Decision curves of both models](%s)\n\n## Caution\n\n%s\n", figure, c.Caution)
	return ew.err
}
