package main

import (
	"context"
	"fmt"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/report"
	"github.com/riskaudit/riskaudit/validate"
)

type compareOptions struct {
	data             dataFlags
	models           []string
	predicted        string
	predictedPercent bool
	cohortFile       string
	out              string
	thresholds       string
	ciBootstrap      int
	seed             uint64
	quiet            bool
	auditDate        string
	// outcome, event and nonEvent say how the cohort codes the models'
	// outcome (audit.CohortOutcome).
	outcome, event, nonEvent string
	// query reads the cohort from PostgreSQL.
	query queryFlags
}

func newCompareCmd(s *streams) *cobra.Command {
	o := &compareOptions{}
	c := &cobra.Command{
		Use:   "compare --model A.yaml (--model B.yaml | --predicted COLUMN) (--cohort FILE | --cohort-query SQL) --out DIR",
		Short: "Compare two models on one cohort: paired DeLong test, Brier difference, decision curves",
		Long: `Compare two frozen models (or a frozen model and a column of predicted
risks) on the same patients of one cohort: the rows complete for both.
Writes DIR/compare.md, DIR/compare.html (the same, as one page for the
browser), DIR/compare.json and DIR/decision_curves.svg with:

  the paired DeLong test of the two correlated AUCs (DeLong, DeLong &
  Clarke-Pearson 1988): difference a − b, its SE, 95% CI, z and p;
  the Brier score difference with a bootstrap percentile interval
  (--ci-bootstrap replicates);
  both models' calibration side by side: calibration-in-the-large and
  slope with Wald intervals, O/E with its interval, ICI with a bootstrap
  percentile interval (the same replicates), each as 'audit' measures it;
  both decision curves, with treat-everyone and treat-no-one;
  the provenance: the date, the tool, the command line, and the SHA-256
  of both models and the cohort.

A cohort that codes the models' outcome otherwise says so with
--outcome, --event and --non-event, as for 'audit': both models are read
with that coding, unchanged.`,
		Example: `  riskaudit compare --model current.yaml --model proposed.yaml --cohort new.csv --out compare
  riskaudit compare --model current.yaml --predicted vendor_risk --cohort new.csv --out compare
  riskaudit compare --model current.yaml --model proposed.yaml --cohort new.csv --ci-bootstrap 2000 --seed 7 --out compare
  riskaudit compare --model current.yaml --model proposed.yaml --cohort-query-file cohort.sql --param start=2026-11-01 --out compare`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if cmd.Flags().Changed("bootstrap") {
				fmt.Fprintln(s.err, "riskaudit: compare --bootstrap is now --ci-bootstrap, as in audit; the old name still works")
			}
			return runCompare(cmd.Context(), o, s)
		},
	}
	f := c.Flags()
	f.StringArrayVar(&o.models, "model", nil, "a frozen model (give twice, or once with --predicted)")
	f.StringVar(&o.predicted, "predicted", "", "a column of predicted risks to compare with the model")
	f.BoolVar(&o.predictedPercent, "predicted-percent", false, "the --predicted column holds risks in percent (0 to 100)")
	f.StringVar(&o.cohortFile, "cohort", "", "the cohort (CSV or TSV with a header row, Parquet, Arrow IPC, or an Excel workbook)")
	f.StringVar(&o.outcome, "outcome", "", "the cohort's column holding the models' outcome (default: the models')")
	f.StringVar(&o.event, "event", "", "the value that is the models' event in this cohort (default: the models')")
	f.StringVar(&o.nonEvent, "non-event", "", "the value that is a non-event (then any other value is an error; with --event alone, every other value is a non-event)")
	f.StringVar(&o.out, "out", "", "output folder")
	f.StringVar(&o.thresholds, "thresholds", "0.05:0.50:0.05", "decision-curve thresholds: FROM:TO:STEP or a list")
	f.IntVar(&o.ciBootstrap, "ci-bootstrap", 1000, "replicates of the bootstrap percentile intervals of the Brier difference and the ICIs (at least 100)")
	f.IntVar(&o.ciBootstrap, "bootstrap", 1000, "the former name of --ci-bootstrap")
	_ = f.MarkHidden("bootstrap")
	f.Uint64Var(&o.seed, "seed", 1, "seed of the bootstrap")
	f.StringVar(&o.auditDate, "audit-date", "", "the date the cohort describes, YYYY-MM-DD, for the provenance (default: today, UTC)")
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing on success")
	o.data.register(f)
	o.query.register(f, map[string]string{"cohort": "cohort"})
	o.query.stderr = func(format string, args ...any) { fmt.Fprintf(s.err, format, args...) }
	_ = c.MarkFlagFilename("cohort-query-file", "sql")
	_ = c.MarkFlagRequired("out")
	return withExitStatuses(c, exitStatus{exitOK, ""}, exitStatus{exitUsage, usageOutputs},
		exitStatus{exitBadInput, "bad input: a cohort or model that cannot be used as it is"},
		exitStatus{exitOtherFailed, ""}, exitStatus{exitSignalBase, ""})
}

func runCompare(ctx context.Context, o *compareOptions, s *streams) error {
	if o.ciBootstrap < 100 {
		return usagef("--ci-bootstrap %d: give at least 100 replicates", o.ciBootstrap)
	}
	if o.ciBootstrap > audit.MaxReplicates {
		return usagef("--ci-bootstrap %d: give at most %d replicates (1,000 to 2,000 is common practice)", o.ciBootstrap, audit.MaxReplicates)
	}
	ts, err := parseThresholds(o.thresholds)
	if err != nil {
		return err
	}
	if err := o.query.check(map[string]string{"cohort": o.cohortFile}); err != nil {
		return err
	}
	if o.cohortFile == "" && !o.query.given("cohort") {
		return usagef("give the cohort with --cohort (or a query: --cohort-query, --cohort-query-file)")
	}
	if err := audit.CheckOutputDir(o.out); err != nil {
		return err
	}
	cohortIn, err := o.query.only("cohort", o.cohortFile)
	if err != nil {
		return err
	}
	copt, fail, err := o.data.options()
	if err != nil {
		return err
	}
	cfg := audit.CompareConfig{
		Models: o.models, Predicted: o.predicted, PredictedPercent: o.predictedPercent, Cohort: cohortIn, Read: copt, FailOnMissing: fail,
		Measures: validate.CompareOptions{Thresholds: ts, Replicates: o.ciBootstrap, Seed: o.seed},
		Tool:     "riskaudit " + toolVersion(), CommandLine: s.commandLine(), Clock: now, AuditDate: o.auditDate,
	}
	if o.outcome != "" || o.event != "" || o.nonEvent != "" {
		cfg.Outcome = &audit.CohortOutcome{Column: o.outcome, Event: o.event, NonEvent: o.nonEvent}
	}
	if o.auditDate != "" {
		cfg.AuditDateSource = validate.DateFromFlag
	}
	if _, cfg.RenameSources, err = mergeRenames(nil, copt.Rename); err != nil {
		return err
	}
	res, err := audit.Compare(ctx, cfg)
	if err != nil {
		return err
	}
	w, err := audit.WriteComparison(o.out, res)
	if err != nil {
		return err
	}
	if !o.quiet {
		c := res.Comparison
		d, b := c.DeLong, c.Brier
		fmt.Fprintf(s.out, "Compared %s (a) with %s (b) on %d patients of %s\n", c.ModelA, c.ModelB, c.Used, cohortIn.Path)
		if co := c.CohortOutcome; co != nil {
			fmt.Fprintf(s.out, "  outcome read from column %s, event %s (the models': %s = %s)\n", co.Column, co.Event, co.ModelColumn, co.ModelEvent)
		}
		fmt.Fprintf(s.out, "  AUC a %s, b %s; difference %s (95%% CI %s), z %s, p %s\n", report.Value(d.AUCA, "%.3f"), report.Value(d.AUCB, "%.3f"),
			report.Value(d.Difference, "%.4f"), report.Interval(d.DifferenceCI, "%.4f", ""), report.Value(d.Z, "%.2f"), report.FormatP(d.P))
		fmt.Fprintf(s.out, "  Brier a %s, b %s; difference %s (95%% CI %s)\n", report.Value(b.A, "%.4f"), report.Value(b.B, "%.4f"),
			report.Value(b.Difference, "%.4f"), report.Interval(b.DifferenceCI, "%.4f", ""))
		fmt.Fprintf(s.out, "Wrote %s and %s\n", filepath.Join(o.out, "compare.md"), filepath.Join(o.out, "compare.html"))
		replacedNote(s, o.out, "comparison", w)
	}
	return nil
}
