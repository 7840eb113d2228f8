package main

import (
	"fmt"
	"io"
	"math"
	"strings"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/report"
)

// fmtG writes a number with about four significant digits.
func fmtG(v float64) string {
	a := math.Abs(v)
	switch {
	case a != 0 && (a < 0.001 || a >= 1e6):
		return fmt.Sprintf("%.3e", v)
	case a >= 1000:
		return fmt.Sprintf("%.1f", v)
	}
	return fmt.Sprintf("%.4f", v)
}

func writeFitSummary(w io.Writer, r *audit.FitResult, o *fitOptions) {
	st := r.Fitted.Stats
	spec := r.Fitted.Design.Spec
	name := spec.Name
	if name == "" {
		name = o.model
	}
	fmt.Fprintf(w, "Fitted: %s\n", name)
	if r.Refitted {
		fmt.Fprintf(w, "  (%s is a frozen model: its terms were refitted as a recipe)\n", o.model)
	}
	fmt.Fprintf(w, "  data        %s (SHA-256 %s…)\n", o.dataFile, r.Report.DataSHA256[:16])
	fmt.Fprintf(w, "  rows        %d read, %d used, %d left out for missing values", st.RowsRead, st.N, st.Excluded)
	if len(st.ByColumn) > 0 {
		var parts []string
		for _, e := range st.ByColumn {
			parts = append(parts, fmt.Sprintf("%s %d", e.Column, e.Rows))
		}
		fmt.Fprintf(w, " (%s)", strings.Join(parts, ", "))
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "  events      %d of %d (%.1f%%), outcome %s = %s\n", st.Events, st.N,
		100*float64(st.Events)/float64(st.N), spec.Outcome.Column, spec.Outcome.Event.Text)
	steps := "steps"
	if st.Iterations == 1 {
		steps = "step"
	}
	fmt.Fprintf(w, "  method      %s, %d Newton %s\n", st.Method, st.Iterations, steps)
	fmt.Fprintf(w, "  converged   %s\n\n", st.Convergence)

	width := len("term")
	for _, t := range st.Terms {
		width = max(width, len([]rune(t.Term)))
	}
	fmt.Fprintf(w, "  %-*s  %10s  %9s  %7s  %8s  %10s  %s\n", width, "term", "coef", "SE", "z", "p", "odds ratio", "95% CI")
	for _, t := range st.Terms {
		pad := width - len([]rune(t.Term)) + len(t.Term)
		or, ci := report.OddsRatio(t.OddsRatio, t.Coef, fmtG), report.OddsRatioEnd(t.ORCI[0], t.CoefCI[0], fmtG)+" – "+report.OddsRatioEnd(t.ORCI[1], t.CoefCI[1], fmtG)
		if t.Term == model.InterceptTerm {
			or, ci = "—", "—"
		}
		fmt.Fprintf(w, "  %-*s  %10s  %9s  %7.2f  %8s  %10s  %s\n", pad, t.Term, fmtG(t.Coef), fmtG(t.SE), t.Z, report.FormatFitP(t.P), or, ci)
	}
	fmt.Fprintf(w, "  (the intercept's odds-ratio cells are empty: exp of it is the odds at the reference values, not a ratio)\n")
	for _, n := range report.UnitNotes(st.Terms) {
		fmt.Fprintf(w, "  odds ratios, %s\n", n)
	}
	for _, t := range st.Terms {
		for _, n := range t.Notes {
			fmt.Fprintf(w, "  note: %s: %s\n", t.Term, n)
		}
	}
	if st.PMethod == model.PPenalisedLR {
		fmt.Fprintf(w, "  p: %s tests; intervals: %s; SE and z are Wald\n", model.PPenalisedLR, model.CIProfilePenalised)
	}
	fmt.Fprintln(w)
	fmt.Fprintf(w, "  −2 log-likelihood   %.3f (intercept only %.3f)\n", st.Neg2LL, st.NullNeg2LL)
	fmt.Fprintf(w, "  likelihood ratio    χ² %.3f on %d df, p %s\n", st.LRChi2, st.LRDF, report.FormatP(st.LRP))
	fmt.Fprintf(w, "  AIC %.3f   BIC %.3f   Nagelkerke R² %.4f\n", st.AIC, st.BIC, st.NagelkerkeR2)
	if math.IsNaN(st.HL.Statistic) || math.IsInf(st.HL.Statistic, 0) || math.IsNaN(st.HL.P) {
		fmt.Fprintf(w, "  Hosmer–Lemeshow     not computed (%d risk groups)\n", st.HL.Groups)
	} else {
		fmt.Fprintf(w, "  Hosmer–Lemeshow     %.3f on %d df, p %s (%d risk groups)\n", st.HL.Statistic, st.HL.DF, report.FormatP(st.HL.P), st.HL.Groups)
	}
	for _, n := range st.Notes {
		fmt.Fprintf(w, "  note: %s\n", n)
	}
	if n := r.Report.Nested; n != nil {
		fmt.Fprintf(w, "\n  Nested comparison with %s, on the same %d rows\n", o.reduced, n.Rows)
		fmt.Fprintf(w, "    added terms        %s\n", strings.Join(n.Added, ", "))
		fmt.Fprintf(w, "    likelihood ratio   χ² %.3f on %d df, p %s\n", n.LRChi2, n.DF, report.FormatP(n.P))
		fmt.Fprintf(w, "    AIC difference     %.3f (full − reduced; negative favours the full model)\n", n.AICDifference)
	}
	switch {
	case o.out != "" && o.jsonOut != "":
		fmt.Fprintf(w, "\nWrote %s and %s\n", o.out, o.jsonOut)
	case o.out != "":
		fmt.Fprintf(w, "\nWrote %s\n", o.out)
	case o.jsonOut != "":
		fmt.Fprintf(w, "\nWrote %s; no frozen model written (give --out to write it)\n", o.jsonOut)
	default:
		fmt.Fprintf(w, "\nNothing written: give --out to write the frozen model\n")
	}
}

// describeExclusions lists the columns behind left-out rows.
func describeExclusions(ex []model.Exclusion) string {
	var parts []string
	for _, e := range ex {
		parts = append(parts, fmt.Sprintf("%s %d", e.Column, e.Rows))
	}
	return strings.Join(parts, ", ")
}
