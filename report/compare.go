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
	verdict := fmt.Sprintf("The AUCs differ by %.4f (a − b; 95%% CI %.4f to %.4f; z = %.2f, p %s): ", d.Difference, d.DifferenceCI[0], d.DifferenceCI[1], d.Z, FormatP(d.P))
	if d.DifferenceCI[0] > 0 || d.DifferenceCI[1] < 0 {
		verdict += fmt.Sprintf("model %s discriminates better, beyond chance.", better)
	} else {
		verdict += "no evidence that either discriminates better."
	}
	p("## Discrimination\n\n%s\n\n", verdict)
	p("| | AUC |\n|---|---|\n| a: %s | %.4f |\n| b: %s | %.4f |\n\n", Escape(c.ModelA), d.AUCA, Escape(c.ModelB), d.AUCB)
	p("Paired DeLong test (DeLong, DeLong & Clarke-Pearson 1988): the variance of the difference uses the covariance of the two models' structural components over the same patients (correlation of the two AUCs %.3f).\n\n", d.Correlation)
	b := c.Brier
	p("## Overall accuracy\n\nBrier score a %.4f, b %.4f; difference a − b %.4f, 95%% bootstrap percentile interval %.4f to %.4f (%d replicates, seed %d). A negative difference favours a.\n\n",
		b.A, b.B, b.Difference, b.DifferenceCI[0], b.DifferenceCI[1], b.Replicates, b.Seed)
	p("## Clinical usefulness\n\n| threshold | net benefit a | net benefit b | treat everyone |\n|---|---|---|---|\n")
	for _, nb := range c.NetBenefit {
		p("| %.1f%% | %.4f | %.4f | %.4f |\n", 100*nb.Threshold, nb.A, nb.B, nb.TreatAll)
	}
	p("\n![Decision curves of both models](%s)\n\n## Caution\n\n%s\n", figure, c.Caution)
	return ew.err
}
