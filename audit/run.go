package audit

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"maps"
	"path/filepath"
	"runtime/debug"
	"slices"
	"strconv"
	"time"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/monitor"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/resample"
	"github.com/riskaudit/riskaudit/validate"
)

// Result is a finished audit: the measures and findings, the figures
// drawn from them, and the further files the analyses offer.
type Result struct {
	// Audit is the whole result, written as audit.json and report.md.
	Audit *validate.Audit
	// Figures are the SVG figures beside the report.
	Figures []plots.Figure
	// Files are the further outputs asked for (the resample log, the
	// shrunken model, the updated model), at the paths the Config gave.
	Files []atomicfile.File
	// Folder are further files of the audit folder, named relative to
	// it: the frozen model fitted from a recipe (FittedModelName).
	Folder []atomicfile.File
	// Started is when the audit started, by the Config's clock.
	Started time.Time
	// Criteria are the acceptance criteria the verdict applied (the
	// Config's, or validate.DefaultCriteria), kept with a history record.
	Criteria []validate.Criterion
	// Warnings are findings of the summary that a reader of the command
	// line must not miss (such as patients dated after the audit date):
	// the command prints each on stderr.
	Warnings []string
}

// Passed reports whether every criterion was met.
func (r *Result) Passed() bool { return r.Audit.Verdict.Passed() }

// LargeCohort is the number of rows from which Config.GCPercent applies.
const LargeCohort = 500_000

// Run audits the model on the cohort as cfg says, and returns the
// result; it writes nothing (see Write and RecordHistory). An audit that
// ran is a result even when its criteria are not met (Result.Passed).
//
// Errors: a *ConfigError for contradictory options; the cohort
// package's errors for data that cannot be read or used (a cohort with
// one outcome is a *cohort.Error wrapping a *validate.OutcomesError);
// the model package's for a spec that cannot be used or a model that
// cannot be fitted. A cancelled ctx stops the run, within one bootstrap
// replicate or one chunk of a file, and returns context.Cause(ctx).
func Run(ctx context.Context, cfg Config) (*Result, error) {
	if err := cfg.prepareImputation(); err != nil {
		return nil, err
	}
	if err := cfg.check(); err != nil {
		return nil, err
	}
	if err := cfg.OverTime.check(); err != nil {
		return nil, err
	}
	if err := cfg.OverTime.checkCriteria(cfg.Criteria); err != nil {
		return nil, err
	}
	if err := cfg.Clusters.checkPooledCriteria(cfg.Criteria); err != nil {
		return nil, err
	}
	cfg.Measures = cfg.Measures.WithDefaults()
	cfg.Cohort, cfg.Dev = cfg.Cohort.named(), cfg.Dev.named()
	r := run{cfg: &cfg, prog: progressOf(cfg.Progress), started: now(cfg.Clock)}
	defer r.prog.Done()
	return r.audit(ctx)
}

// run is the state of one audit as it goes.
type run struct {
	cfg     *Config
	prog    Progress
	started time.Time
	// warnings are the run's Result.Warnings.
	warnings []string

	spec *model.Spec
	// cspec is spec with the cohort's outcome coding, or nil when the
	// cohort uses the model's (cohortSpec).
	cspec     *model.Spec
	modelHash string
	dev, cur  *scored
	devPerf   *validate.Performance
	perf      *validate.Performance
	inside    *FitResult
	files     []atomicfile.File
	// fitted is the frozen model fitted from the recipe given, as the
	// audit folder holds it (nil when the model given was frozen).
	fitted   *atomicfile.File
	criteria []validate.Criterion
	// monitor holds the charts over time for the figures (nil without a
	// date column).
	monitor *monitor.Result
	// imp holds the completed datasets of an imputed cohort (imputed.go).
	imp *imputedRun
	// dated is the charting in date order started beside the measures
	// (overtime_async.go), nil when none was; datedUsed is set when the
	// audit took its charts.
	dated     *datedJob
	datedUsed bool
}

// FittedModelName is the file in an audit folder that holds the frozen
// model the audit fitted from the recipe it was given.
const FittedModelName = "fitted_model.yaml"

func (r *run) audit(ctx context.Context) (*Result, error) {
	c := r.cfg
	// The dated job's context: cancelled when the audit returns, so an
	// audit that stops early stops its limit simulation too.
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	if err := r.loadModel(); err != nil {
		return nil, err
	}
	if err := r.recode(); err != nil {
		return nil, err
	}
	var internal *validate.Internal
	if c.Dev.given() {
		dev, err := r.readDev(ctx)
		if err != nil {
			return nil, err
		}
		if c.hasModel() && (!r.spec.Frozen() || c.Bootstrap > 0) {
			r.prog.Step("fitting on the development data " + c.Dev.Path)
			if r.inside, err = c.fitInside(r.spec, dev); err != nil {
				return nil, err
			}
			if !r.spec.Frozen() {
				r.spec = r.inside.Frozen
				y, err := r.spec.MarshalYAML()
				if err != nil {
					return nil, fmt.Errorf("writing the fitted model: %w", err)
				}
				r.fitted = &atomicfile.File{Path: FittedModelName, Data: y}
				if err := r.recode(); err != nil {
					return nil, err
				}
			}
			if c.Bootstrap > 0 {
				var files []atomicfile.File
				if internal, files, err = c.internalValidation(ctx, r.inside, r.prog); err != nil {
					return nil, err
				}
				r.files = append(r.files, files...)
			}
		}
		r.prog.Step("measuring the development data " + c.Dev.Path)
		if r.dev, err = c.score(ctx, r.spec, dev, !c.audits()); err != nil {
			return nil, err
		}
		if r.devPerf, err = assess(r.dev, r.measureOptions(r.dev)); err != nil {
			return nil, err
		}
	}
	r.cur, r.perf = r.dev, r.devPerf
	if c.Imputation.given() {
		if err := r.imputed(ctx); err != nil {
			return nil, err
		}
	} else if c.hasCohort() {
		var err error
		if len(c.Clusters.Files) > 0 {
			r.prog.Step(fmt.Sprintf("reading and scoring %d cluster files", len(c.Clusters.Files)))
			r.cur, err = c.scoreClusterFiles(ctx, r.cohortSpec())
		} else {
			r.prog.Step("reading and scoring " + c.Cohort.Path)
			r.cur, err = c.score(ctx, r.cohortSpec(), c.Cohort, true)
		}
		if err != nil {
			return nil, err
		}
		defer r.tightenGC(len(r.cur.y))()
		r.startOverTime(ctx)
		r.prog.Step("measuring")
		if r.perf, err = assess(r.cur, r.measureOptions(r.cur)); err != nil {
			return nil, err
		}
	}
	a := r.newAudit(internal)
	r.addImputation(a)
	if err := r.analyses(ctx, a); err != nil {
		return nil, err
	}
	r.prog.Step("drawing figures")
	// The charts in date order are painted beside the other figures (the
	// latter are drawn one after another, which leaves a core free).
	var mf []plots.Figure
	var merr error
	done := make(chan struct{})
	go func() {
		defer close(done)
		if r.monitor != nil {
			mf, merr = r.monitorFigures(a.OverTime)
		}
	}()
	figs, err := figures(a, r.perf)
	<-done
	if err != nil {
		return nil, err
	}
	if merr != nil {
		return nil, merr
	}
	for _, f := range mf {
		a.Figures = append(a.Figures, validate.FigureFiles{Title: f.Title, SVG: f.Name, PNG: f.PNGName()})
	}
	figs = append(figs, mf...)
	if ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	res := &Result{Audit: a, Figures: figs, Files: r.files, Started: r.started, Criteria: r.criteria, Warnings: r.warnings}
	if r.fitted != nil {
		res.Folder = append(res.Folder, *r.fitted)
	}
	return res, nil
}

// fittedFile is the fitted model's path as the provenance names it (the
// output folder joined with its name) and its SHA-256.
func (r *run) fittedFile() *validate.OutputFile {
	if r.fitted == nil {
		return nil
	}
	sum := sha256.Sum256(r.fitted.Data)
	return &validate.OutputFile{Path: filepath.Join(r.cfg.OutDir, r.fitted.Path), SHA256: hex.EncodeToString(sum[:])}
}

// loadModel reads the model (or makes the spec of a column of risks) and
// hashes its file for the provenance.
func (r *run) loadModel() error {
	c := r.cfg
	if c.Predicted != nil {
		r.spec = predictedSpec(c.Predicted)
		return nil
	}
	var err error
	if c.Spec != nil {
		r.spec = c.Spec
	} else if r.spec, r.modelHash, err = loadSpecHashed(c.Model); err != nil {
		return err
	}
	if !r.spec.Frozen() && !c.Dev.given() {
		return &model.SpecError{File: c.Model, Msg: "this is a recipe (it has no intercept): give the development data with --dev to fit it, or fit it first with 'riskaudit fit'", Kind: model.ErrNotFrozen}
	}
	return nil
}

// readDev reads the development data once, for the fit inside the audit
// and for measuring.
func (r *run) readDev(ctx context.Context) (Input, error) {
	c := r.cfg
	reqs, err := c.requests(r.spec, !c.audits())
	if err != nil {
		return Input{}, err
	}
	fr, hash, err := load(ctx, c.Dev, reqs, c.Read)
	if err != nil {
		return Input{}, err
	}
	return Input{Path: c.Dev.Path, Frame: fr, SHA256: hash}, nil
}

// measureOptions are the measures' options for one dataset.
func (r *run) measureOptions(sc *scored) validate.Options {
	o := r.cfg.Measures
	o.Development = sc.isDevFit
	return o
}

// tightenGC sets the garbage collector's target while a large cohort is
// measured, when the Config asks for it, and returns the function that
// restores it. Measuring allocates temporary copies of the cohort's
// columns (sorted risks, the smooth's inputs); with the default target
// the heap grows to twice what is live before a collection, which on a
// 10M-row cohort took the peak from about 1.1 to 1.8 GB.
func (r *run) tightenGC(rows int) (restore func()) {
	if r.cfg.GCPercent <= 0 || rows < LargeCohort {
		return func() {}
	}
	old := debug.SetGCPercent(r.cfg.GCPercent)
	return func() { debug.SetGCPercent(old) }
}

// newAudit assembles the audit from the measures taken so far.
func (r *run) newAudit(internal *validate.Internal) *validate.Audit {
	c := r.cfg
	var a *validate.Audit
	if c.hasCohort() {
		a = validate.NewAudit(r.modelInfo(), r.provenance(), r.perf, r.devPerf, c.Dev.Path)
	} else {
		a = validate.NewAudit(r.modelInfo(), r.provenance(), r.perf, nil, "")
		a.CohortIsDevelopment = true
		a.Development = &validate.Development{File: c.Dev.Path}
	}
	if a.Development != nil {
		a.Development.Fitted = r.dev.isDevFit
		a.Development.Apparent = validate.ApparentOf(r.devPerf)
	}
	if r.inside != nil {
		a.Development.Fit = r.inside.Report
		if internal != nil {
			a.SetInternal(internal)
		}
	}
	return a
}

// analyses adds what the Config asks for beyond the measures: percentile
// intervals, the verdict, the sample-size check, case-mix, updating and
// subgroups.
func (r *run) analyses(ctx context.Context, a *validate.Audit) error {
	c := r.cfg
	if c.CIBootstrap > 0 {
		r.prog.Step(fmt.Sprintf("bootstrap intervals (%d replicates)", c.CIBootstrap))
		ts := c.Measures.Thresholds
		ci, err := resample.PercentileIntervals(ctx, r.cur.y, r.cur.p, resample.CIOptions{B: c.CIBootstrap, Seed: c.Seed, Workers: c.Workers, Thresholds: ts})
		if err != nil {
			return err
		}
		a.BootstrapCI = percentileCIs(ci, c.CIBootstrap, c.Seed, ts)
		a.AddGainUncertainty()
	}
	if c.OverTime.DateColumn != "" {
		// Before the verdict: a plan may make an alarm a criterion.
		if err := r.overTime(ctx, a); err != nil {
			return err
		}
	}
	if r.cur.cluster != nil {
		// Before the verdict: a plan may make a pooled measure a criterion.
		if err := r.clusters(a); err != nil {
			return err
		}
		r.perf.Pooled = &a.Clusters.Pooled
	}
	criteria := c.Criteria
	if criteria == nil {
		criteria = validate.DefaultCriteria()
	}
	r.criteria = criteria
	var err error
	if a.Verdict, err = validate.Judge(r.perf, criteria); err != nil {
		return &ConfigError{Msg: err.Error()}
	}
	a.SampleSize = sampleSizeOf(r.cur, r.perf, c.Measures.ClassifyAt, c.sizeRequest())
	if c.hasModel() && c.Dev.given() && c.hasCohort() && r.imp == nil {
		r.prog.Step("comparing case-mix")
		if a.CaseMix, err = c.caseMix(r.spec, r.cohortSpec(), r.dev, r.cur, r.devPerf, r.perf); err != nil {
			return err
		}
	}
	if c.Update != "" {
		r.prog.Step("updating the model on " + r.cur.file)
		parent := validate.ParentModel{Path: c.Model, SHA256: r.modelHash}
		if fm := r.fittedFile(); fm != nil {
			parent = validate.ParentModel{Path: fm.Path, SHA256: fm.SHA256, FittedInAudit: true}
		}
		u, f, err := c.updateModel(ctx, r.spec, r.cohortSpec(), parent, r.cur)
		if err != nil {
			return err
		}
		a.Update = u
		r.files = append(r.files, f)
	}
	if len(c.Subgroups) > 0 || len(c.Bands) > 0 {
		if err := r.subgroups(a, criteria); err != nil {
			return err
		}
	}
	// Every audit's summary says what limits it (a cohort short of the
	// sample-size criteria, many rows left out), with or without
	// subgroups.
	a.AddLimitations(c.MissingCaution)
	if t := r.cur.nonEvents; t != "" {
		a.Summary = append(a.Summary, validate.Finding{Area: "outcome", Text: t})
		r.warnings = append(r.warnings, t)
	}
	// Last among the limitations: a warning that changes no number.
	a.OutOfRange = r.cur.ranges
	if f, ok := outOfRangeFinding(a.OutOfRange); ok {
		a.Summary = append(a.Summary, f)
	}
	return nil
}

// subgroups measures the model in every subgroup, bands the numeric
// subgroup columns on the audited cohort, and counts the subgroup checks
// in the verdict as the Config says.
func (r *run) subgroups(a *validate.Audit, criteria []validate.Criterion) error {
	c := r.cfg
	r.prog.Step("measuring subgroups")
	min := c.MinSubgroupEvents
	if min == 0 {
		min = validate.DefaultMinSubgroupEvents
	}
	groups := r.cur.groups
	for k, b := range c.Bands {
		gc, info, err := validate.BandColumn(r.cur.bandValues[k], b)
		if err != nil {
			msg := fmt.Sprintf("no value in the audited rows, so the quantile bands of --subgroups %s cannot be found", b)
			return &cohort.Error{File: r.cur.file, Column: b.Column, Msg: msg, Kind: cohort.ErrMissing, Err: err}
		}
		groups = append(groups, gc)
		a.SubgroupBands = append(a.SubgroupBands, info)
	}
	a.Subgroups = validate.Subgroups(r.cur.y, r.cur.p, r.cur.lp, groups, min, criteria, c.Measures.Epsilon)
	a.MinSubgroupEvents = min
	if err := a.Verdict.AddSubgroups(a.Subgroups, c.SubgroupCriteria); err != nil {
		return &ConfigError{Msg: "--subgroup-criteria: " + err.Error()}
	}
	if f, ok := a.Verdict.SubgroupFinding(); ok {
		a.Summary = append(a.Summary, f)
	}
	return nil
}

// figures draws every figure of the audit.
func figures(a *validate.Audit, perf *validate.Performance) ([]plots.Figure, error) {
	figs, err := plots.All(perf, a.Model.Name)
	if err != nil {
		return nil, err
	}
	if len(a.Subgroups) > 0 {
		fig, err := plots.Forest(a.Subgroups, perf)
		if err != nil {
			return nil, err
		}
		figs = append(figs, fig)
	}
	if a.Clusters != nil {
		cf, err := plots.ClusterForests(a.Clusters)
		if err != nil {
			return nil, err
		}
		figs = append(figs, cf...)
	}
	if a.CaseMix != nil {
		cf, err := plots.CaseMix(a.CaseMix)
		if err != nil {
			return nil, err
		}
		figs = append(figs, cf...)
	}
	relabelImputed(a, figs)
	for _, f := range figs {
		a.Figures = append(a.Figures, validate.FigureFiles{Title: f.Title, SVG: f.Name, PNG: f.PNGName()})
	}
	return figs, nil
}

func percentileCIs(ci *resample.CIResult, b int, seed uint64, ts []float64) *validate.PercentileCIs {
	out := &validate.PercentileCIs{Replicates: b, Seed: seed, ICIDelta: 0.1,
		ICI: ci.ICI, E50: ci.E50, E90: ci.E90, ScaledBrier: ci.ScaledBrier}
	for j, t := range ts {
		out.NetBenefit = append(out.NetBenefit, validate.ThresholdCI{Threshold: t, CI: ci.NetBenefit[j]})
		out.NetBenefitGain = append(out.NetBenefitGain, validate.ThresholdCI{Threshold: t, CI: ci.NetBenefitGain[j]})
	}
	return out
}

// predictedSpec is the spec behind a column of risks: the outcome
// mapping and no predictors.
func predictedSpec(pr *Predicted) *model.Spec {
	v := func(s string) model.Value {
		f, err := strconv.ParseFloat(s, 64)
		return model.Value{Text: s, Num: f, IsNum: err == nil}
	}
	spec := &model.Spec{Name: "predicted risks in column " + pr.Column, Outcome: model.Outcome{Column: pr.Outcome, Event: v(pr.Event)}, File: "--predicted"}
	if pr.NonEvent != "" {
		ne := v(pr.NonEvent)
		spec.Outcome.NonEvent = &ne
	}
	return spec
}

func (r *run) modelInfo() validate.ModelInfo {
	c, spec := r.cfg, r.spec
	m := validate.ModelInfo{Name: spec.Name, Outcome: spec.Outcome.Column, Event: spec.Outcome.Event.Text}
	if c.Predicted != nil {
		m.Source, m.Column, m.PredictedPercent = "predicted risks", c.Predicted.Column, c.Predicted.Percent
		m.Purpose = validate.NewPurpose(model.Purpose{}, c.Purpose)
		return m
	}
	m.Source, m.Spec, m.Terms = "frozen model", c.Model, r.cur.terms
	if pv := spec.Provenance; pv != nil {
		m.ParentSHA256 = pv.ParentSHA256
	}
	if m.Name == "" {
		m.Name = filepath.Base(c.Model)
	}
	m.Purpose = validate.NewPurpose(spec.Purpose, c.Purpose)
	m.FittedModel = r.fittedFile()
	m.CohortOutcome = outcomeInfo(spec, r.cohortSpec())
	return m
}

func (r *run) provenance() validate.Provenance {
	c := r.cfg
	pv := validate.Provenance{Tool: c.Tool, CommandLine: c.CommandLine, StartedAt: r.started.Format(timeFormat), Plan: c.Plan}
	pv.AuditDate, pv.AuditDateSource = auditDate(c.AuditDate, c.AuditDateSource, r.started)
	if c.Model != "" {
		pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "model", Path: c.Model, SHA256: r.modelHash})
	}
	pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "cohort", Path: r.cur.file, Sheet: r.cur.sheet, SHA256: r.cur.hash, Query: r.cur.query})
	pv.Inputs = append(pv.Inputs, r.cur.files...)
	read := []readFile{{"cohort", r.cur.renamed}}
	if c.hasCohort() && r.dev != nil {
		pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "development", Path: r.dev.file, Sheet: r.dev.sheet, SHA256: r.dev.hash, Query: r.dev.query})
		read = append(read, readFile{"development", r.dev.renamed})
	}
	pv.Renames = renames(c.Read.Rename, c.RenameSources, read)
	return pv
}

// auditDate is the audit's date and where it came from: the date given
// (from its source, by default a Go caller's Config), else the day the
// run started.
func auditDate(date, source string, started time.Time) (string, string) {
	switch {
	case date == "":
		return started.Format(time.DateOnly), validate.DateToday
	case source == "":
		return date, validate.DateFromConfig
	}
	return date, source
}

// readFile is a file the run read, by its role in the provenance, with
// the renames that applied to it.
type readFile struct {
	role    string
	renamed []cohort.RenamedColumn
}

// renames lists every rename asked for, in order of the name in the
// file, with its source and the files it applied to.
func renames(asked, sources map[string]string, files []readFile) []validate.Rename {
	out := []validate.Rename{}
	for _, from := range slices.Sorted(maps.Keys(asked)) {
		rn := validate.Rename{From: from, To: asked[from], Source: sources[from], AppliedTo: []string{}}
		if rn.Source == "" {
			rn.Source = "config"
		}
		for _, f := range files {
			if slices.ContainsFunc(f.renamed, func(c cohort.RenamedColumn) bool { return c.From == from }) {
				rn.AppliedTo = append(rn.AppliedTo, f.role)
			}
		}
		out = append(out, rn)
	}
	return out
}
