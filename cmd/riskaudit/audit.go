package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/report"
	"github.com/riskaudit/riskaudit/validate"
)

// auditOptions are the audit command's flags: most bind straight into
// the audit's Config, the rest are the command line's own.
type auditOptions struct {
	cfg  audit.Config
	data dataFlags
	// predicted, outcome, event and nonEvent make cfg.Predicted.
	predicted, outcome, event, nonEvent string
	// thresholds and delta are read into cfg.Measures.
	thresholds    string
	delta         float64
	out           string
	quiet         bool
	planFile      string
	history       string
	auditDate     string
	replaceRecord bool
	// query reads the cohort or the development data from PostgreSQL.
	query queryFlags
}

const auditLong = `Measure how a model performs on a cohort with observed outcomes and write
an audit report: DIR/report.md, DIR/audit.json and SVG figures
(calibration, ROC curve, decision curve, predicted risk by outcome, and
the subgroups and case-mix when those analyses run).

The risks come either from a frozen model (--model), which scores every
complete row of the cohort, or from a column of risks predicted by any
model (--predicted, with --outcome and --event). With --dev, the same
measures on the development data stand beside the new cohort's, so drift
is visible.

Measures: AUC with DeLong's standard error; calibration-in-the-large and
calibration slope with Wald intervals; O/E; Hosmer–Lemeshow (df = groups,
or groups − 2 on the data a frozen model was fitted to, recognised by its
SHA-256); a LOWESS calibration curve with ICI, E50, E90 and Emax; Brier and
scaled Brier scores; net benefit at risk thresholds; sensitivity,
specificity, PPV and NPV with exact intervals.

Internal validation: with --dev and --bootstrap B, the recipe (or a frozen
model's terms, refitted) is refitted on B bootstrap samples of the
development rows and the optimism of the AUC, calibration slope and
intercept, Brier scores, Nagelkerke's R² and ICI is subtracted from their
apparent values (Efron 1983; Harrell, Lee & Mark 1996). A recipe given as
--model is fitted on --dev first; without --cohort the report describes the
development data. The same --seed gives the same numbers whatever
--workers.

Case-mix: with --model, --dev and --cohort, the report compares the two
populations predictor by predictor (standardised differences,
missingness), the spread of the linear predictor, and a membership model
telling their rows apart (Debray et al. 2015), and says whether a change
in performance fits a change in case-mix.

Updating: with --update FILE, the model is updated on the cohort by
recalibration in the large, logistic recalibration or revision, chosen by
the closed testing procedure of Vergouwe et al. (2017), and written to
FILE as a frozen model with its provenance; its expected performance comes
from --update-bootstrap replicates. An updated model needs its own
validation before use.

Sample size: every report compares the cohort's size with the minimum
sample size for precise O/E, calibration slope, C-statistic and
standardised net benefit (Riley et al. 2021), from target 95% CI widths
(--oe-width, --slope-width, --c-width, --nb-width, or the plan) and
anticipated values taken from the cohort or from the plan's sample_size
section.

Outputs are written to temporary files and renamed into place only when
everything has succeeded.`

const auditExample = `  # Audit a frozen model on a fresh extract
  riskaudit audit --model frozen.yaml --cohort new.csv --out audit-2026-11

  # The same, beside its development data
  riskaudit audit --model frozen.yaml --cohort new.csv --dev dev.csv --out audit-2026-11

  # Audit the risks a vendor's system wrote into a column
  riskaudit audit --predicted vendor_risk --outcome died_30d --event yes --cohort new.csv --out audit

  # Fit a recipe on the development data, validate it by 500 bootstrap
  # replicates, keep the draws and a shrunken model, and audit a new cohort
  riskaudit audit --model recipe.yaml --dev dev.csv --bootstrap 500 --seed 1 \
    --resample-log draws.txt --shrunken shrunk.yaml --cohort new.csv --out audit

  # Case-mix against the development data, and the smallest sound update
  riskaudit audit --model frozen.yaml --dev dev.csv --cohort new.csv --update updated.yaml --out audit

  # A scheduled audit from a plan (flags override it)
  riskaudit audit --plan monthly-audit.yaml --cohort extracts/2026-12.parquet

  # Percentile intervals for ICI, E50, E90, scaled Brier and net benefit
  riskaudit audit --model frozen.yaml --cohort new.csv --ci-bootstrap 500 --out audit

  # The cohort from a PostgreSQL query, the period bound as parameters
  # (the connection from PGHOST, PGUSER, … and the password file)
  riskaudit audit --model frozen.yaml --cohort-query-file cohort.sql \
    --param start=2026-11-01 --param end=2026-12-01 --out audit-2026-11

  # Decision-curve thresholds from 2% to 30% by 2%, classification at 10% and 25%
  riskaudit audit --model frozen.yaml --cohort new.csv --thresholds 0.02:0.30:0.02 --classify-at 0.1,0.25 --out audit`

func newAuditCmd(s *streams) *cobra.Command {
	o := &auditOptions{}
	c := &cobra.Command{
		Use:     "audit (--model SPEC | --predicted COLUMN --outcome COLUMN --event VALUE) (--cohort FILE | --dev FILE) --out DIR",
		Short:   "Audit a model's predicted risks on a cohort and write the report",
		Long:    auditLong,
		Example: auditExample,
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if o.planFile != "" {
				if err := applyPlan(cmd, o); err != nil {
					return err
				}
			}
			return runAudit(cmd.Context(), o, s)
		},
	}
	f := c.Flags()
	f.StringVar(&o.cfg.Model, "model", "", "frozen model (YAML) that scores the cohort, or a recipe to fit on --dev")
	f.StringVar(&o.predicted, "predicted", "", "column of predicted risks (0 to 1) to audit instead of a model")
	f.StringVar(&o.outcome, "outcome", "", "with --predicted: the outcome column")
	f.StringVar(&o.event, "event", "", "with --predicted: the outcome value that is an event")
	f.StringVar(&o.nonEvent, "non-event", "", "with --predicted: the value that is a non-event (then any other value is an error)")
	f.StringVar(&o.cfg.Cohort.Path, "cohort", "", "the cohort to audit (CSV or TSV with a header row, Parquet, or Arrow IPC)")
	f.StringVar(&o.cfg.Dev.Path, "dev", "", "the development data, measured the same way for comparison")
	f.StringVar(&o.out, "out", "", "folder for the report, audit.json and figures (created if absent)")
	f.StringVar(&o.thresholds, "thresholds", "0.05:0.50:0.05", "decision-curve risk thresholds: FROM:TO:STEP or a comma-separated list")
	f.Float64SliceVar(&o.cfg.Measures.ClassifyAt, "classify-at", []float64{0.10, 0.20}, "risk thresholds for sensitivity, specificity, PPV and NPV")
	f.IntVar(&o.cfg.Measures.Groups, "groups", 10, "risk groups of the calibration plot (10: deciles)")
	f.IntVar(&o.cfg.Measures.HLGroups, "hl-groups", 10, "Hosmer–Lemeshow groups")
	f.Float64Var(&o.cfg.Measures.Span, "lowess-span", 0.75, "span of the LOWESS calibration curve")
	f.Float64Var(&o.delta, "lowess-delta", -1, "LOWESS δ; negative chooses 0 up to 10,000 rows and 1% of the risk range beyond")
	f.Float64Var(&o.cfg.Measures.Epsilon, "clamp", validate.DefaultEpsilon, "risks of exactly 0 or 1 are clamped to [clamp, 1 − clamp] for the logit")
	f.IntVar(&o.cfg.Bootstrap, "bootstrap", 0, "internal validation: bootstrap replicates of the development data (refitting the recipe each time)")
	f.Uint64Var(&o.cfg.Seed, "seed", 1, "seed of the bootstrap draws (the same seed gives the same numbers whatever --workers)")
	f.IntVar(&o.cfg.Workers, "workers", 0, "goroutines for the bootstrap (default: all cores)")
	f.StringVar(&o.cfg.ResampleLog, "resample-log", "", "write the rows each bootstrap replicate drew (0-based, after exclusions, in file order), one line per replicate")
	f.StringVar(&o.cfg.Shrunken, "shrunken", "", "write a frozen model shrunk by the bootstrap's uniform shrinkage factor")
	f.IntVar(&o.cfg.CIBootstrap, "ci-bootstrap", 0, "percentile intervals for ICI, E50, E90, scaled Brier and net benefit from this many replicates of the cohort")
	f.BoolVar(&o.cfg.Firth, "firth", false, "fit the recipe (and every bootstrap refit) by Firth's penalised likelihood")
	f.StringVar(&o.planFile, "plan", "", "audit plan (YAML): model, data, renames, subgroups, criteria, outputs; flags override it")
	f.StringVar(&o.history, "history", "", "append the audit's summary to this history store (SQLite)")
	f.StringVar(&o.auditDate, "audit-date", "", "the date the cohort describes, YYYY-MM-DD (default: today, UTC)")
	f.BoolVar(&o.replaceRecord, "replace-record", false, "replace the history's record of the same audit (model, cohort and date) instead of refusing a duplicate")
	f.StringSliceVar(&o.cfg.Subgroups, "subgroups", nil, "categorical columns of the cohort to measure the model in, subgroup by subgroup")
	f.IntVar(&o.cfg.MinSubgroupEvents, "min-subgroup-events", 20, "subgroups with fewer events are reported as too small (common practice)")
	f.StringVar(&o.cfg.Update, "update", "", "update the model on the cohort by closed testing and write the chosen model here")
	f.Float64Var(&o.cfg.UpdateAlpha, "update-alpha", 0.05, "significance level of the closed testing procedure")
	f.IntVar(&o.cfg.UpdateBootstrap, "update-bootstrap", 200, "bootstrap replicates for the updated model's expected performance (0: none)")
	widthFlags(f, "sample-size check: ", &o.cfg.SampleSize.Targets)
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing on success")
	o.data.register(f)
	o.query.register(f, map[string]string{"cohort": "cohort", "dev": "dev"})
	o.query.stderr = func(format string, args ...any) { fmt.Fprintf(s.err, format, args...) }
	_ = c.MarkFlagFilename("model", "yaml", "yml")
	_ = c.MarkFlagFilename("plan", "yaml", "yml")
	_ = c.MarkFlagFilename("cohort-query-file", "sql")
	_ = c.MarkFlagFilename("dev-query-file", "sql")
	_ = c.MarkFlagFilename("cohort", "csv", "tsv", "txt", "parquet", "arrow", "feather")
	_ = c.MarkFlagFilename("dev", "csv", "tsv", "txt", "parquet", "arrow", "feather")
	_ = c.MarkFlagDirname("out")
	return c
}

// parseThresholds reads --thresholds (validate.ParseThresholds).
func parseThresholds(s string) ([]float64, error) {
	ts, err := validate.ParseThresholds(s)
	if err != nil {
		return nil, usagef("--thresholds %v", err)
	}
	return ts, nil
}

func runAudit(ctx context.Context, o *auditOptions, s *streams) error {
	cfg, err := o.config(s)
	if err != nil {
		return err
	}
	wopt := audit.WriteOptions{History: o.history, AuditDate: o.auditDate, ReplaceRecord: o.replaceRecord, Inputs: append([]string{o.planFile}, o.query.queryFiles()...)}
	if err := audit.CheckWrite(o.out, &cfg, wopt); err != nil {
		return err
	}
	if o.auditDate != "" {
		if err := audit.CheckAuditDate(o.auditDate); err != nil {
			return err
		}
	}
	prog := newProgress(s, o.quiet)
	cfg.Progress = prog
	res, err := audit.Run(ctx, cfg)
	if err != nil {
		return err
	}
	prog.Step("writing " + o.out)
	w, err := audit.Write(o.out, res, wopt)
	if err != nil {
		return err
	}
	prog.Done()
	if !o.quiet {
		writeAuditSummary(s, res.Audit, o.out, len(res.Figures))
		replacedNote(s, o.out, "audit", w)
		if o.history != "" {
			fmt.Fprintf(s.out, "Recorded in %s\n", o.history)
		}
	}
	if !res.Passed() {
		v := res.Audit.Verdict
		return &criterionError{status: v.Status, failed: countFailed(v), total: len(v.Criteria), report: filepath.Join(o.out, "report.md")}
	}
	return nil
}

// config checks the flags' values and completes the audit's Config.
func (o *auditOptions) config(s *streams) (audit.Config, error) {
	cfg := o.cfg
	if o.out == "" {
		return cfg, usagef("give the output folder with --out (or in the plan)")
	}
	if cfg.Model != "" && (o.outcome != "" || o.event != "" || o.nonEvent != "") {
		return cfg, usagef("--outcome, --event and --non-event go with --predicted; a model names its own outcome")
	}
	var err error
	if cfg.Measures.Thresholds, err = parseThresholds(o.thresholds); err != nil {
		return cfg, err
	}
	if err := o.checkValues(); err != nil {
		return cfg, err
	}
	rename := cfg.Read.Rename
	if cfg.Read, cfg.FailOnMissing, err = o.data.options(); err != nil {
		return cfg, err
	}
	cfg.Read.Rename = rename
	switch {
	case o.delta < 0:
		cfg.Measures.Delta = validate.AutoDelta
	case o.delta == 0:
		cfg.Measures.Delta = validate.ExactDelta
	default:
		cfg.Measures.Delta = o.delta
	}
	if o.predicted != "" {
		cfg.Predicted = &audit.Predicted{Column: o.predicted, Outcome: o.outcome, Event: o.event, NonEvent: o.nonEvent}
	}
	if err := o.queryInputs(&cfg); err != nil {
		return cfg, err
	}
	cfg.Tool, cfg.CommandLine, cfg.Clock = "riskaudit "+toolVersion(), s.commandLine(), now
	if os.Getenv("GOGC") == "" {
		cfg.GCPercent = 25
	}
	return cfg, nil
}

// queryInputs makes the cohort and the development data of the query
// flags (and the plan's queries) into the Config's inputs.
func (o *auditOptions) queryInputs(cfg *audit.Config) error {
	if err := o.query.check(map[string]string{"cohort": cfg.Cohort.Path, "dev": cfg.Dev.Path}); err != nil {
		return err
	}
	for _, in := range []struct {
		role string
		to   *audit.Input
	}{{"cohort", &cfg.Cohort}, {"dev", &cfg.Dev}} {
		if o.query.given(in.role) {
			q, err := o.query.input(in.role)
			if err != nil {
				return err
			}
			*in.to = q
		}
	}
	return o.query.checkUsed()
}

// checkValues refuses flag values out of range (where the library would
// read a zero as its default, a zero typed on the command line is an
// error).
func (o *auditOptions) checkValues() error {
	m := o.cfg.Measures
	for _, t := range m.ClassifyAt {
		if !(t > 0 && t < 1) {
			return usagef("--classify-at: %g is not strictly between 0 and 1", t)
		}
	}
	if m.Groups < 2 || m.HLGroups < 3 {
		return usagef("--groups needs at least 2 and --hl-groups at least 3")
	}
	if err := checkWidths(o.cfg.SampleSize.Targets); err != nil {
		return err
	}
	if m.Span <= 0 || m.Span > 1 {
		return usagef("--lowess-span %g: give a value in (0, 1]", m.Span)
	}
	if !(m.Epsilon > 0 && m.Epsilon < 0.01) {
		return usagef("--clamp %g: give a small positive value below 0.01", m.Epsilon)
	}
	if len(o.cfg.Subgroups) > 0 && o.cfg.MinSubgroupEvents < 1 {
		return usagef("--min-subgroup-events %d: give at least 1", o.cfg.MinSubgroupEvents)
	}
	if o.cfg.Update != "" && !(o.cfg.UpdateAlpha > 0 && o.cfg.UpdateAlpha < 1) {
		return usagef("--update-alpha %g: give a level strictly between 0 and 1", o.cfg.UpdateAlpha)
	}
	return nil
}

// criterionError reports an audit that ran but did not meet its
// criteria: exit status 1.
type criterionError struct {
	status        string
	failed, total int
	report        string
}

func (e *criterionError) Error() string {
	return fmt.Sprintf("verdict %s: %d of %d criteria not met (see %s)", e.status, e.failed, e.total, e.report)
}

func countFailed(v *validate.Verdict) int {
	n := 0
	for _, c := range v.Criteria {
		if !c.Passed {
			n++
		}
	}
	return n
}

func writeAuditSummary(s *streams, a *validate.Audit, dir string, nfig int) {
	_ = report.WriteSummary(s.out, a, dir, nfig)
}
