package main

import (
	"context"
	"fmt"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
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
	query    queryFlags
}

const fitExample = `  # Fit a recipe on a development extract and freeze it
  riskaudit fit --model recipe.yaml --data dev.csv --out frozen.yaml

  # Look at a fit without writing anything
  riskaudit fit --model recipe.yaml --data dev.csv

  # The same, with the statistics as JSON for other tools
  riskaudit fit --model recipe.yaml --data dev.csv --out frozen.yaml --json fit.json

  # Test whether the terms of recipe.yaml add to those of reduced.yaml
  # (likelihood-ratio test and AIC difference on the same rows)
  riskaudit fit --model recipe.yaml --reduced reduced.yaml --data dev.csv --out frozen.yaml

  # The development data from a PostgreSQL query (the connection from
  # PGHOST, PGUSER, … and the password file, or --db URL)
  riskaudit fit --model recipe.yaml --data-query 'SELECT * FROM ovh_development ORDER BY patient_ref' --out frozen.yaml

  # A semicolon-separated extract with decimal commas, refusing missing values
  riskaudit fit --model recipe.yaml --data dev.csv --decimal-comma --missing fail --out frozen.yaml`

func newFitCmd(s *streams) *cobra.Command {
	o := &fitOptions{}
	c := &cobra.Command{
		Use:   "fit --model RECIPE --data FILE [--out FROZEN]",
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
			return runFit(cmd.Context(), o, s)
		},
	}
	f := c.Flags()
	f.StringVar(&o.model, "model", "", "model recipe (YAML)")
	f.StringVar(&o.dataFile, "data", "", "development data (CSV or TSV with a header row, Parquet, Arrow IPC, or an Excel workbook)")
	f.StringVar(&o.out, "out", "", "where to write the frozen model (YAML); without it the fit is printed and nothing written")
	f.StringVar(&o.jsonOut, "json", "", "also write the fit statistics as JSON to this file")
	f.StringVar(&o.reduced, "reduced", "", "a recipe nested in --model: compare the two by likelihood ratio and AIC")
	f.BoolVar(&o.firth, "firth", false, "fit by Firth's penalised likelihood (finite estimates under separation)")
	f.IntVar(&o.hlGroups, "hl-groups", 10, "number of Hosmer–Lemeshow risk groups")
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing on success")
	o.data.register(f)
	o.query.register(f, map[string]string{"data": "data"})
	o.query.stderr = func(format string, args ...any) { fmt.Fprintf(s.err, format, args...) }
	for _, name := range []string{"model"} {
		_ = c.MarkFlagRequired(name)
	}
	_ = c.MarkFlagFilename("model", "yaml", "yml")
	_ = c.MarkFlagFilename("reduced", "yaml", "yml")
	_ = c.MarkFlagFilename("data", "csv", "tsv", "txt", "parquet", "arrow", "feather", "xlsx")
	return withExitStatuses(c, exitStatus{exitOK, ""}, exitStatus{exitUsage, usageOutputs},
		exitStatus{exitBadInput, "bad input: a data file or recipe that cannot be used as it is"},
		exitStatus{exitCannotFit, ""}, exitStatus{exitOtherFailed, ""}, exitStatus{exitSignalBase, ""})
}

func runFit(ctx context.Context, o *fitOptions, s *streams) error {
	if o.hlGroups < 3 {
		return usagef("--hl-groups %d: give at least 3 groups", o.hlGroups)
	}
	if err := o.query.check(map[string]string{"data": o.dataFile}); err != nil {
		return err
	}
	if o.dataFile == "" && !o.query.given("data") {
		return usagef("give the development data with --data (or a query: --data-query, --data-query-file)")
	}
	if err := checkOutputs([]string{o.out, o.jsonOut}, append([]string{o.dataFile, o.model, o.reduced}, o.query.queryFiles()...)...); err != nil {
		return err
	}
	copt, fail, err := o.data.options()
	if err != nil {
		return err
	}
	data, err := o.query.only("data", o.dataFile)
	if err != nil {
		return err
	}
	r, err := audit.Fit(ctx, audit.FitConfig{Model: o.model, Reduced: o.reduced, Data: data,
		Read: copt, FailOnMissing: fail, Firth: o.firth, HLGroups: o.hlGroups, Tool: "riskaudit " + toolVersion(), Clock: now})
	if err != nil {
		return err
	}
	if err := audit.WriteFit(o.out, o.jsonOut, r); err != nil {
		return err
	}
	if !o.quiet {
		writeFitSummary(s.out, r, o)
	}
	return nil
}
