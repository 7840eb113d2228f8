package main

import (
	"context"
	"fmt"
	"path/filepath"
	"strings"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
)

type scoreOptions struct {
	data     dataFlags
	model    string
	dataFile string
	out      string
	quiet    bool
}

func newScoreCmd(s *streams) *cobra.Command {
	o := &scoreOptions{}
	c := &cobra.Command{
		Use:   "score --model FROZEN --data FILE --out FILE",
		Short: "Append a frozen model's linear predictor and predicted risk to every row",
		Long: `Score a cohort with a frozen model. The output has every input row exactly
as it was, in the same order and with the same delimiter, followed by two
columns: ` + audit.LPColumn + ` (intercept + Σ coefficient × term) and
` + audit.RiskColumn + ` (1 / (1 + exp(−linear predictor))). A row missing a
value the model needs gets two empty fields (or, with --missing fail,
stops the run). The outcome column is not needed.

A Parquet or Arrow IPC cohort gives a file of the same format: every
column with its type, then the two columns as float64, null where a row
was not scored. An Excel workbook gives a workbook with every sheet and
cell kept and the two columns added to the sheet read, right of its
header; or, when --out ends in .csv or .tsv, that sheet as delimited
text (each cell as text, dates as ISO 8601) followed by the two columns.`,
		Example: `  # Score a new extract with the frozen model
  riskaudit score --model frozen.yaml --data new.csv --out scored.csv

  # A tab-separated extract in which -99 means missing
  riskaudit score --model frozen.yaml --data new.tsv --na-values=-99 --out scored.tsv

  # A Parquet extract gives a Parquet file
  riskaudit score --model frozen.yaml --data new.parquet --out scored.parquet

  # The sheet "Extract" of a workbook, scored as a workbook and as CSV
  riskaudit score --model frozen.yaml --data new.xlsx --sheet Extract --out scored.xlsx
  riskaudit score --model frozen.yaml --data new.xlsx --sheet Extract --out scored.csv`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error { return runScore(cmd.Context(), o, s) },
	}
	f := c.Flags()
	f.StringVar(&o.model, "model", "", "frozen model (YAML with an intercept and every coefficient)")
	f.StringVar(&o.dataFile, "data", "", "cohort to score (CSV or TSV with a header row, Parquet, Arrow IPC, or an Excel workbook)")
	f.StringVar(&o.out, "out", "", "where to write the scored rows")
	f.BoolVarP(&o.quiet, "quiet", "q", false, "print nothing on success")
	o.data.register(f)
	for _, name := range []string{"model", "data", "out"} {
		_ = c.MarkFlagRequired(name)
	}
	_ = c.MarkFlagFilename("model", "yaml", "yml")
	_ = c.MarkFlagFilename("data", "csv", "tsv", "txt", "parquet", "arrow", "feather", "xlsx")
	return withExitStatuses(c, exitStatus{exitOK, ""}, exitStatus{exitUsage, usageOutputs},
		exitStatus{exitBadInput, "bad input: a data file or frozen model that cannot be used as it is"},
		exitStatus{exitOtherFailed, ""}, exitStatus{exitSignalBase, ""})
}

func runScore(ctx context.Context, o *scoreOptions, s *streams) error {
	if o.out == cohort.StdinName {
		return usagef("--out -: the scored rows are written to a file, not to standard output; give a file name")
	}
	if err := checkOutputs([]string{o.out}, o.dataFile, o.model); err != nil {
		return err
	}
	copt, fail, err := o.data.options()
	if err != nil {
		return err
	}
	spec, err := audit.LoadFrozen(o.model)
	if err != nil {
		return err
	}
	format := cohort.Format(o.dataFile, copt.Format)
	if err := checkScoredName(o.out, format); err != nil {
		return err
	}
	copt.KeepRecords = format == "csv"
	sc, err := audit.Score(ctx, audit.ScoreConfig{Spec: spec, Data: audit.Input{Path: o.dataFile}, Read: copt, FailOnMissing: fail})
	if err != nil {
		return err
	}
	var out []byte
	if delim, text := workbookAsText(o.out, format); text {
		out, err = sc.WorkbookText(delim)
	} else {
		out, err = sc.File(o.dataFile, format, copt.DecimalComma)
	}
	if err != nil {
		return err
	}
	if err := atomicfile.WriteFile(o.out, out); err != nil {
		return err
	}
	if !o.quiet {
		fmt.Fprintf(s.out, "Scored %d of %d rows of %s with %s", sc.Scored, sc.Frame.Rows, o.dataFile, o.model)
		if sc.Excluded > 0 {
			fmt.Fprintf(s.out, "; %d rows left unscored for missing values (%s)", sc.Excluded, describeExclusions(sc.ByColumn))
		}
		fmt.Fprintf(s.out, "\nWrote %s\n", o.out)
	}
	return nil
}

// checkScoredName refuses an output name whose extension names another
// format than the scored file will have (the input's own).
func checkScoredName(out, format string) error {
	ext := strings.ToLower(filepath.Ext(out))
	var want string
	switch ext {
	case ".csv", ".tsv", ".txt":
		want = "csv"
	case ".parquet", ".pq":
		want = "parquet"
	case ".arrow", ".feather", ".ipc":
		want = "arrow"
	case ".xlsx":
		want = "xlsx"
	default:
		return nil
	}
	if want != format && !(format == "xlsx" && want == "csv") {
		names := map[string]string{"csv": "delimited text", "parquet": "Parquet", "arrow": "Arrow IPC", "xlsx": "an Excel workbook, or CSV"}
		return usagef("--out %s: the scored file keeps the input's format (%s); give it a matching name", out, names[format])
	}
	return nil
}

// workbookAsText reports whether the scored copy of a workbook is to be
// delimited text, as the output's extension says (.csv, .txt: commas;
// .tsv: tabs), and its delimiter.
func workbookAsText(out, format string) (byte, bool) {
	if format != "xlsx" {
		return 0, false
	}
	switch strings.ToLower(filepath.Ext(out)) {
	case ".csv", ".txt":
		return ',', true
	case ".tsv":
		return '\t', true
	}
	return 0, false
}
