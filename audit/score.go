package audit

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// scored is one dataset's outcomes and predicted risks over its complete
// cases.
type scored struct {
	y, p, lp []float64
	groups   []validate.GroupColumn
	// bandValues are the values of each Config.Bands column in the used
	// rows (NaN where missing), cut into bands for the audited cohort
	// only, since the quantiles are the audited cohort's.
	bandValues [][]float64
	// cluster codes the rows by the Config.Clusters column (or cluster
	// file), or is nil.
	cluster *validate.GroupColumn
	// files are the cluster files joined into this cohort, for the
	// provenance (nil for one file).
	files []validate.InputFile
	// frame is the data as read, kept so that later analyses (case-mix,
	// updating) need not read it again.
	frame    *cohort.Frame
	summary  validate.CohortSummary
	file     string
	hash     string
	terms    []string
	isDevFit bool // the frozen model was fitted to these data
	// renamed are the renames that applied to the file.
	renamed []cohort.RenamedColumn
	// sheet is the worksheet read, for a workbook.
	sheet string
	// query describes the database query the data came from, or is nil.
	query *cohort.QueryInfo
	// dates are the OverTime date column's text in the used rows, with
	// their lines for errors (nil without a date column).
	dates *dateColumn
	// ranges are the predictor values of the audited data beyond the
	// model's development range or like missing-value codes (ranges.go).
	ranges []validate.OutOfRange
	// nonEvents is the audited data's note on an outcome read without a
	// stated non-event value that holds more than one other value
	// (model.Design.NonEvents as a sentence), or "".
	nonEvents string
}

// requests are the columns an audit reads: the model's (with the
// outcome), the predicted risks and the subgroups, and for the data
// audited (the cohort, or the development data when no cohort is given)
// the cluster and date columns, which only the audited data are
// measured by: the development data beside a cohort need not hold them.
func (c *Config) requests(spec *model.Spec, audited bool) ([]cohort.Request, error) {
	reqs := spec.Columns(true)
	if audited && c.Predicted == nil && c.hasCohort() && !c.Outcome.given() {
		reqs[0].For = "the model's outcome (a cohort that names or codes it otherwise can say so with --outcome, --event and --non-event)"
	}
	if c.Predicted != nil {
		reqs = append(reqs, cohort.Request{Name: c.Predicted.Column, Kind: cohort.Numeric, NaNIsError: true, For: "the predicted risks (every file audited holds them)"})
	}
	for _, g := range c.Subgroups {
		for _, q := range reqs {
			if q.Name == g && q.Kind != cohort.Categorical {
				return nil, configErrorf("subgroup column %q is a numeric predictor; cut it into bands with cut points or quantiles, such as --subgroups %s:65,75 or %s:q4", g, g, g)
			}
		}
		reqs = append(reqs, cohort.Request{Name: g, Kind: cohort.Categorical, For: "a subgroup column"})
	}
	if cc := c.Clusters.Column; cc != "" && audited {
		for _, q := range reqs {
			if q.Name == cc && q.Kind != cohort.Categorical {
				return nil, configErrorf("cluster column %q is a numeric predictor; a cluster column names hospitals, regions or periods", cc)
			}
		}
		reqs = append(reqs, cohort.Request{Name: cc, Kind: cohort.Categorical, For: "the cluster column"})
	}
	for _, b := range c.Bands {
		for _, q := range reqs {
			if q.Name == b.Column && q.Kind != cohort.Numeric {
				return nil, configErrorf("subgroup column %q is categorical; only a numeric column can be cut into bands (give it without cut points)", b.Column)
			}
		}
		reqs = append(reqs, cohort.Request{Name: b.Column, Kind: cohort.Numeric, For: "a banded subgroup column"})
	}
	if !audited {
		return reqs, nil
	}
	reqs, err := c.imputationRequest(reqs)
	if err != nil {
		return nil, err
	}
	return c.OverTime.request(reqs)
}

// frameOf reads an input's requested columns, or checks that a frame
// already read holds them.
func frameOf(ctx context.Context, in Input, reqs []cohort.Request, opt cohort.Options) (*cohort.Frame, error) {
	if in.Frame == nil && in.Source != nil {
		fr, err := in.Source.Load(ctx, reqs, opt)
		if err == nil && fr.Query == nil {
			err = fmt.Errorf("the source %s did not describe the rows it read", in.Path)
		}
		return fr, err
	}
	if in.Frame == nil {
		return cohort.LoadContext(ctx, in.Path, reqs, opt)
	}
	for _, q := range reqs {
		col := in.Frame.Column(q.Name)
		if col == nil || col.Kind != q.Kind {
			return nil, configErrorf("the frame given for %s has no %s column %q", in.Path, kindName(q.Kind), q.Name)
		}
	}
	return in.Frame, nil
}

// load is frameOf with the input's SHA-256, which cohort computes from
// the bytes it reads (a delimited file is not read twice), unless the
// input is a frame already read.
func load(ctx context.Context, in Input, reqs []cohort.Request, opt cohort.Options) (*cohort.Frame, string, error) {
	if in.Frame != nil {
		fr, err := frameOf(ctx, in, reqs, opt)
		return fr, in.SHA256, err
	}
	if in.Source != nil {
		fr, err := frameOf(ctx, in, reqs, opt)
		if err != nil {
			return nil, "", err
		}
		return fr, fr.Query.RowsSHA256, nil
	}
	opt.HashFile = true
	fr, err := frameOf(ctx, in, reqs, opt)
	if err != nil {
		return nil, "", err
	}
	return fr, fr.FileSHA256, nil
}

func kindName(k cohort.Kind) string {
	if k == cohort.Categorical {
		return "categorical"
	}
	return "numeric"
}

// score reads one input and returns its outcomes and predicted risks
// over the complete cases; audited says whether it is the data audited
// (see requests).
func (c *Config) score(ctx context.Context, spec *model.Spec, in Input, audited bool) (*scored, error) {
	reqs, err := c.requests(spec, audited)
	if err != nil {
		return nil, err
	}
	fr, hash, err := load(ctx, in, reqs, c.Read)
	if err != nil {
		return nil, err
	}
	var also []string
	if c.Predicted != nil {
		also = []string{c.Predicted.Column}
	}
	// The cohort (not development data beside it) may code the outcome
	// otherwise and say so.
	cohortCodes := audited && c.Predicted == nil && c.hasCohort()
	d, m, err := model.Build(spec, fr, model.Options{Outcome: true, FailOnMissing: c.FailOnMissing, Also: also, NoMatrix: true, CohortCodes: cohortCodes})
	if err != nil {
		return nil, err
	}
	sc := &scored{y: m.Y, file: in.Path, hash: hash, terms: m.Terms, renamed: fr.Renamed, sheet: fr.Sheet, query: fr.Query}
	if c.Update != "" || c.Dev.given() || c.Imputation.given() {
		sc.frame = fr // the case-mix comparison or the update reads it again
	}
	for _, g := range c.Subgroups {
		sc.groups = append(sc.groups, groupColumn(fr.Column(g), m.Rows, m.N))
	}
	if cc := c.Clusters.Column; cc != "" && audited {
		gc := groupColumn(fr.Column(cc), m.Rows, m.N)
		sc.cluster = &gc
	}
	for _, b := range c.Bands {
		col, x := fr.Column(b.Column), make([]float64, m.N)
		for r, i := range m.Rows {
			x[r] = col.Num[i]
		}
		sc.bandValues = append(sc.bandValues, x)
	}
	if audited {
		sc.nonEvents = nonEventText(d.Spec.Outcome, d.NonEvents)
		sc.dates = c.OverTime.column(fr, m.Rows)
		if c.Predicted == nil {
			sc.ranges = outOfRange(spec, fr, m.Rows)
		}
	}
	if c.Predicted != nil {
		if sc.p, err = predictedRisks(fr, c.Predicted.Column, m.Rows, c.Predicted.Percent); err != nil {
			return nil, err
		}
	} else {
		if sc.lp, sc.p, err = d.FrozenScores(m); err != nil {
			return nil, err
		}
	}
	if pv := spec.Provenance; pv != nil && pv.DataSHA256 == sc.hash && sc.hash != "" {
		sc.isDevFit = true
	}
	sc.summary = validate.CohortSummary{Rows: m.Total, Excluded: m.Excluded}
	for _, e := range m.ByColumn {
		sc.summary.ExcludedByColumn = append(sc.summary.ExcludedByColumn, validate.ColumnCount{Column: e.Column, Rows: e.Rows})
	}
	return sc, nil
}

// nonEventText says which values of the outcome were counted as
// non-events when no non-event value was stated and more than one value
// other than the event was present (vc, from model.Design.NonEvents):
// a code for "unknown" or "not recorded" would otherwise pass as a
// non-event without a word. It returns "" for vc empty.
func nonEventText(o model.Outcome, vc []model.ValueCount) string {
	if len(vc) == 0 {
		return ""
	}
	var parts []string
	for i, v := range vc {
		if i == 10 {
			parts = append(parts, fmt.Sprintf("and %d more", len(vc)-10))
			break
		}
		unit := "rows"
		if v.Rows == 1 {
			unit = "row"
		}
		parts = append(parts, fmt.Sprintf("%s (%d %s)", cohort.Quote(v.Value), v.Rows, unit))
	}
	return fmt.Sprintf("The outcome %s has no stated non-event value, so every value other than the event %s was counted as a non-event: %s. If one of them means something else (unknown, not recorded), recode it, or state the non-event value (--non-event, or non_event in the spec) so that any other value is refused.",
		cohort.Quote(o.Column), cohort.Quote(o.Event.Text), strings.Join(parts, ", "))
}

// groupColumn codes a subgroup column's used rows by the rank of their
// level in sorted order (−1 where missing).
func groupColumn(col *cohort.Column, rows []int, n int) validate.GroupColumn {
	gc := validate.GroupColumn{Name: col.Name, Levels: col.SortedLevels(), Codes: make([]int32, n)}
	rank := map[string]int32{}
	for k, l := range gc.Levels {
		rank[l] = int32(k)
	}
	for r, i := range rows {
		if c := col.Codes[i]; c < 0 {
			gc.Codes[r] = -1
		} else {
			gc.Codes[r] = rank[col.Levels[c]]
		}
	}
	return gc
}

// predictedRisks returns the risks in column name of the given frame
// rows, refusing any outside [0, 1] (or, in percent, [0, 100]) with its
// line. Risks in percent are divided by 100.
func predictedRisks(fr *cohort.Frame, name string, rows []int, percent bool) ([]float64, error) {
	col := fr.Column(name)
	p := make([]float64, len(rows))
	top, msg := 1.0, "a predicted risk must lie between 0 and 1"
	if percent {
		top, msg = 100, "a predicted risk in percent must lie between 0 and 100"
	}
	for r, i := range rows {
		v := col.Num[i]
		if !(v >= 0 && v <= top) {
			if !percent && v > 1 && v <= 100 {
				msg += " (if the column holds percentages, say so with --predicted-percent)"
			}
			return nil, &cohort.Error{File: fr.File, Line: fr.Line(i), Row: fr.RowNumbered, Cell: fr.CellRef(fr.Line(i), name), Column: name,
				Value: strconv.FormatFloat(v, 'g', -1, 64), HasValue: true, Msg: msg, Kind: cohort.ErrDomain}
		}
		if percent {
			v /= 100
		}
		p[r] = v
	}
	return p, nil
}

// assess measures a scored dataset; a cohort the measures cannot use
// (a risk out of range, one outcome only) is bad input in that file.
func assess(sc *scored, opt validate.Options) (*validate.Performance, error) {
	perf, err := validate.AssessLogits(sc.y, sc.p, sc.lp, opt)
	if err != nil {
		kind := cohort.ErrOutcome
		if errors.As(err, new(*validate.RiskError)) {
			kind = cohort.ErrDomain
		}
		return nil, &cohort.Error{File: sc.file, Msg: err.Error(), Kind: kind, Err: err}
	}
	c := &perf.Cohort
	c.Rows, c.Excluded, c.ExcludedByColumn = sc.summary.Rows, sc.summary.Excluded, sc.summary.ExcludedByColumn
	return perf, nil
}
