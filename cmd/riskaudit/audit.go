package main

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"runtime/debug"
	"strconv"
	"strings"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/plan"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/report"
	"github.com/riskaudit/riskaudit/resample"
	"github.com/riskaudit/riskaudit/samplesize"
	"github.com/riskaudit/riskaudit/validate"
)

type auditOptions struct {
	data            dataFlags
	model           string
	predicted       string
	outcome         string
	event           string
	nonEvent        string
	cohortFile      string
	devFile         string
	out             string
	thresholds      string
	classifyAt      []float64
	groups          int
	hlGroups        int
	span            float64
	delta           float64
	epsilon         float64
	quiet           bool
	bootstrap       int
	seed            uint64
	workers         int
	resampleLog     string
	shrunken        string
	ciBootstrap     int
	firth           bool
	planFile        string
	history         string
	auditDate       string
	rename          map[string]string
	criteria        []validate.Criterion
	subgroups       []string
	minSubEvents    int
	update          string
	updateAlpha     float64
	updateBootstrap int
	// size holds the sample-size check's targets and the plan's
	// anticipated values.
	size plan.SampleSize
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
			return runAudit(o, s)
		},
	}
	f := c.Flags()
	f.StringVar(&o.model, "model", "", "frozen model (YAML) that scores the cohort, or a recipe to fit on --dev")
	f.StringVar(&o.predicted, "predicted", "", "column of predicted risks (0 to 1) to audit instead of a model")
	f.StringVar(&o.outcome, "outcome", "", "with --predicted: the outcome column")
	f.StringVar(&o.event, "event", "", "with --predicted: the outcome value that is an event")
	f.StringVar(&o.nonEvent, "non-event", "", "with --predicted: the value that is a non-event (then any other value is an error)")
	f.StringVar(&o.cohortFile, "cohort", "", "the cohort to audit (CSV or TSV with a header row, Parquet, or Arrow IPC)")
	f.StringVar(&o.devFile, "dev", "", "the development data, measured the same way for comparison")
	f.StringVar(&o.out, "out", "", "folder for the report, audit.json and figures (created if absent)")
	f.StringVar(&o.thresholds, "thresholds", "0.05:0.50:0.05", "decision-curve risk thresholds: FROM:TO:STEP or a comma-separated list")
	f.Float64SliceVar(&o.classifyAt, "classify-at", []float64{0.10, 0.20}, "risk thresholds for sensitivity, specificity, PPV and NPV")
	f.IntVar(&o.groups, "groups", 10, "risk groups of the calibration plot (10: deciles)")
	f.IntVar(&o.hlGroups, "hl-groups", 10, "Hosmer–Lemeshow groups")
	f.Float64Var(&o.span, "lowess-span", 0.75, "span of the LOWESS calibration curve")
	f.Float64Var(&o.delta, "lowess-delta", -1, "LOWESS δ; negative chooses 0 up to 10,000 rows and 1% of the risk range beyond")
	f.Float64Var(&o.epsilon, "clamp", validate.DefaultEpsilon, "risks of exactly 0 or 1 are clamped to [clamp, 1 − clamp] for the logit")
	f.IntVar(&o.bootstrap, "bootstrap", 0, "internal validation: bootstrap replicates of the development data (refitting the recipe each time)")
	f.Uint64Var(&o.seed, "seed", 1, "seed of the bootstrap draws (the same seed gives the same numbers whatever --workers)")
	f.IntVar(&o.workers, "workers", 0, "goroutines for the bootstrap (default: all cores)")
	f.StringVar(&o.resampleLog, "resample-log", "", "write the rows each bootstrap replicate drew (0-based, after exclusions, in file order), one line per replicate")
	f.StringVar(&o.shrunken, "shrunken", "", "write a frozen model shrunk by the bootstrap's uniform shrinkage factor")
	f.IntVar(&o.ciBootstrap, "ci-bootstrap", 0, "percentile intervals for ICI, E50, E90, scaled Brier and net benefit from this many replicates of the cohort")
	f.BoolVar(&o.firth, "firth", false, "fit the recipe (and every bootstrap refit) by Firth's penalised likelihood")
	f.StringVar(&o.planFile, "plan", "", "audit plan (YAML): model, data, renames, subgroups, criteria, outputs; flags override it")
	f.StringVar(&o.history, "history", "", "append the audit's summary to this history store (SQLite)")
	f.StringVar(&o.auditDate, "audit-date", "", "the date the cohort describes, YYYY-MM-DD (default: today, UTC)")
	f.StringSliceVar(&o.subgroups, "subgroups", nil, "categorical columns of the cohort to measure the model in, subgroup by subgroup")
	f.IntVar(&o.minSubEvents, "min-subgroup-events", 20, "subgroups with fewer events are reported as too small (common practice)")
	f.StringVar(&o.update, "update", "", "update the model on the cohort by closed testing and write the chosen model here")
	f.Float64Var(&o.updateAlpha, "update-alpha", 0.05, "significance level of the closed testing procedure")
	f.IntVar(&o.updateBootstrap, "update-bootstrap", 200, "bootstrap replicates for the updated model's expected performance (0: none)")
	widthFlags(f, "sample-size check: ", &o.size.OEWidth, &o.size.SlopeWidth, &o.size.CWidth, &o.size.NBWidth)
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing on success")
	o.data.register(f)
	_ = c.MarkFlagFilename("model", "yaml", "yml")
	_ = c.MarkFlagFilename("plan", "yaml", "yml")
	_ = c.MarkFlagFilename("cohort", "csv", "tsv", "txt", "parquet", "arrow", "feather")
	_ = c.MarkFlagFilename("dev", "csv", "tsv", "txt", "parquet", "arrow", "feather")
	_ = c.MarkFlagDirname("out")
	return c
}

// largeCohort is the number of rows from which the audit collects
// garbage more often while it measures.
const largeCohort = 2_000_000

// tightenGC lowers the garbage collector's target (GOGC) to 25% for
// cohorts of largeCohort rows or more, unless the environment sets GOGC,
// and returns the function that restores it. Measuring allocates
// temporary copies of the cohort's columns (sorted risks, the smooth's
// inputs); with the default target the heap grows to twice what is live
// before a collection, which on a 10M-row cohort took the peak from about
// 1.1 to 1.8 GB. On smaller cohorts the more frequent collections would
// cost more time than the memory is worth.
func tightenGC(rows int) (restore func()) {
	if rows < largeCohort || os.Getenv("GOGC") != "" {
		return func() {}
	}
	old := debug.SetGCPercent(25)
	return func() { debug.SetGCPercent(old) }
}

// defaultSize is the sample-size check without a plan: the default
// target widths, the anticipated values taken from the cohort.
func defaultSize() plan.SampleSize {
	t := samplesize.DefaultTargets()
	return plan.SampleSize{OEWidth: t.OEWidth, SlopeWidth: t.SlopeWidth, CWidth: t.CWidth, NBWidth: t.NBWidth}
}

// parseThresholds reads FROM:TO:STEP or a comma-separated list; every
// threshold must lie strictly between 0 and 1.
func parseThresholds(s string) ([]float64, error) {
	var out []float64
	if strings.Contains(s, ":") {
		parts := strings.Split(s, ":")
		if len(parts) != 3 {
			return nil, usagef("--thresholds %q: give FROM:TO:STEP, such as 0.05:0.50:0.05", s)
		}
		var v [3]float64
		for i, p := range parts {
			f, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
			if err != nil {
				return nil, usagef("--thresholds %q: %q is not a number", s, p)
			}
			v[i] = f
		}
		if v[2] <= 0 || v[1] < v[0] {
			return nil, usagef("--thresholds %q: the step must be positive and TO at least FROM", s)
		}
		for k := 0; ; k++ {
			t := v[0] + float64(k)*v[2]
			if t > v[1]+1e-9 {
				break
			}
			out = append(out, math.Round(t*1e9)/1e9)
		}
	} else {
		for _, p := range strings.Split(s, ",") {
			f, err := strconv.ParseFloat(strings.TrimSpace(p), 64)
			if err != nil {
				return nil, usagef("--thresholds %q: %q is not a number", s, p)
			}
			out = append(out, f)
		}
	}
	for _, t := range out {
		if !(t > 0 && t < 1) {
			return nil, usagef("--thresholds: %g is not strictly between 0 and 1", t)
		}
	}
	return out, nil
}

// scored is a cohort's outcomes and predicted risks.
type scored struct {
	y, p, lp []float64
	groups   []validate.GroupColumn
	// frame is the file as read, kept so that later analyses (case-mix,
	// updating) need not read it again.
	frame    *cohort.Frame
	summary  validate.CohortSummary
	file     string
	hash     string
	spec     *model.Spec
	terms    []string
	isDevFit bool // the frozen model was fitted to this file
}

func runAudit(o *auditOptions, s *streams) error {
	ts, err := checkAuditFlags(o)
	if err != nil {
		return err
	}
	prog := newProgress(s, o.quiet)
	started := now()
	var spec *model.Spec
	if o.model != "" {
		if spec, err = model.LoadSpec(o.model); err != nil {
			return err
		}
		if !spec.Frozen() && o.devFile == "" {
			return &model.SpecError{File: o.model, Msg: "this is a recipe (it has no intercept): give the development data with --dev to fit it, or fit it first with 'riskaudit fit'"}
		}
	} else {
		spec = predictedSpec(o)
	}
	var extra []outFile
	var in *inside
	if o.model != "" && (!spec.Frozen() || o.bootstrap > 0) {
		prog.step("fitting on the development data " + o.devFile)
		if in, err = fitInside(o, spec); err != nil {
			return err
		}
		if !spec.Frozen() {
			spec = in.frozen
		}
		if o.bootstrap > 0 {
			if extra, err = internalValidation(o, s, in, prog); err != nil {
				return err
			}
		}
	}
	vopt := validate.Options{Thresholds: ts, ClassifyAt: o.classifyAt, Groups: o.groups, HLGroups: o.hlGroups,
		Span: o.span, Delta: o.delta, Epsilon: o.epsilon}
	var dev *scored
	var devPerf *validate.Performance
	if o.devFile != "" {
		prog.step("measuring the development data " + o.devFile)
		if dev, err = score(spec, o, o.devFile); err != nil {
			return err
		}
		dopt := vopt
		dopt.Development = dev.isDevFit
		if devPerf, err = assess(dev, dopt); err != nil {
			return err
		}
	}
	cur, perf := dev, devPerf
	if o.cohortFile != "" {
		prog.step("reading and scoring " + o.cohortFile)
		if cur, err = score(spec, o, o.cohortFile); err != nil {
			return err
		}
		defer tightenGC(len(cur.y))()
		prog.step("measuring")
		copt := vopt
		copt.Development = cur.isDevFit
		if perf, err = assess(cur, copt); err != nil {
			return err
		}
	}
	var a *validate.Audit
	if o.cohortFile != "" {
		a = validate.NewAudit(modelInfo(o, spec, cur), provenance(o, s, started, cur, dev), perf, devPerf, o.devFile)
	} else {
		a = validate.NewAudit(modelInfo(o, spec, cur), provenance(o, s, started, cur, nil), perf, nil, "")
		a.CohortIsDevelopment = true
		a.Development = &validate.Development{File: o.devFile}
	}
	if a.Development != nil {
		a.Development.Fitted = dev.isDevFit
		a.Development.Apparent = validate.ApparentOf(devPerf)
	}
	if in != nil {
		a.Development.Fit = in.report
		if in.internal != nil {
			a.SetInternal(in.internal)
		}
	}
	if o.ciBootstrap > 0 {
		prog.step(fmt.Sprintf("bootstrap intervals (%d replicates)", o.ciBootstrap))
		ci, err := resample.PercentileIntervals(cur.y, cur.p, resample.CIOptions{B: o.ciBootstrap, Seed: o.seed, Workers: o.workers, Thresholds: ts})
		if err != nil {
			return err
		}
		a.BootstrapCI = percentileCIs(ci, o, ts)
	}
	criteria := o.criteria
	if criteria == nil {
		criteria = validate.DefaultCriteria()
	}
	if a.Verdict, err = validate.Judge(perf, criteria); err != nil {
		return usagef("%v", err)
	}
	if cur != nil {
		a.SampleSize = sampleSizeOf(cur, perf, o.classifyAt, o.size)
	}
	if o.model != "" && o.devFile != "" && o.cohortFile != "" && dev != nil {
		prog.step("comparing case-mix")
		if a.CaseMix, err = caseMix(o, spec, dev, cur, devPerf, perf); err != nil {
			return err
		}
	}
	if o.update != "" {
		prog.step("updating the model on " + o.cohortFile)
		u, files, err := updateModel(o, spec, cur)
		if err != nil {
			return err
		}
		a.Update = u
		extra = append(extra, files...)
	}
	if len(o.subgroups) > 0 && cur != nil {
		prog.step("measuring subgroups")
		a.Subgroups = validate.Subgroups(cur.y, cur.p, cur.lp, cur.groups, o.minSubEvents, criteria, o.epsilon)
		a.MinSubgroupEvents = o.minSubEvents
	}
	label := a.Model.Name
	prog.step("drawing figures")
	figs, err := plots.All(perf, label)
	if err != nil {
		return err
	}
	if len(a.Subgroups) > 0 {
		fig, err := plots.Forest(a.Subgroups, perf)
		if err != nil {
			return err
		}
		figs = append(figs, fig)
	}
	if a.CaseMix != nil {
		cf, err := plots.CaseMix(a.CaseMix)
		if err != nil {
			return err
		}
		figs = append(figs, cf...)
	}
	prog.step("writing " + o.out)
	if err := writeAudit(o.out, a, figs, extra); err != nil {
		return err
	}
	if o.history != "" {
		prog.step("recording in " + o.history)
		if err := recordHistory(o, a, started); err != nil {
			return err
		}
	}
	prog.done()
	if !o.quiet {
		writeAuditSummary(s, a, o.out, len(figs))
	}
	if !a.Verdict.Passed() {
		return &criterionError{status: a.Verdict.Status, failed: countFailed(a.Verdict), total: len(a.Verdict.Criteria), report: filepath.Join(o.out, "report.md")}
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

// checkAuditFlags refuses contradictory or out-of-range flags and returns
// the decision-curve thresholds.
func checkAuditFlags(o *auditOptions) ([]float64, error) {
	switch {
	case o.out == "":
		return nil, usagef("give the output folder with --out (or in the plan)")
	case (o.model == "") == (o.predicted == ""):
		return nil, usagef("give either --model (a frozen model or a recipe) or --predicted (a column of risks)")
	case o.predicted != "" && (o.outcome == "" || o.event == ""):
		return nil, usagef("--predicted needs --outcome and --event")
	case o.model != "" && (o.outcome != "" || o.event != "" || o.nonEvent != ""):
		return nil, usagef("--outcome, --event and --non-event go with --predicted; a model names its own outcome")
	case o.cohortFile == "" && o.devFile == "":
		return nil, usagef("give the cohort to audit with --cohort (or, for a recipe, the development data with --dev)")
	case o.bootstrap < 0 || o.ciBootstrap < 0:
		return nil, usagef("--bootstrap and --ci-bootstrap take a number of replicates")
	case o.bootstrap > 0 && o.devFile == "":
		return nil, usagef("--bootstrap resamples the development data: give it with --dev")
	case o.bootstrap > 0 && o.predicted != "":
		return nil, usagef("--bootstrap refits a model: give --model, not --predicted")
	case o.bootstrap > 0 && o.bootstrap < 10:
		return nil, usagef("--bootstrap %d: give at least 10 replicates (200 or more is common practice)", o.bootstrap)
	case o.ciBootstrap > 0 && o.ciBootstrap < 20:
		return nil, usagef("--ci-bootstrap %d: give at least 20 replicates", o.ciBootstrap)
	case (o.shrunken != "" || o.resampleLog != "") && o.bootstrap == 0:
		return nil, usagef("--shrunken and --resample-log come from the bootstrap: add --bootstrap N")
	case o.cohortFile == "" && o.predicted != "":
		return nil, usagef("--predicted needs --cohort")
	case o.update != "" && (o.predicted != "" || o.cohortFile == ""):
		return nil, usagef("--update updates a model on the cohort: give --model and --cohort")
	}
	ts, err := parseThresholds(o.thresholds)
	if err != nil {
		return nil, err
	}
	for _, t := range o.classifyAt {
		if !(t > 0 && t < 1) {
			return nil, usagef("--classify-at: %g is not strictly between 0 and 1", t)
		}
	}
	if o.groups < 2 || o.hlGroups < 3 {
		return nil, usagef("--groups needs at least 2 and --hl-groups at least 3")
	}
	for _, w := range []struct {
		flag string
		v    float64
	}{{"oe-width", o.size.OEWidth}, {"slope-width", o.size.SlopeWidth}, {"c-width", o.size.CWidth}, {"nb-width", o.size.NBWidth}} {
		if !(w.v > 0) || (w.flag == "c-width" && w.v >= 1) {
			return nil, usagef("--%s %g: give a positive width (below 1 for the C-statistic)", w.flag, w.v)
		}
	}
	if o.span <= 0 || o.span > 1 {
		return nil, usagef("--lowess-span %g: give a value in (0, 1]", o.span)
	}
	if !(o.epsilon > 0 && o.epsilon < 0.01) {
		return nil, usagef("--clamp %g: give a small positive value below 0.01", o.epsilon)
	}
	if st, err := os.Stat(o.out); err == nil && !st.IsDir() {
		return nil, usagef("--out %s is a file, not a folder", o.out)
	}
	for _, out := range []string{o.shrunken, o.resampleLog, o.update} {
		if err := checkNotInput(out, o.model, o.cohortFile, o.devFile); err != nil {
			return nil, err
		}
	}
	return ts, nil
}

func percentileCIs(ci *resample.CIResult, o *auditOptions, ts []float64) *validate.PercentileCIs {
	out := &validate.PercentileCIs{Replicates: o.ciBootstrap, Seed: o.seed, ICIDelta: 0.1,
		ICI: ci.ICI, E50: ci.E50, E90: ci.E90, ScaledBrier: ci.ScaledBrier}
	for j, t := range ts {
		out.NetBenefit = append(out.NetBenefit, validate.ThresholdCI{Threshold: t, CI: ci.NetBenefit[j]})
	}
	return out
}

// predictedSpec is the spec behind --predicted: the outcome mapping and
// no predictors.
func predictedSpec(o *auditOptions) *model.Spec {
	v := func(s string) model.Value {
		f, err := strconv.ParseFloat(s, 64)
		return model.Value{Text: s, Num: f, IsNum: err == nil}
	}
	spec := &model.Spec{Name: "predicted risks in column " + o.predicted, Outcome: model.Outcome{Column: o.outcome, Event: v(o.event)}, File: "--predicted"}
	if o.nonEvent != "" {
		ne := v(o.nonEvent)
		spec.Outcome.NonEvent = &ne
	}
	return spec
}

// score reads one cohort file and returns its outcomes and predicted
// risks over the complete cases.
func score(spec *model.Spec, o *auditOptions, path string) (*scored, error) {
	copt, fail, err := o.data.options()
	if err != nil {
		return nil, err
	}
	copt.Rename = o.rename
	reqs := spec.Columns(true)
	var also []string
	if o.predicted != "" {
		if o.predicted == o.outcome {
			return nil, usagef("--predicted and --outcome name the same column")
		}
		reqs = append(reqs, cohort.Request{Name: o.predicted, Kind: cohort.Numeric, NaNIsError: true})
		also = []string{o.predicted}
	}
	for _, g := range o.subgroups {
		for _, q := range reqs {
			if q.Name == g && q.Kind != cohort.Categorical {
				return nil, usagef("subgroup column %q is a numeric predictor; give a categorical column (such as an age band)", g)
			}
		}
		reqs = append(reqs, cohort.Request{Name: g, Kind: cohort.Categorical})
	}
	// Hash the file while it is parsed (both read it from the page cache).
	type hashed struct {
		sum string
		err error
	}
	hc := make(chan hashed, 1)
	go func() {
		h, err := fileSHA256(path)
		hc <- hashed{h, err}
	}()
	fr, err := cohort.Load(path, reqs, copt)
	if err != nil {
		<-hc
		return nil, err
	}
	d, m, err := model.Build(spec, fr, model.Options{Outcome: true, FailOnMissing: fail, Also: also, NoMatrix: true})
	if err != nil {
		return nil, err
	}
	sc := &scored{y: m.Y, file: path, spec: spec, terms: m.Terms}
	if o.update != "" || o.devFile != "" {
		sc.frame = fr // the case-mix comparison or the update reads it again
	}
	for _, g := range o.subgroups {
		col := fr.Column(g)
		gc := validate.GroupColumn{Name: g, Levels: col.SortedLevels(), Codes: make([]int32, m.N)}
		rank := map[string]int32{}
		for k, l := range gc.Levels {
			rank[l] = int32(k)
		}
		for r, i := range m.Rows {
			if c := col.Codes[i]; c < 0 {
				gc.Codes[r] = -1
			} else {
				gc.Codes[r] = rank[col.Levels[c]]
			}
		}
		sc.groups = append(sc.groups, gc)
	}
	if o.predicted != "" {
		col := fr.Column(o.predicted)
		sc.p = make([]float64, m.N)
		for r, i := range m.Rows {
			v := col.Num[i]
			if !(v >= 0 && v <= 1) {
				return nil, &cohort.Error{File: path, Line: fr.Line(i), Row: fr.RowNumbered, Column: o.predicted, Value: strconv.FormatFloat(v, 'g', -1, 64), HasValue: true,
					Msg: "a predicted risk must lie between 0 and 1"}
			}
			sc.p[r] = v
		}
	} else {
		if sc.lp, err = d.FrozenLinearPredictors(m); err != nil {
			return nil, err
		}
		sc.p = make([]float64, m.N)
		for i, lp := range sc.lp {
			sc.p[i] = model.Risk(lp)
		}
	}
	h := <-hc
	if h.err != nil {
		return nil, h.err
	}
	sc.hash = h.sum
	if pv := spec.Provenance; pv != nil && pv.DataSHA256 == sc.hash {
		sc.isDevFit = true
	}
	sc.summary = validate.CohortSummary{Rows: m.Total, Excluded: m.Excluded}
	for _, e := range m.ByColumn {
		sc.summary.ExcludedByColumn = append(sc.summary.ExcludedByColumn, validate.ColumnCount{Column: e.Column, Rows: e.Rows})
	}
	return sc, nil
}

func assess(sc *scored, opt validate.Options) (*validate.Performance, error) {
	perf, err := validate.AssessLogits(sc.y, sc.p, sc.lp, opt)
	if err != nil {
		var re *validate.RiskError
		if errors.As(err, &re) {
			return nil, &cohort.Error{File: sc.file, Msg: err.Error()}
		}
		return nil, &cohort.Error{File: sc.file, Msg: strings.TrimPrefix(err.Error(), "validate: ")}
	}
	c := &perf.Cohort
	c.Rows, c.Excluded, c.ExcludedByColumn = sc.summary.Rows, sc.summary.Excluded, sc.summary.ExcludedByColumn
	return perf, nil
}

func modelInfo(o *auditOptions, spec *model.Spec, sc *scored) validate.ModelInfo {
	m := validate.ModelInfo{Name: spec.Name, Outcome: spec.Outcome.Column, Event: spec.Outcome.Event.Text}
	if o.predicted != "" {
		m.Source, m.Column = "predicted risks", o.predicted
		return m
	}
	m.Source, m.Spec, m.Terms = "frozen model", o.model, sc.terms
	if m.Name == "" {
		m.Name = filepath.Base(o.model)
	}
	return m
}

func provenance(o *auditOptions, s *streams, started interface{ Format(string) string }, cur, dev *scored) validate.Provenance {
	pv := validate.Provenance{Tool: "riskaudit " + toolVersion(), CommandLine: s.commandLine(), StartedAt: started.Format("2006-01-02T15:04:05Z")}
	if o.model != "" {
		h, err := fileSHA256(o.model)
		if err == nil {
			pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "model", Path: o.model, SHA256: h})
		}
	}
	pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "cohort", Path: cur.file, SHA256: cur.hash})
	if dev != nil {
		pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "development", Path: dev.file, SHA256: dev.hash})
	}
	return pv
}

// writeAudit writes the report, the JSON and the figures into dir, all
// or nothing.
func writeAudit(dir string, a *validate.Audit, figs []plots.Figure, extra []outFile) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("cannot create %s: %w", dir, err)
	}
	js, err := jsonout.Marshal(a)
	if err != nil {
		return fmt.Errorf("writing audit.json: %w", err)
	}
	var md bytes.Buffer
	if err := report.Write(&md, a, figs); err != nil {
		return err
	}
	var set atomicfile.Set
	defer set.Abort()
	for _, f := range figs {
		if err := set.Add(filepath.Join(dir, f.Name), f.SVG); err != nil {
			return err
		}
	}
	if err := set.Add(filepath.Join(dir, "audit.json"), js); err != nil {
		return err
	}
	if err := set.Add(filepath.Join(dir, "report.md"), md.Bytes()); err != nil {
		return err
	}
	for _, f := range extra {
		if err := set.Add(f.path, f.data); err != nil {
			return err
		}
	}
	return set.Commit()
}

func writeAuditSummary(s *streams, a *validate.Audit, dir string, nfig int) {
	w := s.out
	d, c, ov := a.Discrimination, a.Calibration, a.Overall
	fmt.Fprintf(w, "Audit of %s on %s\n", a.Model.Name, a.Provenance.Inputs[len(a.Provenance.Inputs)-1-devOffset(a)].Path)
	fmt.Fprintf(w, "  patients    %d used of %d, %d events (%.1f%%)\n", a.Cohort.Used, a.Cohort.Rows, a.Cohort.Events, 100*a.Cohort.EventRate)
	fmt.Fprintf(w, "  AUC         %.3f (95%% CI %.3f to %.3f)\n", d.AUC, d.CI[0], d.CI[1])
	fmt.Fprintf(w, "  O/E         %.3f (95%% CI %.3f to %.3f)\n", c.OE, c.OECI[0], c.OECI[1])
	fmt.Fprintf(w, "  CITL        %.3f (95%% CI %.3f to %.3f)\n", c.CITL, c.CITLCI[0], c.CITLCI[1])
	fmt.Fprintf(w, "  slope       %.3f (95%% CI %.3f to %.3f)\n", c.Slope, c.SlopeCI[0], c.SlopeCI[1])
	fmt.Fprintf(w, "  ICI         %.4f   E90 %.4f\n", c.ICI, c.E90)
	fmt.Fprintf(w, "  Brier       %.4f   scaled %.3f\n", ov.Brier, ov.ScaledBrier)
	if a.Development != nil {
		ap := a.Development.Apparent
		fmt.Fprintf(w, "  development AUC %.3f, O/E %.3f, slope %.3f\n", ap.AUC, ap.OE, ap.Slope)
	}
	if v := a.Verdict; v != nil {
		fmt.Fprintf(w, "  verdict     %s (%d of %d criteria not met)\n", v.Status, countFailed(v), len(v.Criteria))
	}
	fmt.Fprintf(w, "Wrote %s, %s and %d figures\n", filepath.Join(dir, "report.md"), filepath.Join(dir, "audit.json"), nfig)
}

func devOffset(a *validate.Audit) int {
	if a.Development != nil {
		return 1
	}
	return 0
}
