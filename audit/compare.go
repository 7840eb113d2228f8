package audit

import (
	"bytes"
	"context"
	"errors"
	"path/filepath"
	"slices"
	"time"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/report"
	"github.com/riskaudit/riskaudit/validate"
)

// CompareConfig names two models to compare on one cohort: two frozen
// models, or one and a column of risks some other model predicted.
type CompareConfig struct {
	// Models are one or two frozen models (YAML); with one, Predicted
	// names the column of the other model's risks.
	Models    []string
	Predicted string
	// PredictedPercent says that Predicted holds risks in percent.
	PredictedPercent bool
	// Outcome, when it names anything, says how the cohort codes the
	// models' outcome, as Config.Outcome does for an audit: both models
	// are read with it (they name the same outcome).
	Outcome *CohortOutcome
	// Cohort is the data; Read and FailOnMissing say how to read it, as
	// in Config.
	Cohort        Input
	Read          cohort.Options
	FailOnMissing bool
	// Measures are the decision curves' thresholds and the bootstrap of
	// the Brier difference.
	Measures validate.CompareOptions
	// Tool and CommandLine record how the comparison was made; Clock
	// gives the time (nil: now, UTC).
	Tool, CommandLine string
	Clock             func() time.Time
	// AuditDate, AuditDateSource and RenameSources are recorded in the
	// provenance as Config's are.
	AuditDate, AuditDateSource string
	RenameSources              map[string]string
}

// CompareResult is a finished comparison and its figure.
type CompareResult struct {
	Comparison *validate.Comparison
	Figure     plots.Figure
	// Inputs are the models' and the cohort's paths, which no output may
	// overwrite.
	Inputs []string
	// Made is when the comparison was made, by the config's clock.
	Made time.Time
}

// Compare scores the cohort's rows complete for both models and compares
// the two models on them (validate.Compare). Errors are as for Run; a
// cohort whose complete rows have one outcome only is a *cohort.Error
// wrapping a *validate.OutcomesError.
func Compare(ctx context.Context, cfg CompareConfig) (*CompareResult, error) {
	if !(len(cfg.Models) == 2 && cfg.Predicted == "" || len(cfg.Models) == 1 && cfg.Predicted != "") {
		return nil, configErrorf("give --model twice, or --model once and --predicted")
	}
	if cfg.AuditDate != "" {
		if err := CheckAuditDate(cfg.AuditDate); err != nil {
			return nil, err
		}
	}
	made := now(cfg.Clock)
	var specs []*model.Spec
	var inputs []validate.InputFile
	for i, m := range cfg.Models {
		sp, sum, err := loadSpecHashed(m)
		if err != nil {
			return nil, err
		}
		inputs = append(inputs, validate.InputFile{Role: "model " + string(rune('a'+i)), Path: m, SHA256: sum})
		if !sp.Frozen() {
			return nil, &model.SpecError{File: m, Msg: "compare needs frozen models; fit this recipe first", Kind: model.ErrNotFrozen}
		}
		specs = append(specs, sp)
	}
	if len(specs) == 2 && (specs[0].Outcome.Column != specs[1].Outcome.Column || specs[0].Outcome.Event.Text != specs[1].Outcome.Event.Text) {
		return nil, &model.SpecError{File: cfg.Models[1], Msg: "the two models have different outcomes", Kind: model.ErrConflict}
	}
	var coding *validate.CohortOutcome
	if cfg.Outcome.given() {
		if err := cfg.Outcome.check(); err != nil {
			return nil, err
		}
		own := specs[0]
		for i, sp := range specs {
			r, err := recoded(sp, cfg.Outcome)
			if err != nil {
				return nil, err
			}
			specs[i] = r
		}
		coding = outcomeInfo(own, specs[0])
	}
	var reqs []cohort.Request
	seen := map[string]bool{}
	for _, sp := range specs {
		for _, q := range sp.Columns(true) {
			if !seen[q.Name] {
				seen[q.Name] = true
				reqs = append(reqs, q)
			}
		}
	}
	if cfg.Predicted != "" {
		reqs = append(reqs, cohort.Request{Name: cfg.Predicted, Kind: cohort.Numeric, NaNIsError: true, For: "the predicted risks"})
	}
	fr, hash, err := load(ctx, cfg.Cohort, reqs, cfg.Read)
	if err != nil {
		return nil, err
	}
	y, risks, lps, err := scoreBoth(fr, specs, reqs, cfg)
	if err != nil {
		return nil, err
	}
	cmp, err := validate.CompareLogits(ctx, y, risks[0], risks[1], lps[0], lps[1], cfg.Measures)
	if err != nil {
		if errors.Is(err, validate.ErrOneOutcome) {
			return nil, &cohort.Error{File: cfg.Cohort.Path, Msg: "the complete rows have only one outcome; both are needed", Kind: cohort.ErrOutcome, Err: err}
		}
		return nil, err
	}
	nameOf := func(i int) string {
		if i < len(specs) && specs[i].Name != "" {
			return specs[i].Name
		}
		if i < len(cfg.Models) {
			return filepath.Base(cfg.Models[i])
		}
		return "column " + cfg.Predicted
	}
	cmp.ModelA, cmp.ModelB, cmp.Cohort, cmp.CohortSHA, cmp.Rows = nameOf(0), nameOf(1), cfg.Cohort.Path, hash, fr.Rows
	cmp.CohortOutcome = coding
	cmp.Tool, cmp.Command = cfg.Tool, cfg.CommandLine
	pv := validate.Provenance{Tool: cfg.Tool, CommandLine: cfg.CommandLine, StartedAt: made.Format(timeFormat),
		Inputs: append(inputs, validate.InputFile{Role: "cohort", Path: cfg.Cohort.Path, Sheet: fr.Sheet, SHA256: hash, Query: fr.Query})}
	pv.AuditDate, pv.AuditDateSource = auditDate(cfg.AuditDate, cfg.AuditDateSource, made)
	pv.Renames = renames(cfg.Read.Rename, cfg.RenameSources, []readFile{{"cohort", fr.Renamed}})
	cmp.Provenance = pv
	fig, err := plots.CompareDecision(cmp)
	if err != nil {
		return nil, err
	}
	return &CompareResult{Comparison: cmp, Figure: fig, Inputs: append(slices.Clone(cfg.Models), cfg.Cohort.Path), Made: made}, nil
}

// scoreBoth returns the outcomes and both models' risks and linear
// predictors (nil for a column of risks) on the rows complete for every
// column either needs.
func scoreBoth(fr *cohort.Frame, specs []*model.Spec, reqs []cohort.Request, cfg CompareConfig) ([]float64, [][]float64, [][]float64, error) {
	var also []string
	for _, q := range reqs {
		also = append(also, q.Name)
	}
	var risks, lps [][]float64
	var y []float64
	for _, sp := range specs {
		d, m, err := model.Build(sp, fr, model.Options{Outcome: true, FailOnMissing: cfg.FailOnMissing, Also: also, NoMatrix: true, CohortCodes: true})
		if err != nil {
			return nil, nil, nil, err
		}
		lp, err := d.FrozenLinearPredictors(m)
		if err != nil {
			return nil, nil, nil, err
		}
		risks, lps = append(risks, model.Risks(lp)), append(lps, lp)
		if y == nil {
			y = m.Y
			if cfg.Predicted != "" {
				q, err := predictedRisks(fr, cfg.Predicted, m.Rows, cfg.PredictedPercent)
				if err != nil {
					return nil, nil, nil, err
				}
				risks, lps = append(risks, q), append(lps, nil)
			}
		}
	}
	return y, risks, lps, nil
}

// WriteComparison writes compare.md, compare.json and the decision
// curves into dir (created if absent), whole and all or nothing, with
// the rules of Write.
func WriteComparison(dir string, c *CompareResult) (*Written, error) {
	var md bytes.Buffer
	if err := report.WriteComparison(&md, c.Comparison, c.Figure.Name); err != nil {
		return nil, err
	}
	page, err := htmlPage("compare.html", md.Bytes(), []plots.Figure{c.Figure})
	if err != nil {
		return nil, err
	}
	files := []atomicfile.File{{Path: "compare.md", Data: md.Bytes()}, page, {Path: c.Figure.Name, Data: c.Figure.SVG}, {Path: c.Figure.PNGName(), Data: c.Figure.PNG}}
	// compare.json lists the folder's files, itself included.
	cmp := *c.Comparison
	cmp.Outputs = []string{"compare.json"}
	for _, f := range files {
		cmp.Outputs = append(cmp.Outputs, f.Path)
	}
	js, err := jsonout.Marshal(&cmp)
	if err != nil {
		return nil, err
	}
	files = append(files, atomicfile.File{Path: "compare.json", Data: js})
	return (&folderWrite{dir: dir, kind: "comparison", written: c.Made, inputs: c.Inputs, files: files}).write()
}
