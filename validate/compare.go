package validate

import (
	"context"
	"fmt"
	"strings"

	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/resample"
)

// CompareSchema names the layout of compare.json.
const CompareSchema = "riskaudit.compare/1"

// TrendCaution is the statement every trend of a history store carries.
const TrendCaution = "This trend is statistical evidence about the model's performance in the audits stored here. " +
	"It is not a clinical decision: whether to keep, recalibrate, update or withdraw the model belongs to the " +
	"organisation's clinical governance, under the local regulation that applies to clinical software."

// CompareCaution is the statement every comparison carries.
const CompareCaution = "This comparison is statistical evidence. Whether to replace a model belongs to the organisation's clinical governance, under the local regulation that applies to clinical software."

// Comparison is two models' risks measured on the same patients: the
// paired DeLong test of their AUCs, their Brier scores and difference,
// and both decision curves. It is written as compare.json; the JSON keys
// are a stable interface.
type Comparison struct {
	Schema string `json:"schema"`
	// ModelA and ModelB name the two models; Cohort and CohortSHA the
	// data, Rows its rows, Used the rows complete for both models and
	// Events their events.
	ModelA    string `json:"model_a"`
	ModelB    string `json:"model_b"`
	Cohort    string `json:"cohort"`
	CohortSHA string `json:"cohort_sha256"`
	Rows      int    `json:"rows"`
	Used      int    `json:"used"`
	Events    int    `json:"events"`
	// CohortOutcome is how the cohort coded the models' outcome when the
	// comparison was told it codes it otherwise (compare --outcome,
	// --event, --non-event); nil when it uses the models' own codes.
	CohortOutcome *CohortOutcome       `json:"cohort_outcome,omitempty"`
	DeLong        metrics.PairedDeLong `json:"delong"`
	Brier         BrierComparison      `json:"brier"`
	NetBenefit    []NetBenefitPair     `json:"net_benefit"`
	// Calibration is both models' calibration on the same patients.
	Calibration CalibrationPair `json:"calibration"`
	// Tool and Command record how the comparison was made (kept beside
	// Provenance, which holds them too).
	Tool    string `json:"tool"`
	Command string `json:"command_line"`
	// Provenance records the comparison as an audit's provenance does:
	// tool, command line, when, the date, and every model file and the
	// cohort with their SHA-256.
	Provenance Provenance `json:"provenance"`
	Caution    string     `json:"caution"`
	// Outputs are the files of the comparison folder (names relative to
	// it, compare.json included), filled in when the folder is written.
	Outputs []string `json:"outputs,omitempty"`
}

// CalibrationPair is the calibration of both models, measured as an
// audit measures one model (the same functions and defaults, so each
// equals the single model's audit of the same rows).
type CalibrationPair struct {
	A ModelCalibration `json:"a"`
	B ModelCalibration `json:"b"`
	// Replicates and Seed drive the ICI's bootstrap percentile interval
	// (those of the Brier difference), in which the smooth uses LOWESS δ
	// = ICIDelta of the risk range, as an audit's --ci-bootstrap does.
	Replicates int     `json:"ici_replicates"`
	Seed       uint64  `json:"seed"`
	ICIDelta   float64 `json:"ici_delta_share"`
}

// ModelCalibration is one model's calibration: calibration-in-the-large
// and slope with Wald intervals, O/E with its interval, and the ICI with
// a bootstrap percentile interval.
type ModelCalibration struct {
	CITL     float64    `json:"citl"`
	CITLCI   [2]float64 `json:"citl_ci"`
	Slope    float64    `json:"slope"`
	SlopeCI  [2]float64 `json:"slope_ci"`
	OE       float64    `json:"oe"`
	OECI     [2]float64 `json:"oe_ci"`
	Observed float64    `json:"observed_events"`
	Expected float64    `json:"expected_events"`
	ICI      float64    `json:"ici"`
	ICICI    [2]float64 `json:"ici_ci"`
	// Notes say which measures could not be estimated, and why.
	Notes []string `json:"notes,omitempty"`
}

// BrierComparison is both models' Brier scores and the difference a − b
// with its bootstrap percentile interval.
type BrierComparison struct {
	A            float64    `json:"a"`
	B            float64    `json:"b"`
	Difference   float64    `json:"difference"`
	DifferenceCI [2]float64 `json:"difference_ci"`
	Replicates   int        `json:"replicates"`
	Seed         uint64     `json:"seed"`
}

// NetBenefitPair is both models' net benefit at one risk threshold,
// with treating everyone's.
type NetBenefitPair struct {
	Threshold float64 `json:"threshold"`
	A         float64 `json:"a"`
	B         float64 `json:"b"`
	TreatAll  float64 `json:"treat_all"`
}

// CompareOptions control Compare.
type CompareOptions struct {
	// Thresholds are the decision curves' risk thresholds (default 0.05
	// to 0.50 by 0.05).
	Thresholds []float64
	// Replicates and Seed drive the bootstrap interval of the Brier
	// difference (default 1000 replicates).
	Replicates int
	Seed       uint64
}

// Compare measures risks pa (model a) and pb (model b) against the same
// outcomes y (1 event, 0 non-event): the paired DeLong test of
// AUC(a) − AUC(b) (DeLong, DeLong & Clarke-Pearson 1988, Biometrics
// 44:837–845), the Brier scores with the 95% bootstrap percentile
// interval of their difference, the net benefit of both at every
// threshold (Vickers & Elkin 2006), and both models' calibration as
// AssessLogits measures it, with the ICI's bootstrap percentile interval
// (resample.PercentileIntervals, the same replicates and seed). Only the
// measures are filled in; the caller names the models, the data and the
// tool. Both outcomes must occur. A cancelled ctx stops the bootstrap
// and returns ctx's error.
func Compare(ctx context.Context, y, pa, pb []float64, opt CompareOptions) (*Comparison, error) {
	return CompareLogits(ctx, y, pa, pb, nil, nil, opt)
}

// CompareLogits is Compare for risks that come with their linear
// predictors (la for pa, lb for pb; either may be nil), which the
// calibration fits then use directly, as AssessLogits does.
func CompareLogits(ctx context.Context, y, pa, pb, la, lb []float64, opt CompareOptions) (*Comparison, error) {
	if len(y) != len(pa) || len(y) != len(pb) || la != nil && len(la) != len(y) || lb != nil && len(lb) != len(y) {
		return nil, fmt.Errorf("validate: %d outcomes but %d and %d risks", len(y), len(pa), len(pb))
	}
	if opt.Thresholds == nil {
		opt.Thresholds = DefaultThresholds()
	}
	if opt.Replicates <= 0 {
		opt.Replicates = 1000
	}
	events := 0
	for _, v := range y {
		if v == 1 {
			events++
		}
	}
	if events == 0 || events == len(y) {
		return nil, &OutcomesError{Events: events, Rows: len(y)}
	}
	c := &Comparison{Schema: CompareSchema, Used: len(y), Events: events, Caution: CompareCaution}
	c.DeLong = metrics.DeLongPaired(y, pa, pb)
	ba, _ := metrics.Brier(y, pa)
	bb, _ := metrics.Brier(y, pb)
	ci, err := resample.BrierDifferenceCI(ctx, y, pa, pb, opt.Replicates, opt.Seed)
	if err != nil {
		return nil, err
	}
	c.Brier = BrierComparison{A: ba, B: bb, Difference: ba - bb, DifferenceCI: ci, Replicates: opt.Replicates, Seed: opt.Seed}
	na, nb := metrics.NetBenefits(metrics.SortByRisk(y, pa), opt.Thresholds), metrics.NetBenefits(metrics.SortByRisk(y, pb), opt.Thresholds)
	for i := range na {
		c.NetBenefit = append(c.NetBenefit, NetBenefitPair{Threshold: na[i].Threshold, A: na[i].Model, B: nb[i].Model, TreatAll: na[i].TreatAll})
	}
	c.Calibration = CalibrationPair{Replicates: opt.Replicates, Seed: opt.Seed, ICIDelta: ciDelta}
	if c.Calibration.A, err = modelCalibration(ctx, y, pa, la, opt); err != nil {
		return nil, err
	}
	if c.Calibration.B, err = modelCalibration(ctx, y, pb, lb, opt); err != nil {
		return nil, err
	}
	return c, nil
}

// ciDelta is the LOWESS δ share of the ICI's percentile interval
// (resample.CIOptions' default, as in an audit's --ci-bootstrap).
const ciDelta = 0.1

// modelCalibration measures one model's calibration as an audit with
// the default options does, and the ICI's percentile interval as an
// audit's --ci-bootstrap does.
func modelCalibration(ctx context.Context, y, p, lp []float64, opt CompareOptions) (ModelCalibration, error) {
	perf, err := AssessLogits(y, p, lp, Options{Thresholds: opt.Thresholds})
	if err != nil {
		return ModelCalibration{}, err
	}
	ci, err := resample.PercentileIntervals(ctx, y, p, resample.CIOptions{B: opt.Replicates, Seed: opt.Seed, ICIDelta: ciDelta, Thresholds: opt.Thresholds})
	if err != nil {
		return ModelCalibration{}, err
	}
	k := perf.Calibration
	mc := ModelCalibration{CITL: k.CITL, CITLCI: k.CITLCI, Slope: k.Slope, SlopeCI: k.SlopeCI, OE: k.OE, OECI: k.OECI,
		Observed: k.Observed, Expected: k.Expected, ICI: k.ICI, ICICI: ci.ICI}
	for _, n := range k.Notes {
		if !strings.Contains(n, "Hosmer") { // a test the comparison does not report
			mc.Notes = append(mc.Notes, n)
		}
	}
	return mc, nil
}
