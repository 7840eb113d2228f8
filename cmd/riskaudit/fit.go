package main

import (
	"encoding/json"
	"fmt"
	"slices"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/model"
)

type fitOptions struct {
	data     dataFlags
	model    string
	dataFile string
	out      string
	jsonOut  string
	reduced  string
	firth    bool
	hlGroups int
	quiet    bool
}

const fitExample = `  # Fit a recipe on a development extract and freeze it
  riskaudit fit --model recipe.yaml --data dev.csv --out frozen.yaml

  # The same, with the statistics as JSON for other tools
  riskaudit fit --model recipe.yaml --data dev.csv --out frozen.yaml --json fit.json

  # Test whether the terms of recipe.yaml add to those of reduced.yaml
  # (likelihood-ratio test and AIC difference on the same rows)
  riskaudit fit --model recipe.yaml --reduced reduced.yaml --data dev.csv --out frozen.yaml

  # A semicolon-separated extract with decimal commas, refusing missing values
  riskaudit fit --model recipe.yaml --data dev.csv --decimal-comma --missing fail --out frozen.yaml`

func newFitCmd(s *streams) *cobra.Command {
	o := &fitOptions{}
	c := &cobra.Command{
		Use:   "fit --model RECIPE --data FILE --out FROZEN",
		Short: "Fit a model recipe on development data and write the frozen model",
		Long: `Fit a logistic-regression recipe by maximum likelihood (Newton–Raphson with
step halving) on the complete cases of a development extract, print the
fit statistics, and write the frozen model: the recipe with every
coefficient, reference level and knot position filled in, and its
provenance (SHA-256 of the data file, rows used, date, tool version).

A frozen spec given as --model is refitted as a recipe of the same terms.
Nothing is written when the fit fails; separation is reported with the
terms involved, and --firth fits Firth's penalised likelihood instead.`,
		Example: fitExample,
		Args:    cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return runFit(o, s)
		},
	}
	f := c.Flags()
	f.StringVar(&o.model, "model", "", "model recipe (YAML)")
	f.StringVar(&o.dataFile, "data", "", "development data (CSV or TSV with a header row, Parquet, or Arrow IPC)")
	f.StringVar(&o.out, "out", "", "where to write the frozen model (YAML)")
	f.StringVar(&o.jsonOut, "json", "", "also write the fit statistics as JSON to this file")
	f.StringVar(&o.reduced, "reduced", "", "a recipe nested in --model: compare the two by likelihood ratio and AIC")
	f.BoolVar(&o.firth, "firth", false, "fit by Firth's penalised likelihood (finite estimates under separation)")
	f.IntVar(&o.hlGroups, "hl-groups", 10, "number of Hosmer–Lemeshow risk groups")
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing on success")
	o.data.register(f)
	for _, name := range []string{"model", "data", "out"} {
		_ = c.MarkFlagRequired(name)
	}
	_ = c.MarkFlagFilename("model", "yaml", "yml")
	_ = c.MarkFlagFilename("reduced", "yaml", "yml")
	_ = c.MarkFlagFilename("data", "csv", "tsv", "txt", "parquet", "arrow", "feather")
	return c
}

// fitReport is the JSON written by fit --json.
type fitReport struct {
	Schema     string `json:"schema"`
	Model      string `json:"model"`
	DataFile   string `json:"data_file"`
	DataSHA256 string `json:"data_sha256"`
	model.FitStats
	Nested *model.NestedTest `json:"nested,omitempty"`
}

type fitRun struct {
	fitted  *model.Fitted
	nested  *model.NestedTest
	frozen  *model.Spec
	hash    string
	refit   bool
	reduced *model.Fitted
}

func runFit(o *fitOptions, s *streams) error {
	if o.hlGroups < 3 {
		return usagef("--hl-groups %d: give at least 3 groups", o.hlGroups)
	}
	if err := checkNotInput(o.out, o.dataFile, o.model, o.reduced); err != nil {
		return err
	}
	if err := checkNotInput(o.jsonOut, o.dataFile, o.model, o.reduced); err != nil {
		return err
	}
	r, err := doFit(o)
	if err != nil {
		return err
	}
	yml, err := r.frozen.MarshalYAML()
	if err != nil {
		return fmt.Errorf("writing the frozen model: %w", err)
	}
	var set atomicfile.Set
	defer set.Abort()
	if o.jsonOut != "" {
		rep := fitReport{Schema: "riskaudit.fit/1", Model: r.fitted.Design.Spec.Name, DataFile: o.dataFile,
			DataSHA256: r.hash, FitStats: r.fitted.Stats, Nested: r.nested}
		b, err := json.MarshalIndent(rep, "", "  ")
		if err != nil {
			return err
		}
		if err := set.Add(o.jsonOut, append(b, '\n')); err != nil {
			return err
		}
	}
	if err := set.Add(o.out, yml); err != nil {
		return err
	}
	if err := set.Commit(); err != nil {
		return err
	}
	if !o.quiet {
		writeFitSummary(s.out, r, o)
	}
	return nil
}

func doFit(o *fitOptions) (*fitRun, error) {
	copt, fail, err := o.data.options()
	if err != nil {
		return nil, err
	}
	spec, err := model.LoadSpec(o.model)
	if err != nil {
		return nil, err
	}
	r := &fitRun{}
	if spec.Frozen() {
		spec, r.refit = spec.AsRecipe(), true
	}
	reqs := spec.Columns(true)
	var reduced *model.Spec
	if o.reduced != "" {
		if reduced, err = model.LoadSpec(o.reduced); err != nil {
			return nil, err
		}
		if reduced.Frozen() {
			reduced = reduced.AsRecipe()
		}
		for _, q := range reduced.Columns(true) {
			if !slices.Contains(reqs, q) {
				reqs = append(reqs, q)
			}
		}
	}
	fr, err := cohort.Load(o.dataFile, reqs, copt)
	if err != nil {
		return nil, err
	}
	var also []string
	for _, q := range reqs {
		also = append(also, q.Name)
	}
	mopt := model.Options{Outcome: true, FailOnMissing: fail, Also: also}
	fopt := model.FitOptions{Firth: o.firth, HLGroups: o.hlGroups}
	d, m, err := model.Build(spec, fr, mopt)
	if err != nil {
		return nil, err
	}
	if r.fitted, err = model.Fit(d, m, fopt); err != nil {
		return nil, err
	}
	if reduced != nil {
		d2, m2, err := model.Build(reduced, fr, mopt)
		if err != nil {
			return nil, err
		}
		if r.reduced, err = model.Fit(d2, m2, fopt); err != nil {
			return nil, fmt.Errorf("the reduced model %s: %w", o.reduced, err)
		}
		if r.nested, err = model.CompareNested(r.fitted, r.reduced); err != nil {
			return nil, &model.SpecError{File: o.reduced, Msg: err.Error()}
		}
	}
	if r.hash, err = fileSHA256(o.dataFile); err != nil {
		return nil, err
	}
	r.frozen = r.fitted.Freeze(model.Provenance{
		Method: r.fitted.Stats.Method, DataFile: o.dataFile, DataSHA256: r.hash,
		RowsUsed: m.N, Events: r.fitted.Stats.Events, FittedAt: now().Format("2006-01-02T15:04:05Z"),
		ToolVersion: "riskaudit " + toolVersion(), RecipeFile: o.model,
	})
	return r, nil
}
