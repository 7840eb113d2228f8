package main

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/pathtext"
	"github.com/riskaudit/riskaudit/report"
	"github.com/riskaudit/riskaudit/validate"
)

// auditOptions are the audit command's flags: most bind straight into
// the audit's Config, the rest are the command line's own.
type auditOptions struct {
	cfg audit.Config
	// clusters are read into cfg.Clusters (clusterflags.go).
	clusters clusterFlags
	// imputed are read into cfg.Imputation (imputedflags.go).
	imputed imputedFlags
	data    dataFlags
	// predicted, outcome, event and nonEvent make cfg.Predicted, or with
	// a model cfg.Outcome (the cohort's coding of its outcome).
	predicted, outcome, event, nonEvent string
	predictedPercent                    bool
	// thresholds and delta are read into cfg.Measures.
	thresholds string
	// classifyAt and minGain are read into cfg.Measures too.
	classifyAt    string
	minGain       float64
	delta         float64
	out           string
	quiet         bool
	planFile      string
	history       string
	auditDate     string
	replaceRecord bool
	// dateFromPlan says that auditDate is the plan's; planRenames are the
	// plan's renames, to which --rename adds.
	dateFromPlan bool
	planRenames  map[string]string
	// subgroups are the values of --subgroups as typed (parseSubgroups
	// reads them into cfg.Subgroups and cfg.Bands).
	subgroups []string
	// query reads the cohort or the development data from PostgreSQL.
	query queryFlags
	// period and cusumOdds are read into cfg.OverTime (overtime.go).
	period, cusumOdds string
}

const auditLong = `Measure how a model performs on a cohort with observed outcomes and write
an audit report: DIR/report.md, DIR/report.html (the same report as one
self-contained page for the browser and for print), DIR/audit.json and SVG figures
(calibration, ROC curve, decision curve, predicted risk by outcome, and
the subgroups and case-mix when those analyses run).

The risks come either from a frozen model (--model), which scores every
complete row of the cohort, or from a column of risks predicted by any
model (--predicted, with --outcome and --event). With --dev, the same
measures on the development data stand beside the new cohort's, so drift
is visible.

A cohort that codes the model's outcome otherwise (the model's event is
yes, the registry's extract writes died = 1/0) says so with --outcome,
--event and --non-event beside --model (or the plan's outcome, event and
non_event): the model, its SHA-256 and its coefficients are unchanged,
and the report says which column and values were read instead of the
model's. The development data keep the model's own codes. Numeric
predictor values beyond the development range a frozen model states
(fit writes it), or, without one, values such as 999 or -1 far beyond a
column's others, are named in the report and on stderr with a count, the
most extreme value and its line; they change no number.

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

Provenance: the report and audit.json record the audit date and where it
came from (--audit-date, the plan, or today), the plan with its SHA-256,
every column rename (--rename or the plan's), the tool and the command line
(passwords masked), and every input's SHA-256; the model's stated purpose
(the spec's or the plan's purpose section) heads the report, and an
appendix maps the report to the TRIPOD+AI checklist. A recipe fitted
inside the audit is written into DIR as fitted_model.yaml.

Subgroups: --subgroups measures AUC, O/E, calibration-in-the-large and
slope in every level of categorical columns (sex,site) and in bands of
numeric ones: age:65,75 cuts age into <65, 65-<75 and >=75 (each band
[lower, upper): 65 itself is in 65-<75), age:q4 into quartiles of the
audited cohort. Rows without a value form a (missing) band. The criteria
on those measures are checked in every subgroup with at least
--min-subgroup-events events and non-events (smaller ones are listed as
not judged) and count in the verdict as --subgroup-criteria says.

Multiply imputed data: --imputation-column COLUMN reads --cohort as m
completed datasets stacked in one file and numbered in COLUMN, and
--imputed FILE (given once per imputation, instead of --cohort) reads
them from m files; the same patients in the same order in each. Every
imputation is scored and measured, and AUC (logit scale), O/E (log
scale), calibration-in-the-large, slope and Brier score are pooled by
Rubin's rules with Barnard–Rubin degrees of freedom; ICI, E50, E90, Emax,
net benefit and the calibration curve are averaged. With --cluster, each
measure is pooled within each cluster first, then across clusters.

Outputs are written to temporary files and renamed into place only when
everything has succeeded.`

const auditExample = `  # Audit a frozen model on a fresh extract
  riskaudit audit --model frozen.yaml --cohort new.csv --out audit-2026-11

  # The same, beside its development data
  riskaudit audit --model frozen.yaml --cohort new.csv --dev dev.csv --out audit-2026-11

  # Audit the risks a vendor's system wrote into a column
  riskaudit audit --predicted vendor_risk --outcome died_30d --event yes --cohort new.csv --out audit

  # A frozen model (outcome died_30d = yes) on an extract coding it death30 = 1/0
  riskaudit audit --model frozen.yaml --cohort registry.csv --outcome death30 --event 1 --non-event 0 --out audit

  # The sheet "Extract" of an Excel workbook, by clinic and by visit date
  riskaudit audit --model frozen.yaml --cohort new.xlsx --sheet Extract --subgroups clinic,visit_date --out audit

  # Fit a recipe on the development data, validate it by 500 bootstrap
  # replicates, keep the draws and a shrunken model, and audit a new cohort
  riskaudit audit --model recipe.yaml --dev dev.csv --bootstrap 500 --seed 1 \
    --resample-log draws.txt --shrunken shrunk.yaml --cohort new.csv --out audit

  # Case-mix against the development data, and the smallest sound update
  riskaudit audit --model frozen.yaml --dev dev.csv --cohort new.csv --update updated.yaml --out audit

  # A scheduled audit from a plan (flags override it)
  riskaudit audit --plan monthly-audit.yaml --cohort extracts/2026-12.parquet

  # An extract whose columns were renamed: read age_years as age, bmi_kg_m2 as bmi
  riskaudit audit --model frozen.yaml --cohort new.csv --rename age_years=age --rename bmi_kg_m2=bmi --out audit

  # Percentile intervals for ICI, E50, E90, scaled Brier and net benefit
  riskaudit audit --model frozen.yaml --cohort new.csv --ci-bootstrap 500 --out audit

  # Follow the model through the year in date order: calibration by quarter,
  # CUSUM and EWMA charts with their first alarms
  riskaudit audit --model frozen.yaml --cohort year.csv --date-column admitted --period quarter --out audit

  # Subgroups: sex, age cut at 65 and 75, BMI by quartiles; a subgroup's
  # missed criterion fails the audit as the criterion itself would
  riskaudit audit --model frozen.yaml --cohort new.csv --subgroups sex,age:65,75,bmi:q4 \
    --subgroup-criteria fail --out audit

  # Across hospitals: measures per site, pooled by REML with HKSJ intervals,
  # prediction intervals and the chance of acceptable performance in a new site
  riskaudit audit --model frozen.yaml --cohort new.csv --cluster site --out audit

  # The same judged by a plan's criteria on the pooled measures (such as
  # {measure: pooled.auc_pi.lower, at_least: 0.7}): a miss gives exit status 1
  riskaudit audit --plan sites.yaml --cluster site --out audit

  # The same with each hospital's extract in a file of its own (one cluster
  # a file, named before the '=' or by the file's base name)
  riskaudit audit --model frozen.yaml --cluster-file north=north.csv --cluster-file south=south.csv \
    --cluster-file east.csv --out audit

  # A multiply imputed cohort: 20 completed datasets stacked in one file,
  # numbered in the column imp; every measure pooled by Rubin's rules
  riskaudit audit --model frozen.yaml --cohort imputed.csv --imputation-column imp --out audit

  # The same with the completed datasets in separate files
  riskaudit audit --model frozen.yaml --imputed imp1.csv --imputed imp2.csv --imputed imp3.csv --out audit

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
			if err := o.clusters.checkSource(cmd.Flags()); err != nil {
				return err
			}
			return runAudit(cmd.Context(), o, s)
		},
	}
	f := c.Flags()
	f.StringVar(&o.cfg.Model, "model", "", "frozen model (YAML) that scores the cohort, or a recipe to fit on --dev")
	f.StringVar(&o.predicted, "predicted", "", "column of predicted risks (0 to 1) to audit instead of a model")
	f.BoolVar(&o.predictedPercent, "predicted-percent", false, "the --predicted column holds risks in percent (0 to 100), divided by 100")
	f.StringVar(&o.outcome, "outcome", "", "with --predicted: the outcome column; with --model: the cohort's column holding the model's outcome (default: the model's)")
	f.StringVar(&o.event, "event", "", "with --predicted: the outcome value that is an event; with --model: the value that is the model's event in this cohort (default: the model's)")
	f.StringVar(&o.nonEvent, "non-event", "", "with --predicted or --model: the value that is a non-event (then any other value is an error); with --model and --event but no --non-event, every other value is a non-event")
	f.StringVar(&o.cfg.Cohort.Path, "cohort", "", "the cohort to audit (CSV or TSV with a header row, - for standard input; Parquet, Arrow IPC, or an Excel workbook)")
	f.StringVar(&o.cfg.Dev.Path, "dev", "", "the development data, measured the same way for comparison")
	f.StringVar(&o.out, "out", "", "folder for the report, audit.json and figures (created if absent)")
	f.StringVar(&o.thresholds, "thresholds", "0.05:0.50:0.05", "decision-curve risk thresholds: FROM:TO:STEP or a comma-separated list")
	f.StringVar(&o.classifyAt, "classify-at", "0.1,0.2", "risk thresholds for sensitivity, specificity, PPV and NPV: a comma-separated list of proportions or percentages (10%)")
	f.Float64Var(&o.minGain, "nb-min-gain", validate.DefaultMinGain, "smallest net-benefit gain over treating everyone or no one that the summary claims (0.001: one net true positive per 1000 patients; 0: any gain)")
	f.IntVar(&o.cfg.Measures.Groups, "groups", 10, "risk groups of the calibration plot (10: deciles)")
	f.IntVar(&o.cfg.Measures.HLGroups, "hl-groups", 10, "Hosmer–Lemeshow groups")
	f.Float64Var(&o.cfg.Measures.Span, "lowess-span", 0.75, "span of the LOWESS calibration curve")
	f.Float64Var(&o.delta, "lowess-delta", -1, "LOWESS δ; negative chooses 0 up to 10,000 rows, 1% of the risk range up to 100,000 rows and 2% beyond")
	f.Float64Var(&o.cfg.Measures.Epsilon, "clamp", validate.DefaultEpsilon, "risks of exactly 0 or 1 are clamped to [clamp, 1 − clamp] for the logit")
	f.IntVar(&o.cfg.Bootstrap, "bootstrap", 0, "internal validation: bootstrap replicates of the development data, refitting the recipe each time (at least 10; 200 or more is common practice)")
	f.Uint64Var(&o.cfg.Seed, "seed", 1, "seed of the bootstrap draws (the same seed gives the same numbers whatever --workers)")
	f.IntVar(&o.cfg.Workers, "workers", 0, "goroutines for the bootstrap (default: all cores)")
	f.StringVar(&o.cfg.ResampleLog, "resample-log", "", "write the rows each bootstrap replicate drew (0-based, after exclusions, in file order), one line per replicate")
	f.StringVar(&o.cfg.Shrunken, "shrunken", "", "write a frozen model shrunk by the bootstrap's uniform shrinkage factor")
	f.IntVar(&o.cfg.CIBootstrap, "ci-bootstrap", 0, "percentile intervals for ICI, E50, E90, scaled Brier and net benefit from this many replicates of the cohort (at least 20)")
	f.BoolVar(&o.cfg.Firth, "firth", false, "fit the recipe (and every bootstrap refit) by Firth's penalised likelihood")
	f.StringVar(&o.planFile, "plan", "", "audit plan (YAML): model, data, renames, subgroups, criteria, outputs; flags override it")
	f.StringVar(&o.history, "history", "", "append the audit's summary to this history store (SQLite)")
	f.StringVar(&o.auditDate, "audit-date", "", "the date the cohort describes, YYYY-MM-DD (default: today, UTC)")
	f.BoolVar(&o.replaceRecord, "replace-record", false, "replace the history's record of the same audit (model, cohort and date) instead of refusing a duplicate")
	f.Var(subgroupsFlag{&o.subgroups}, "subgroups", "columns of the cohort to measure the model in, subgroup by subgroup: categorical ones by name (sex,site), numeric ones cut at points (age:65,75 gives <65, 65-<75, >=75) or into quantile bands (age:q4)")
	f.IntVar(&o.cfg.MinSubgroupEvents, "min-subgroup-events", 20, "subgroups with fewer events are reported as too small and not judged (common practice)")
	f.StringVar(&o.cfg.SubgroupCriteria, "subgroup-criteria", validate.SubgroupReview, "how a subgroup that misses a criterion counts in the verdict: review (makes a pass review), fail (as the criterion's own severity) or ignore")
	f.StringVar(&o.cfg.Update, "update", "", "update the model on the cohort by closed testing and write the chosen model here")
	f.Float64Var(&o.cfg.UpdateAlpha, "update-alpha", 0.05, "significance level of the closed testing procedure")
	f.IntVar(&o.cfg.UpdateBootstrap, "update-bootstrap", 200, "bootstrap replicates for the updated model's expected performance (0: none)")
	o.clusters.register(f)
	o.imputed.register(f)
	widthFlags(f, "sample-size check: ", &o.cfg.SampleSize.Targets)
	o.overTimeFlags(f)
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing on success but warnings (on stderr)")
	o.data.register(f)
	o.query.register(f, map[string]string{"cohort": "cohort", "dev": "dev"})
	o.query.stderr = func(format string, args ...any) { fmt.Fprintf(s.err, format, args...) }
	_ = c.MarkFlagFilename("model", "yaml", "yml")
	_ = c.MarkFlagFilename("plan", "yaml", "yml")
	_ = c.MarkFlagFilename("cohort-query-file", "sql")
	_ = c.MarkFlagFilename("dev-query-file", "sql")
	_ = c.MarkFlagFilename("cohort", "csv", "tsv", "txt", "parquet", "arrow", "feather", "xlsx")
	_ = c.MarkFlagFilename("dev", "csv", "tsv", "txt", "parquet", "arrow", "feather", "xlsx")
	_ = c.MarkFlagDirname("out")
	return withExitStatuses(c, exitStatus{exitOK, "success: every criterion was met"},
		exitStatus{exitCriterion, "the audit ran and a criterion was not met (verdict review or fail):\n     the report and every output were written"},
		exitStatus{exitUsage, ""},
		exitStatus{exitBadInput, "bad input: a data file, model spec, plan or history store that cannot\n     be used as it is"},
		exitStatus{exitCannotFit, "the model cannot be fitted (a recipe fitted on --dev, too many failed\n     bootstrap refits, --shrunken, --update): separation, collinear terms,\n     no convergence"},
		exitStatus{exitOtherFailed, ""}, exitStatus{exitSignalBase, ""})
}

// parseClassifyAt reads --classify-at: a comma-separated list of risks,
// each a proportion or a percentage.
func parseClassifyAt(s string) ([]float64, error) {
	if strings.Contains(s, ":") {
		return nil, usagef("--classify-at %q: give a comma-separated list, such as 0.1,0.2 or 10%%,20%%", s)
	}
	ts, err := validate.ParseThresholds(s)
	if err != nil {
		return nil, usagef("--classify-at %v", err)
	}
	return ts, nil
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
	prog.Done()
	warnOutOfRange(s, res.Audit.OutOfRange)
	for _, w := range res.Warnings {
		// Even with --quiet: a scheduled audit's mail must carry it.
		fmt.Fprintf(s.err, "riskaudit: warning: %s\n", w)
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
			writeRecordedNote(s, o.history, o.auditDate, w)
		}
	}
	if !res.Passed() {
		v := res.Audit.Verdict
		return &criterionError{status: v.Status, failed: countFailed(v), total: len(v.Criteria), sub: v.CountSubgroups(), report: filepath.Join(o.out, "report.md")}
	}
	return nil
}

// config checks the flags' values and completes the audit's Config.
func (o *auditOptions) config(s *streams) (audit.Config, error) {
	cfg := o.cfg
	if o.out == "" {
		if cfg.Model == "" && o.predicted == "" && cfg.Cohort.Path == "" {
			// Nothing given at all: say everything an audit needs.
			return cfg, usagef("give the model with --model (or a column of risks with --predicted), the cohort with --cohort and the output folder with --out")
		}
		return cfg, usagef("give the output folder with --out (or in the plan)")
	}
	if o.predicted == "" && (o.outcome != "" || o.event != "" || o.nonEvent != "") {
		// With a model: how this cohort codes the model's outcome.
		cfg.Outcome = &audit.CohortOutcome{Column: o.outcome, Event: o.event, NonEvent: o.nonEvent}
	}
	var err error
	if cfg.Measures.ClassifyAt, err = parseClassifyAt(o.classifyAt); err != nil {
		return cfg, err
	}
	switch {
	case o.minGain < 0 || o.minGain >= 1:
		return cfg, usagef("--nb-min-gain %g: give a net benefit from 0 (any gain) to below 1", o.minGain)
	case o.minGain == 0:
		cfg.Measures.MinGain = -1
	default:
		cfg.Measures.MinGain = o.minGain
	}
	if cfg.Measures.Thresholds, err = parseThresholds(o.thresholds); err != nil {
		return cfg, err
	}
	if len(o.subgroups) > 0 {
		if cfg.Subgroups, cfg.Bands, err = parseSubgroups(o.subgroups); err != nil {
			return cfg, err
		}
	}
	if err := o.checkValues(); err != nil {
		return cfg, err
	}
	if cfg.Clusters, err = o.clusters.config(); err != nil {
		return cfg, err
	}
	if cfg.Imputation, err = o.imputed.config(); err != nil {
		return cfg, err
	}
	if cfg.OverTime, err = o.overTime(); err != nil {
		return cfg, err
	}
	if cfg.Read, cfg.FailOnMissing, err = o.data.options(); err != nil {
		return cfg, err
	}
	if cfg.Read.Rename, cfg.RenameSources, err = mergeRenames(o.planRenames, cfg.Read.Rename); err != nil {
		return cfg, err
	}
	if cfg.AuditDate = o.auditDate; o.auditDate != "" {
		cfg.AuditDateSource = validate.DateFromFlag
		if o.dateFromPlan {
			cfg.AuditDateSource = validate.DateFromPlan
		}
	}
	cfg.OutDir = o.out
	switch {
	case o.delta < 0:
		cfg.Measures.Delta = validate.AutoDelta
	case o.delta == 0:
		cfg.Measures.Delta = validate.ExactDelta
	default:
		cfg.Measures.Delta = o.delta
	}
	if o.predicted != "" {
		cfg.Predicted = &audit.Predicted{Column: o.predicted, Outcome: o.outcome, Event: o.event, NonEvent: o.nonEvent, Percent: o.predictedPercent}
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

// maxGroups is the most risk groups (--groups, --hl-groups) an audit
// takes: groups of a few patients each at 100,000 rows, beyond any use
// of a grouped test or plot.
const maxGroups = 1000

// checkValues refuses flag values out of range (where the library would
// read a zero as its default, a zero typed on the command line is an
// error).
func (o *auditOptions) checkValues() error {
	m := o.cfg.Measures
	if m.Groups < 2 || m.HLGroups < 3 {
		return usagef("--groups needs at least 2 and --hl-groups at least 3")
	}
	if m.Groups > maxGroups || m.HLGroups > maxGroups {
		return usagef("--groups %d, --hl-groups %d: give at most %d groups (10 is common practice)", m.Groups, m.HLGroups, maxGroups)
	}
	if err := checkWidths(o.cfg.SampleSize.Targets); err != nil {
		return err
	}
	if !(m.Span > 0 && m.Span <= 1) {
		return usagef("--lowess-span %g: give a value in (0, 1]", m.Span)
	}
	if !(m.Epsilon > 0 && m.Epsilon < 0.01) {
		return usagef("--clamp %g: give a small positive value below 0.01", m.Epsilon)
	}
	if (len(o.cfg.Subgroups) > 0 || len(o.cfg.Bands) > 0 || len(o.subgroups) > 0) && o.cfg.MinSubgroupEvents < 1 {
		return usagef("--min-subgroup-events %d: give at least 1", o.cfg.MinSubgroupEvents)
	}
	if err := validate.CheckSubgroupMode(o.cfg.SubgroupCriteria); err != nil || o.cfg.SubgroupCriteria == "" {
		return usagef("--subgroup-criteria %s: give review (the default), fail or ignore", cohort.Quote(o.cfg.SubgroupCriteria))
	}
	if o.cfg.Update != "" && !(o.cfg.UpdateAlpha > 0 && o.cfg.UpdateAlpha < 1) {
		return usagef("--update-alpha %g: give a level strictly between 0 and 1", o.cfg.UpdateAlpha)
	}
	return nil
}

// warnOutOfRange prints each out-of-range warning on stderr, quiet or
// not: the report's summary carries them too.
func warnOutOfRange(s *streams, ws []validate.OutOfRange) {
	for _, w := range ws {
		fmt.Fprintf(s.err, "riskaudit: warning: %s\n", w.Text)
	}
}

// criterionError reports an audit that ran but did not meet its
// criteria: exit status 1.
type criterionError struct {
	status        string
	failed, total int
	sub           validate.SubgroupCounts
	report        string
}

func (e *criterionError) Error() string {
	sub := ""
	if e.sub.Checks > 0 {
		sub = ", " + e.sub.String()
	}
	return fmt.Sprintf("verdict %s: %d of %d criteria not met%s (see %s)", e.status, e.failed, e.total, sub, pathtext.Path(e.report))
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

// writeRecordedNote says where the audit was recorded and under which
// audit date, and, when the date defaulted to the day the audit ran,
// that it did.
func writeRecordedNote(s *streams, store, given string, w *audit.Written) {
	fmt.Fprintf(s.out, "Recorded in %s as record %d, under audit date %s", store, w.Record, w.RecordDate)
	if given == "" {
		fmt.Fprint(s.out, " (the day the audit ran, UTC: neither --audit-date nor the plan's audit_date gave one)")
	}
	fmt.Fprintln(s.out)
}

func writeAuditSummary(s *streams, a *validate.Audit, dir string, nfig int) {
	_ = report.WriteSummary(s.out, a, dir, nfig)
}
