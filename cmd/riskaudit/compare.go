package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strconv"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/plots"
	"github.com/riskaudit/riskaudit/report"
	"github.com/riskaudit/riskaudit/resample"
)

type compareOptions struct {
	data       dataFlags
	models     []string
	predicted  string
	cohortFile string
	out        string
	thresholds string
	bootstrap  int
	seed       uint64
	quiet      bool
}

func newCompareCmd(s *streams) *cobra.Command {
	o := &compareOptions{}
	c := &cobra.Command{
		Use:   "compare --model A.yaml (--model B.yaml | --predicted COLUMN) --cohort FILE --out DIR",
		Short: "Compare two models on one cohort: paired DeLong test, Brier difference, decision curves",
		Long: `Compare two frozen models (or a frozen model and a column of predicted
risks) on the same patients of one cohort: the rows complete for both.
Writes DIR/compare.md, DIR/compare.json and DIR/decision_curves.svg with:

  the paired DeLong test of the two correlated AUCs (DeLong, DeLong &
  Clarke-Pearson 1988): difference a − b, its SE, 95% CI, z and p;
  the Brier score difference with a bootstrap percentile interval;
  both decision curves, with treat-everyone and treat-no-one.`,
		Example: `  riskaudit compare --model current.yaml --model proposed.yaml --cohort new.csv --out compare
  riskaudit compare --model current.yaml --predicted vendor_risk --cohort new.csv --out compare`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error { return runCompare(o, s) },
	}
	f := c.Flags()
	f.StringArrayVar(&o.models, "model", nil, "a frozen model (give twice, or once with --predicted)")
	f.StringVar(&o.predicted, "predicted", "", "a column of predicted risks to compare with the model")
	f.StringVar(&o.cohortFile, "cohort", "", "the cohort (CSV or TSV with a header row, Parquet, or Arrow IPC)")
	f.StringVar(&o.out, "out", "", "output folder")
	f.StringVar(&o.thresholds, "thresholds", "0.05:0.50:0.05", "decision-curve thresholds: FROM:TO:STEP or a list")
	f.IntVar(&o.bootstrap, "bootstrap", 1000, "replicates for the Brier difference interval")
	f.Uint64Var(&o.seed, "seed", 1, "seed of the bootstrap")
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing on success")
	o.data.register(f)
	_ = c.MarkFlagRequired("cohort")
	_ = c.MarkFlagRequired("out")
	return c
}

// comparison is compare.json.
type comparison struct {
	Schema     string               `json:"schema"`
	ModelA     string               `json:"model_a"`
	ModelB     string               `json:"model_b"`
	Cohort     string               `json:"cohort"`
	CohortSHA  string               `json:"cohort_sha256"`
	Rows       int                  `json:"rows"`
	Used       int                  `json:"used"`
	Events     int                  `json:"events"`
	DeLong     metrics.PairedDeLong `json:"delong"`
	Brier      brierComparison      `json:"brier"`
	NetBenefit []netBenefitPair     `json:"net_benefit"`
	Tool       string               `json:"tool"`
	Command    string               `json:"command_line"`
	Caution    string               `json:"caution"`
}

type brierComparison struct {
	A            float64    `json:"a"`
	B            float64    `json:"b"`
	Difference   float64    `json:"difference"`
	DifferenceCI [2]float64 `json:"difference_ci"`
	Replicates   int        `json:"replicates"`
	Seed         uint64     `json:"seed"`
}

type netBenefitPair struct {
	Threshold float64 `json:"threshold"`
	A         float64 `json:"a"`
	B         float64 `json:"b"`
	TreatAll  float64 `json:"treat_all"`
}

func runCompare(o *compareOptions, s *streams) error {
	if !(len(o.models) == 2 && o.predicted == "" || len(o.models) == 1 && o.predicted != "") {
		return usagef("give --model twice, or --model once and --predicted")
	}
	if o.bootstrap < 100 {
		return usagef("--bootstrap %d: give at least 100 replicates", o.bootstrap)
	}
	ts, err := parseThresholds(o.thresholds)
	if err != nil {
		return err
	}
	if st, err := os.Stat(o.out); err == nil && !st.IsDir() {
		return usagef("--out %s is a file, not a folder", o.out)
	}
	copt, fail, err := o.data.options()
	if err != nil {
		return err
	}
	var specs []*model.Spec
	for _, m := range o.models {
		sp, err := model.LoadSpec(m)
		if err != nil {
			return err
		}
		if !sp.Frozen() {
			return &model.SpecError{File: m, Msg: "compare needs frozen models; fit this recipe first"}
		}
		specs = append(specs, sp)
	}
	if len(specs) == 2 && (specs[0].Outcome.Column != specs[1].Outcome.Column || specs[0].Outcome.Event.Text != specs[1].Outcome.Event.Text) {
		return &model.SpecError{File: o.models[1], Msg: "the two models have different outcomes"}
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
	if o.predicted != "" {
		reqs = append(reqs, cohort.Request{Name: o.predicted, Kind: cohort.Numeric, NaNIsError: true})
	}
	fr, err := cohort.Load(o.cohortFile, reqs, copt)
	if err != nil {
		return err
	}
	var also []string
	for _, q := range reqs {
		also = append(also, q.Name)
	}
	var risks [][]float64
	var y []float64
	var used, events int
	for _, sp := range specs {
		d, m, err := model.Build(sp, fr, model.Options{Outcome: true, FailOnMissing: fail, Also: also, NoMatrix: true})
		if err != nil {
			return err
		}
		lp, err := d.FrozenLinearPredictors(m)
		if err != nil {
			return err
		}
		p := make([]float64, len(lp))
		for i, v := range lp {
			p[i] = model.Risk(v)
		}
		risks = append(risks, p)
		if y == nil {
			y, used, events = m.Y, m.N, m.Events()
			if o.predicted != "" {
				col := fr.Column(o.predicted)
				q := make([]float64, m.N)
				for r, i := range m.Rows {
					v := col.Num[i]
					if !(v >= 0 && v <= 1) {
						return &cohort.Error{File: o.cohortFile, Line: fr.Line(i), Row: fr.RowNumbered, Column: o.predicted, Value: strconv.FormatFloat(v, 'g', -1, 64), HasValue: true, Msg: "a predicted risk must lie between 0 and 1"}
					}
					q[r] = v
				}
				risks = append(risks, q)
			}
		}
	}
	if events == 0 || events == used {
		return &cohort.Error{File: o.cohortFile, Msg: "the complete rows have only one outcome; both are needed"}
	}
	hash, err := fileSHA256(o.cohortFile)
	if err != nil {
		return err
	}
	nameOf := func(i int) string {
		if i < len(specs) && specs[i].Name != "" {
			return specs[i].Name
		}
		if i < len(o.models) {
			return filepath.Base(o.models[i])
		}
		return "column " + o.predicted
	}
	cmp := comparison{Schema: "riskaudit.compare/1", ModelA: nameOf(0), ModelB: nameOf(1), Cohort: o.cohortFile, CohortSHA: hash,
		Rows: fr.Rows, Used: used, Events: events, Tool: "riskaudit " + toolVersion(), Command: s.commandLine(),
		Caution: "This comparison is statistical evidence. Whether to replace a model belongs to the organisation's clinical governance, under the local regulation that applies to clinical software."}
	cmp.DeLong = metrics.DeLongPaired(y, risks[0], risks[1])
	ba, _ := metrics.Brier(y, risks[0])
	bb, _ := metrics.Brier(y, risks[1])
	cmp.Brier = brierComparison{A: ba, B: bb, Difference: ba - bb, Replicates: o.bootstrap, Seed: o.seed,
		DifferenceCI: resample.BrierDifferenceCI(y, risks[0], risks[1], o.bootstrap, o.seed)}
	na, nb := metrics.NetBenefits(metrics.SortByRisk(y, risks[0]), ts), metrics.NetBenefits(metrics.SortByRisk(y, risks[1]), ts)
	for i := range na {
		cmp.NetBenefit = append(cmp.NetBenefit, netBenefitPair{Threshold: na[i].Threshold, A: na[i].Model, B: nb[i].Model, TreatAll: na[i].TreatAll})
	}
	fig, err := plots.CompareDecision(cmp.ModelA, cmp.ModelB, na, nb)
	if err != nil {
		return err
	}
	js, err := jsonout.Marshal(cmp)
	if err != nil {
		return err
	}
	var md bytes.Buffer
	writeCompareReport(&md, &cmp, fig.Name)
	if err := os.MkdirAll(o.out, 0o755); err != nil {
		return fmt.Errorf("cannot create %s: %w", o.out, err)
	}
	var set atomicfile.Set
	defer set.Abort()
	for _, f := range []outFile{{filepath.Join(o.out, fig.Name), fig.SVG}, {filepath.Join(o.out, "compare.json"), js}, {filepath.Join(o.out, "compare.md"), md.Bytes()}} {
		if err := set.Add(f.path, f.data); err != nil {
			return err
		}
	}
	if err := set.Commit(); err != nil {
		return err
	}
	if !o.quiet {
		d := cmp.DeLong
		fmt.Fprintf(s.out, "Compared %s (a) with %s (b) on %d patients of %s\n", cmp.ModelA, cmp.ModelB, used, o.cohortFile)
		fmt.Fprintf(s.out, "  AUC a %.3f, b %.3f; difference %.4f (95%% CI %.4f to %.4f), z %.2f, p %s\n", d.AUCA, d.AUCB, d.Difference, d.DifferenceCI[0], d.DifferenceCI[1], d.Z, fmtP(d.P))
		fmt.Fprintf(s.out, "  Brier a %.4f, b %.4f; difference %.4f (95%% CI %.4f to %.4f)\n", ba, bb, ba-bb, cmp.Brier.DifferenceCI[0], cmp.Brier.DifferenceCI[1])
		fmt.Fprintf(s.out, "Wrote %s\n", filepath.Join(o.out, "compare.md"))
	}
	return nil
}

func writeCompareReport(w *bytes.Buffer, c *comparison, fig string) {
	esc := report.Escape
	d := c.DeLong
	fmt.Fprintf(w, "# Model comparison: %s against %s\n\n", esc(c.ModelA), esc(c.ModelB))
	fmt.Fprintf(w, "On the %d patients of %s with every value both models need (%d events). Made by %s.\n\n", c.Used, esc(c.Cohort), c.Events, c.Tool)
	better := "a"
	if d.Difference < 0 {
		better = "b"
	}
	verdict := fmt.Sprintf("The AUCs differ by %.4f (a − b; 95%% CI %.4f to %.4f; z = %.2f, p %s): ", d.Difference, d.DifferenceCI[0], d.DifferenceCI[1], d.Z, fmtP(d.P))
	if d.DifferenceCI[0] > 0 || d.DifferenceCI[1] < 0 {
		verdict += fmt.Sprintf("model %s discriminates better, beyond chance.", better)
	} else {
		verdict += "no evidence that either discriminates better."
	}
	fmt.Fprintf(w, "## Discrimination\n\n%s\n\n", verdict)
	fmt.Fprintf(w, "| | AUC |\n|---|---|\n| a: %s | %.4f |\n| b: %s | %.4f |\n\n", esc(c.ModelA), d.AUCA, esc(c.ModelB), d.AUCB)
	fmt.Fprintf(w, "Paired DeLong test (DeLong, DeLong & Clarke-Pearson 1988): the variance of the difference uses the covariance of the two models' structural components over the same patients (correlation of the two AUCs %.3f).\n\n", d.Correlation)
	b := c.Brier
	fmt.Fprintf(w, "## Overall accuracy\n\nBrier score a %.4f, b %.4f; difference a − b %.4f, 95%% bootstrap percentile interval %.4f to %.4f (%d replicates, seed %d). A negative difference favours a.\n\n",
		b.A, b.B, b.Difference, b.DifferenceCI[0], b.DifferenceCI[1], b.Replicates, b.Seed)
	fmt.Fprintf(w, "## Clinical usefulness\n\n| threshold | net benefit a | net benefit b | treat everyone |\n|---|---|---|---|\n")
	for _, nb := range c.NetBenefit {
		fmt.Fprintf(w, "| %.1f%% | %.4f | %.4f | %.4f |\n", 100*nb.Threshold, nb.A, nb.B, nb.TreatAll)
	}
	fmt.Fprintf(w, "\n![Decision curves of both models](%s)\n\n## Caution\n\n%s\n", fig, c.Caution)
}
