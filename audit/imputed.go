package audit

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/validate"
)

// ImputationConfig asks for the audit of a multiply imputed cohort: m ≥ 2
// completed datasets of the same patients, in the same row order, each
// scored by the frozen model and measured; the measures are pooled by
// Rubin's rules (validate.PoolImputations). The audit does not impute:
// it audits data some imputation program completed.
type ImputationConfig struct {
	// Column is the imputation column of a stacked Cohort: the rows of
	// each of its values are one completed dataset.
	Column string
	// Files are the completed datasets given one per input, instead of
	// Cohort.
	Files []Input
	// stacked is set while the stacked cohort is read: only it has the
	// imputation column (not the development data).
	stacked bool
}

// given reports whether the audit is of imputed data.
func (c ImputationConfig) given() bool { return c.Column != "" || len(c.Files) > 0 }

// prepareImputation refuses what an imputed audit cannot do and, for Files, makes
// the first file the Config's Cohort. It runs before Config.check.
func (c *Config) prepareImputation() error {
	im := c.Imputation
	if !im.given() {
		return nil
	}
	switch {
	case im.Column != "" && len(im.Files) > 0:
		return configErrorf("give either --imputation-column (one stacked file) or --imputed FILE for each completed dataset, not both")
	case len(im.Files) == 1:
		return configErrorf("--imputed %s: give every completed dataset, at least 2 (Rubin's rules need a between-imputation variance)", im.Files[0].Path)
	case len(im.Files) > 0 && c.Cohort.given():
		return configErrorf("--imputed gives the cohort's completed datasets: leave out --cohort")
	case im.Column != "" && !c.Cohort.given():
		return configErrorf("--imputation-column %s names a column of the stacked cohort: give it with --cohort", im.Column)
	case len(c.Clusters.Files) > 0:
		return configErrorf("--cluster-file is not combined with imputed data: give the completed datasets with a cluster column (--cluster) instead")
	case c.CIBootstrap > 0:
		return configErrorf("--ci-bootstrap is not combined with imputed data: the pooled measures have Rubin's intervals")
	case c.Update != "":
		return configErrorf("--update is not combined with imputed data: updating a model on multiply imputed data needs its own pooling of the refits")
	case len(c.Subgroups) > 0 || len(c.Bands) > 0:
		return configErrorf("--subgroups is not combined with imputed data yet: audit the subgroups on each completed dataset")
	case c.OverTime.DateColumn != "":
		return configErrorf("--date-column is not combined with imputed data: the charts follow one sequence of patients")
	case im.Column != "" && im.Column == c.Clusters.Column:
		return configErrorf("--imputation-column and --cluster name the same column %s", im.Column)
	}
	if len(im.Files) > 0 {
		c.Cohort = im.Files[0]
	}
	return nil
}

// imputationRequest adds the stacked file's imputation column to the
// columns read, refusing a column the model reads.
func (c *Config) imputationRequest(reqs []cohort.Request) ([]cohort.Request, error) {
	col := c.Imputation.Column
	if col == "" || !c.Imputation.stacked {
		return reqs, nil
	}
	for _, q := range reqs {
		if q.Name == col {
			return nil, configErrorf("--imputation-column %s is a column the model or another analysis reads; the imputation column numbers the completed datasets", col)
		}
	}
	return append(reqs, cohort.Request{Name: col, Kind: cohort.Categorical, For: "the imputation column"}), nil
}

// imputedRun holds the completed datasets of an imputed audit.
type imputedRun struct {
	parts  []*scored
	labels []string
	// lines gives the file line of each part's rows, for errors (nil:
	// the row's position in its file).
	lines [][]int
	files []string
	sets  []validate.ImputedData
	rec   *validate.Imputation
}

// imputed reads, scores and measures every completed dataset, checks
// that they describe the same patients, and pools the measures.
func (r *run) imputed(ctx context.Context) error {
	c := r.cfg
	ir := &imputedRun{}
	strict := *c
	strict.FailOnMissing = true
	strict.Imputation.stacked = true
	if c.Imputation.Column != "" {
		r.prog.Step("reading and scoring " + c.Cohort.Path)
		sc, err := strict.completed(ctx, r.cohortSpec(), c.Cohort)
		if err != nil {
			return err
		}
		if err := ir.split(sc, c.Imputation.Column); err != nil {
			return err
		}
	} else {
		for j, in := range c.Imputation.Files {
			r.prog.Step(fmt.Sprintf("reading and scoring imputation %d, %s", j+1, in.Path))
			sc, err := strict.completed(ctx, r.cohortSpec(), in.named())
			if err != nil {
				return err
			}
			ir.parts = append(ir.parts, sc)
			ir.labels = append(ir.labels, strconv.Itoa(j+1))
			ir.files = append(ir.files, sc.file)
			ir.lines = append(ir.lines, nil)
		}
	}
	if err := ir.check(r.cohortSpec()); err != nil {
		return err
	}
	imputed := ir.imputedRows(r.spec)
	r.prog.Step(fmt.Sprintf("measuring %d imputations", len(ir.parts)))
	for _, sc := range ir.parts {
		if ctx.Err() != nil {
			return context.Cause(ctx)
		}
		perf, err := assess(sc, r.measureOptions(sc))
		if err != nil {
			return err
		}
		ir.sets = append(ir.sets, validate.ImputedData{Y: sc.y, P: sc.p, LP: sc.lp, Perf: perf})
	}
	rec, perf, err := validate.PoolImputations(ir.sets, validate.ImputationOptions{Column: c.Imputation.Column, Files: ir.files,
		Labels: ir.labels, Imputed: imputed, Epsilon: c.Measures.Epsilon})
	if err != nil {
		return fmt.Errorf("pooling the imputations: %w", err)
	}
	ir.rec = rec
	r.imp, r.cur, r.perf = ir, ir.parts[0], perf
	return nil
}

// completed scores one completed dataset, which has no missing value in
// any column the model reads.
func (c *Config) completed(ctx context.Context, spec *model.Spec, in Input) (*scored, error) {
	sc, err := c.score(ctx, spec, in, true)
	var ce *cohort.Error
	if errors.As(err, &ce) && errors.Is(err, cohort.ErrMissing) {
		e := *ce
		e.Msg = "missing value in a completed (imputed) dataset: every imputation must be complete (leave out the original incomplete data, such as an imputation numbered 0)"
		return nil, &e
	}
	return sc, err
}

// split cuts a stacked cohort into its imputations, by the values of
// the imputation column in numeric (else text) order, each in file order.
func (ir *imputedRun) split(sc *scored, column string) error {
	col := sc.frame.Column(column)
	gc := groupColumn(col, seq(len(sc.y)), len(sc.y))
	if len(gc.Levels) < 2 {
		return &cohort.Error{File: sc.file, Column: column, Msg: fmt.Sprintf("%d imputation(s) in the imputation column: Rubin's rules need at least 2", len(gc.Levels)), Kind: cohort.ErrOutcome}
	}
	idx := make([][]int, len(gc.Levels))
	for i, k := range gc.Codes {
		if k < 0 {
			return &cohort.Error{File: sc.file, Line: sc.frame.Line(i), Row: sc.frame.RowNumbered, Column: column, Msg: "no imputation number", Kind: cohort.ErrMissing}
		}
		idx[k] = append(idx[k], i)
	}
	for k, rows := range idx {
		part := &scored{file: sc.file, hash: sc.hash, terms: sc.terms, renamed: sc.renamed, sheet: sc.sheet, query: sc.query, frame: sc.frame,
			y: pick(sc.y, rows), p: pick(sc.p, rows), isDevFit: sc.isDevFit}
		if sc.lp != nil {
			part.lp = pick(sc.lp, rows)
		}
		if sc.cluster != nil {
			cc := validate.GroupColumn{Name: sc.cluster.Name, Levels: sc.cluster.Levels, Codes: make([]int32, len(rows))}
			for r, i := range rows {
				cc.Codes[r] = sc.cluster.Codes[i]
			}
			part.cluster = &cc
		}
		part.summary = validate.CohortSummary{Rows: len(rows)}
		if k == 0 {
			// The audit reports the first part's warnings: here those
			// of the whole stacked file.
			part.ranges = sc.ranges
		}
		ir.parts = append(ir.parts, part)
		ir.labels = append(ir.labels, gc.Levels[k])
		ir.lines = append(ir.lines, rows)
	}
	return nil
}

// levelOf is the level of code k, "" for a missing value.
func levelOf(g *validate.GroupColumn, k int32) string {
	if k < 0 {
		return ""
	}
	return g.Levels[k]
}

func seq(n int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = i
	}
	return out
}

func pick(x []float64, rows []int) []float64 {
	out := make([]float64, len(rows))
	for r, i := range rows {
		out[r] = x[i]
	}
	return out
}

// frameRow is the frame row of row r of part j.
func (ir *imputedRun) frameRow(j, r int) int {
	if ir.lines[j] == nil {
		return r
	}
	return ir.lines[j][r]
}

// check refuses imputations of different sizes, or that give a patient
// (a row position) another outcome or cluster than the first imputation.
func (ir *imputedRun) check(spec *model.Spec) error {
	first := ir.parts[0]
	for j, p := range ir.parts[1:] {
		j++
		name := "imputation " + ir.labels[j]
		if len(p.y) != len(first.y) {
			return &cohort.Error{File: p.file, Msg: fmt.Sprintf("%s has %d rows, imputation %s has %d: the completed datasets must hold the same patients in the same order",
				name, len(p.y), ir.labels[0], len(first.y)), Kind: cohort.ErrFormat}
		}
		for r, v := range p.y {
			if v != first.y[r] {
				i := ir.frameRow(j, r)
				return &cohort.Error{File: p.file, Line: p.frame.Line(i), Row: p.frame.RowNumbered, Column: spec.Outcome.Column,
					Msg:  fmt.Sprintf("%s gives patient %d another outcome than imputation %s: the outcome is never imputed, and the completed datasets must hold the same patients in the same order", name, r+1, ir.labels[0]),
					Kind: cohort.ErrOutcome}
			}
		}
		if p.cluster != nil {
			for r, k := range p.cluster.Codes {
				if levelOf(p.cluster, k) != levelOf(first.cluster, first.cluster.Codes[r]) {
					i := ir.frameRow(j, r)
					return &cohort.Error{File: p.file, Line: p.frame.Line(i), Row: p.frame.RowNumbered, Column: p.cluster.Name,
						Msg: fmt.Sprintf("%s puts patient %d in another cluster than imputation %s", name, r+1, ir.labels[0]), Kind: cohort.ErrFormat}
				}
			}
		}
	}
	return nil
}

// imputedRows marks the patients (row positions) in which any of the
// model's predictor values differs between the imputations
// (validate.ImputedRule); nil for risks given in a column, whose
// predictors the audit does not read.
func (ir *imputedRun) imputedRows(spec *model.Spec) []bool {
	reqs := spec.Columns(false)
	if len(reqs) == 0 {
		return nil
	}
	n := len(ir.parts[0].y)
	out := make([]bool, n)
	first := ir.parts[0]
	for _, q := range reqs {
		c0 := first.frame.Column(q.Name)
		for j := 1; j < len(ir.parts); j++ {
			cj := ir.parts[j].frame.Column(q.Name)
			for r := 0; r < n; r++ {
				if out[r] {
					continue
				}
				a, b := ir.frameRow(0, r), ir.frameRow(j, r)
				if q.Kind == cohort.Numeric {
					out[r] = math.Float64bits(c0.Num[a]) != math.Float64bits(cj.Num[b])
				} else {
					out[r] = c0.Levels[c0.Codes[a]] != cj.Levels[cj.Codes[b]]
				}
			}
		}
	}
	return out
}

// imputedClusters pools within every cluster across the imputations,
// then across the clusters.
func (r *run) imputedClusters(a *validate.Audit) error {
	c := r.cfg.Clusters
	r.prog.Step("pooling across imputations within each " + c.Column + ", then across " + c.Column)
	cols := make([]validate.GroupColumn, len(r.imp.parts))
	for j, p := range r.imp.parts {
		cols[j] = *p.cluster
	}
	opt := clusterOptions(r.cfg)
	cl, err := validate.MeasureClustersImputed(r.imp.sets, cols, opt)
	if err != nil {
		return err
	}
	a.Clusters = cl
	return nil
}

// addImputation records the imputations in the audit: the pooled
// record, a summary finding, and every completed dataset's file among
// the inputs.
func (r *run) addImputation(a *validate.Audit) {
	if r.imp == nil {
		return
	}
	a.Imputation = r.imp.rec
	a.Summary = append(a.Summary, validate.ImputationFinding(r.imp.rec))
	for j, sc := range r.imp.parts[1:] {
		if len(r.cfg.Imputation.Files) == 0 {
			break
		}
		a.Provenance.Inputs = append(a.Provenance.Inputs, validate.InputFile{Role: "imputation " + r.imp.labels[j+1], Path: sc.file, Sheet: sc.sheet, SHA256: sc.hash, Query: sc.query})
	}
}

// relabelImputed says in the captions of an imputed audit's figures
// what each shows: averages across the imputations, or the first
// imputation (validate.FromFirstImputation).
func relabelImputed(a *validate.Audit, figs []plots.Figure) {
	if a.Imputation == nil {
		return
	}
	add := map[string]string{
		"calibration.svg":    "the curve the average of the imputations' smooths, the risk groups and the distribution the first imputation's",
		"roc.svg":            "the first imputation",
		"decision_curve.svg": "the model's net benefit averaged across the imputations",
		"risk_histogram.svg": "the first imputation",
	}
	for i, f := range figs {
		if s, ok := add[f.Name]; ok {
			figs[i].Title = f.Title + " (" + s + ")"
		}
	}
}
