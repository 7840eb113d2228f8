package audit

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"slices"
	"time"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/model"
)

// FitConfig names a recipe to fit on development data and freeze.
type FitConfig struct {
	// Model is the recipe's path (YAML); Spec, when not nil, is that
	// recipe already read, and Model then only names it. A frozen model
	// is refitted as a recipe of the same terms.
	Model string
	Spec  *model.Spec
	// Reduced, when set, is a recipe nested in Model: the two are
	// compared by likelihood ratio and AIC on the same rows.
	Reduced string
	// Data is the development data.
	Data Input
	// Read and FailOnMissing say how to read the data, as in Config.
	Read          cohort.Options
	FailOnMissing bool
	// Firth fits Firth's penalised likelihood; HLGroups is the number of
	// Hosmer–Lemeshow groups (0: 10).
	Firth    bool
	HLGroups int
	// Tool names the program for the frozen model's provenance; Clock
	// gives its time (nil: now, UTC).
	Tool  string
	Clock func() time.Time
}

// FitResult is a fitted and frozen recipe.
type FitResult struct {
	// Fitted is the fit; Frozen the frozen model with its provenance;
	// Report its statistics as 'riskaudit fit --json' writes them.
	Fitted *model.Fitted
	Frozen *model.Spec
	Report *model.FitReport
	// Refitted says that Model was a frozen model whose terms were
	// refitted as a recipe.
	Refitted bool
}

// Fit reads the development data, fits the recipe on its complete cases
// (and the reduced recipe, when given, on the same rows), and freezes
// it with its provenance (the data's SHA-256, the rows used, the time,
// the tool). A failed fit is the model package's error (such as a
// *model.SeparationError).
func Fit(ctx context.Context, cfg FitConfig) (*FitResult, error) {
	cfg.Data = cfg.Data.named()
	spec, err := specOf(cfg.Spec, cfg.Model)
	if err != nil {
		return nil, err
	}
	var reduced *model.Spec
	if cfg.Reduced != "" {
		if reduced, err = model.LoadSpec(cfg.Reduced); err != nil {
			return nil, err
		}
	}
	reqs := fitRequests(spec, reduced)
	fr, hash, err := load(ctx, cfg.Data, reqs, cfg.Read)
	if err != nil {
		return nil, err
	}
	return fitFrame(spec, reduced, fr, hash, cfg, false)
}

// fitRequests are the columns the recipe and the reduced recipe read.
func fitRequests(spec, reduced *model.Spec) []cohort.Request {
	reqs := spec.Columns(true)
	if reduced != nil {
		for _, q := range reduced.Columns(true) {
			if !slices.Contains(reqs, q) {
				reqs = append(reqs, q)
			}
		}
	}
	return reqs
}

// fitFrame fits spec (a frozen model's terms as a recipe) and the
// reduced recipe on the rows of fr complete for both; with wrap, a
// failed fit says what was being fitted on what.
func fitFrame(spec, reduced *model.Spec, fr *cohort.Frame, hash string, cfg FitConfig, wrap bool) (*FitResult, error) {
	r := &FitResult{}
	if spec.Frozen() {
		spec, r.Refitted = spec.AsRecipe(), true
	}
	if reduced != nil && reduced.Frozen() {
		reduced = reduced.AsRecipe()
	}
	var also []string
	for _, q := range fitRequests(spec, reduced) {
		also = append(also, q.Name)
	}
	mopt := model.Options{Outcome: true, FailOnMissing: cfg.FailOnMissing, Also: also}
	fopt := model.FitOptions{Firth: cfg.Firth, HLGroups: cfg.HLGroups}
	d, m, err := model.Build(spec, fr, mopt)
	if err != nil {
		return nil, err
	}
	if r.Fitted, err = model.Fit(d, m, fopt); err != nil {
		if wrap {
			return nil, fmt.Errorf("fitting %s on %s: %w", cfg.Model, cfg.Data.Path, err)
		}
		return nil, err
	}
	st := r.Fitted.Stats
	r.Report = &model.FitReport{Schema: model.FitSchema, Model: spec.Name, DataFile: cfg.Data.Path, DataSHA256: hash, FitStats: st}
	if reduced != nil {
		d2, m2, err := model.Build(reduced, fr, mopt)
		if err != nil {
			return nil, err
		}
		red, err := model.Fit(d2, m2, fopt)
		if err != nil {
			return nil, fmt.Errorf("the reduced model %s: %w", cfg.Reduced, err)
		}
		if r.Report.Nested, err = model.CompareNested(r.Fitted, red); err != nil {
			return nil, &model.SpecError{File: cfg.Reduced, Msg: err.Error(), Kind: model.ErrNotNested, Err: err}
		}
	}
	r.Frozen = r.Fitted.Freeze(model.Provenance{
		Method: st.Method, DataFile: cfg.Data.Path, DataSHA256: hash, RowsUsed: m.N, Events: st.Events,
		FittedAt: now(cfg.Clock).Format(timeFormat), ToolVersion: cfg.Tool, RecipeFile: cfg.Model,
	})
	return r, nil
}

// timeFormat is how times are written in provenance: UTC, to the second.
const timeFormat = "2006-01-02T15:04:05Z"

// specOf returns spec, or the spec read from path.
func specOf(spec *model.Spec, path string) (*model.Spec, error) {
	if spec != nil {
		return spec, nil
	}
	return model.LoadSpec(path)
}

// loadSpecHashed reads the spec at path once and returns it with the
// hex SHA-256 of the bytes it was read from, so that a spec given as a
// stream (a named pipe, a process substitution) is hashed as read
// rather than opened a second time.
func loadSpecHashed(path string) (*model.Spec, string, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		msg := err.Error()
		var pe *fs.PathError
		if errors.As(err, &pe) {
			msg = pe.Err.Error()
		}
		return nil, "", &model.SpecError{File: path, Msg: "cannot read file: " + msg, Kind: model.ErrSpecRead, Err: err}
	}
	spec, err := model.ParseSpec(path, data)
	if err != nil {
		return nil, "", err
	}
	sum := sha256.Sum256(data)
	return spec, hex.EncodeToString(sum[:]), nil
}

// LoadFrozen reads the frozen model at path, refusing a recipe with a
// *model.SpecError.
func LoadFrozen(path string) (*model.Spec, error) {
	spec, err := model.LoadSpec(path)
	if err != nil {
		return nil, err
	}
	if !spec.Frozen() {
		return nil, &model.SpecError{File: path, Msg: "this is a recipe (it has no intercept): fit it first with 'riskaudit fit'", Kind: model.ErrNotFrozen}
	}
	return spec, nil
}

// ScoreConfig names a frozen model and the data it scores; the outcome
// is not needed.
type ScoreConfig struct {
	// Model is the frozen model's path; Spec, when not nil, is that
	// model already read.
	Model string
	Spec  *model.Spec
	// Data is the data to score; Read and FailOnMissing say how to read
	// it, as in Config.
	Data          Input
	Read          cohort.Options
	FailOnMissing bool
}

// Scores are a frozen model's linear predictors for the rows of some
// data.
type Scores struct {
	// Frame is the data as read.
	Frame *cohort.Frame
	// LP holds the linear predictor of every row of Frame, NaN where a
	// value the model needs is missing.
	LP []float64
	// Scored counts the rows scored; Excluded those left out, and
	// ByColumn the missing values behind them.
	Scored, Excluded int
	ByColumn         []model.Exclusion
}

// Score reads the data and computes the frozen model's linear predictor
// for every row complete in the model's columns.
func Score(ctx context.Context, cfg ScoreConfig) (*Scores, error) {
	spec := cfg.Spec
	if spec == nil {
		var err error
		if spec, err = LoadFrozen(cfg.Model); err != nil {
			return nil, err
		}
	}
	fr, err := frameOf(ctx, cfg.Data, spec.Columns(false), cfg.Read)
	if err != nil {
		return nil, err
	}
	d, m, err := model.Build(spec, fr, model.Options{FailOnMissing: cfg.FailOnMissing, NoMatrix: true})
	if err != nil {
		return nil, err
	}
	scored, err := d.FrozenLinearPredictors(m)
	if err != nil {
		return nil, err
	}
	lp := make([]float64, fr.Rows)
	for i := range lp {
		lp[i] = math.NaN()
	}
	for r, v := range scored {
		lp[m.Rows[r]] = v
	}
	return &Scores{Frame: fr, LP: lp, Scored: m.N, Excluded: m.Excluded, ByColumn: m.ByColumn}, nil
}

// WriteFit writes the frozen model (YAML) to path and the fit statistics
// as JSON to jsonPath, all or nothing; an empty path skips that file, so
// with both empty it writes nothing.
func WriteFit(path, jsonPath string, r *FitResult) error {
	yml, err := r.Frozen.MarshalYAML()
	if err != nil {
		return fmt.Errorf("writing the frozen model: %w", err)
	}
	var files []atomicfile.File
	if jsonPath != "" {
		b, err := jsonout.Marshal(r.Report)
		if err != nil {
			return fmt.Errorf("writing %s: %w", jsonPath, err)
		}
		files = append(files, atomicfile.File{Path: jsonPath, Data: b})
	}
	if path != "" {
		files = append(files, atomicfile.File{Path: path, Data: yml})
	}
	if len(files) == 0 {
		return nil
	}
	return atomicfile.WriteAll("", files)
}

// The columns a scored file gains.
const (
	LPColumn   = "ra_linear_predictor"
	RiskColumn = "ra_predicted_risk"
)

// File returns the scored data as a file of the input's format
// ("csv", "parquet", "arrow" or "xlsx", as cohort.Format names it):
// every row and column as read, followed by LPColumn and RiskColumn,
// empty (or null) where a row was not scored; a workbook keeps every
// sheet and cell and gains the two columns on the sheet read. A delimited-text input must have
// been read with Options.KeepRecords; a columnar one is read again from
// path. A file that already has either column is refused.
func (s *Scores) File(path, format string, decimalComma bool) ([]byte, error) {
	for _, name := range []string{LPColumn, RiskColumn} {
		if slices.Contains(s.Frame.Header, name) {
			return nil, &cohort.Error{File: path, Line: s.Frame.HeaderRow(), Cell: s.Frame.CellRef(s.Frame.HeaderRow(), name), Column: name, Msg: "the file already has this column, which score would append; rename it or score the original extract", Kind: cohort.ErrDuplicateColumn}
		}
	}
	names, values := []string{LPColumn, RiskColumn}, [][]float64{s.LP, model.Risks(s.LP)}
	switch format {
	case "csv":
		return s.Frame.AppendCSV(names, values, decimalComma), nil
	case "xlsx":
		return s.Frame.AppendWorkbook(names, values)
	}
	return cohort.AppendColumns(path, format, names, values)
}

// WorkbookText returns the scored sheet of a workbook as delimited text
// (delim a comma or a tab): the header and every row read, each cell as
// text, followed by LPColumn and RiskColumn (see
// cohort.Frame.WorkbookCSV). A sheet that already has either column is
// refused.
func (s *Scores) WorkbookText(delim byte) ([]byte, error) {
	for _, name := range []string{LPColumn, RiskColumn} {
		if slices.Contains(s.Frame.Header, name) {
			return nil, &cohort.Error{File: s.Frame.File, Cell: s.Frame.CellRef(s.Frame.HeaderRow(), name), Column: name, Msg: "the file already has this column, which score would append; rename it or score the original extract", Kind: cohort.ErrDuplicateColumn}
		}
	}
	return s.Frame.WorkbookCSV([]string{LPColumn, RiskColumn}, [][]float64{s.LP, model.Risks(s.LP)}, delim)
}
