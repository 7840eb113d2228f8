package validate

import (
	"context"
	"fmt"

	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/resample"
)

// CompareSchema names the layout of compare.json.
const CompareSchema = "riskaudit.compare/1"

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
	ModelA     string               `json:"model_a"`
	ModelB     string               `json:"model_b"`
	Cohort     string               `json:"cohort"`
	CohortSHA  string               `json:"cohort_sha256"`
	Rows       int                  `json:"rows"`
	Used       int                  `json:"used"`
	Events     int                  `json:"events"`
	DeLong     metrics.PairedDeLong `json:"delong"`
	Brier      BrierComparison      `json:"brier"`
	NetBenefit []NetBenefitPair     `json:"net_benefit"`
	// Tool and Command record how the comparison was made.
	Tool    string `json:"tool"`
	Command string `json:"command_line"`
	Caution string `json:"caution"`
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
// interval of their difference, and the net benefit of both at every
// threshold (Vickers & Elkin 2006). Only the measures are filled in; the
// caller names the models, the data and the tool. Both outcomes must
// occur. A cancelled ctx stops the bootstrap and returns ctx's error.
func Compare(ctx context.Context, y, pa, pb []float64, opt CompareOptions) (*Comparison, error) {
	if len(y) != len(pa) || len(y) != len(pb) {
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
	return c, nil
}
