package audit

import (
	"context"
	"fmt"
	"path/filepath"
	"runtime/debug"
	"strconv"
	"time"

	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/model"
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
	// Started is when the audit started, by the Config's clock.
	Started time.Time
}

// Passed reports whether every criterion was met.
func (r *Result) Passed() bool { return r.Audit.Verdict.Passed() }

// LargeCohort is the number of rows from which Config.GCPercent applies.
const LargeCohort = 2_000_000

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
	if err := cfg.check(); err != nil {
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

	spec      *model.Spec
	modelHash string
	modelErr  error // why the model file could not be hashed
	dev, cur  *scored
	devPerf   *validate.Performance
	perf      *validate.Performance
	inside    *FitResult
	files     []atomicfile.File
}

func (r *run) audit(ctx context.Context) (*Result, error) {
	c := r.cfg
	if err := r.loadModel(); err != nil {
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
		if r.dev, err = c.score(ctx, r.spec, dev); err != nil {
			return nil, err
		}
		if r.devPerf, err = assess(r.dev, r.measureOptions(r.dev)); err != nil {
			return nil, err
		}
	}
	r.cur, r.perf = r.dev, r.devPerf
	if c.Cohort.given() {
		var err error
		r.prog.Step("reading and scoring " + c.Cohort.Path)
		if r.cur, err = c.score(ctx, r.spec, c.Cohort); err != nil {
			return nil, err
		}
		defer r.tightenGC(len(r.cur.y))()
		r.prog.Step("measuring")
		if r.perf, err = assess(r.cur, r.measureOptions(r.cur)); err != nil {
			return nil, err
		}
	}
	a := r.newAudit(internal)
	if err := r.analyses(ctx, a); err != nil {
		return nil, err
	}
	r.prog.Step("drawing figures")
	figs, err := figures(a, r.perf)
	if err != nil {
		return nil, err
	}
	if ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	return &Result{Audit: a, Figures: figs, Files: r.files, Started: r.started}, nil
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
	if r.spec, err = specOf(c.Spec, c.Model); err != nil {
		return err
	}
	if !r.spec.Frozen() && !c.Dev.given() {
		return &model.SpecError{File: c.Model, Msg: "this is a recipe (it has no intercept): give the development data with --dev to fit it, or fit it first with 'riskaudit fit'", Kind: model.ErrNotFrozen}
	}
	if c.Model != "" && c.Spec == nil {
		r.modelHash, r.modelErr = fileSHA256(c.Model)
	}
	return nil
}

// readDev reads the development data once, for the fit inside the audit
// and for measuring.
func (r *run) readDev(ctx context.Context) (Input, error) {
	c := r.cfg
	reqs, err := c.requests(r.spec)
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
	if c.Cohort.given() {
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
	}
	criteria := c.Criteria
	if criteria == nil {
		criteria = validate.DefaultCriteria()
	}
	var err error
	if a.Verdict, err = validate.Judge(r.perf, criteria); err != nil {
		return &ConfigError{Msg: err.Error()}
	}
	a.SampleSize = sampleSizeOf(r.cur, r.perf, c.Measures.ClassifyAt, c.sizeRequest())
	if c.hasModel() && c.Dev.given() && c.Cohort.given() {
		r.prog.Step("comparing case-mix")
		if a.CaseMix, err = c.caseMix(r.spec, r.dev, r.cur, r.devPerf, r.perf); err != nil {
			return err
		}
	}
	if c.Update != "" {
		r.prog.Step("updating the model on " + c.Cohort.Path)
		if r.modelErr != nil {
			return r.modelErr
		}
		u, f, err := c.updateModel(ctx, r.spec, r.modelHash, r.cur)
		if err != nil {
			return err
		}
		a.Update = u
		r.files = append(r.files, f)
	}
	if len(c.Subgroups) > 0 {
		r.prog.Step("measuring subgroups")
		min := c.MinSubgroupEvents
		if min == 0 {
			min = validate.DefaultMinSubgroupEvents
		}
		a.Subgroups = validate.Subgroups(r.cur.y, r.cur.p, r.cur.lp, r.cur.groups, min, criteria, c.Measures.Epsilon)
		a.MinSubgroupEvents = min
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
	if a.CaseMix != nil {
		cf, err := plots.CaseMix(a.CaseMix)
		if err != nil {
			return nil, err
		}
		figs = append(figs, cf...)
	}
	return figs, nil
}

func percentileCIs(ci *resample.CIResult, b int, seed uint64, ts []float64) *validate.PercentileCIs {
	out := &validate.PercentileCIs{Replicates: b, Seed: seed, ICIDelta: 0.1,
		ICI: ci.ICI, E50: ci.E50, E90: ci.E90, ScaledBrier: ci.ScaledBrier}
	for j, t := range ts {
		out.NetBenefit = append(out.NetBenefit, validate.ThresholdCI{Threshold: t, CI: ci.NetBenefit[j]})
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
		m.Source, m.Column = "predicted risks", c.Predicted.Column
		return m
	}
	m.Source, m.Spec, m.Terms = "frozen model", c.Model, r.cur.terms
	if m.Name == "" {
		m.Name = filepath.Base(c.Model)
	}
	return m
}

func (r *run) provenance() validate.Provenance {
	c := r.cfg
	pv := validate.Provenance{Tool: c.Tool, CommandLine: c.CommandLine, StartedAt: r.started.Format(timeFormat)}
	if c.Model != "" && r.modelErr == nil {
		pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "model", Path: c.Model, SHA256: r.modelHash})
	}
	pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "cohort", Path: r.cur.file, SHA256: r.cur.hash, Query: r.cur.query})
	if c.Cohort.given() && r.dev != nil {
		pv.Inputs = append(pv.Inputs, validate.InputFile{Role: "development", Path: r.dev.file, SHA256: r.dev.hash, Query: r.dev.query})
	}
	return pv
}
