package main

import (
	"fmt"
	"math"
	"strings"

	"github.com/spf13/cobra"
	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/samplesize"
)

// sizeOptions are the samplesize command's flags.
type sizeOptions struct {
	phi, c, mu, sd, thr, calA, calB float64
	widths                          samplesize.Targets
	model, dataFile, jsonOut        string
	data                            dataFlags
	// query reads --data from PostgreSQL.
	query queryFlags
}

func newSampleSizeCmd(s *streams) *cobra.Command {
	o := &sizeOptions{}
	cmd := &cobra.Command{
		Use:   "samplesize (--event-rate P --c-statistic C | --lp-mean M --lp-sd S | --model M --data FILE)",
		Short: "Plan an external validation: the minimum sample size for precise estimates",
		Long: `Compute the minimum sample size of an external validation study of a
binary-outcome model, criterion by criterion (after Riley et al. 2021):
precise O/E, calibration slope, C-statistic and, with --threshold,
standardised net benefit, each from a target 95% CI width.

The anticipated distribution of the model's linear predictor comes from
one of: its normal mean and SD (--lp-mean, --lp-sd); the anticipated
event proportion and C-statistic (--event-rate, --c-statistic), from which
the normal distribution of a calibrated model's linear predictor is
found; or a frozen model scored on existing data without outcomes, such
as a pilot extract of the target population (--model, --data), whose
linear predictors are taken as they are. An anticipated miscalibration
(--calibration-intercept a, --calibration-slope b) makes the true risks
expit(a + b·LP); --c-statistic otherwise replaces the C-statistic the
distribution implies. The recommended size is the largest requirement.

A normal linear predictor is integrated over (to 1e-13 relative), not
sampled; each need is rounded up to whole patients and events, a need
within 1e-12 relative above a whole number counting as that number.`,
		Example: `  riskaudit samplesize --event-rate 0.1 --c-statistic 0.75 --threshold 0.1
  riskaudit samplesize --lp-mean -2.5 --lp-sd 1.2 --slope-width 0.3 --json size.json
  riskaudit samplesize --lp-mean -3 --lp-sd 1 --calibration-intercept 0.3 --calibration-slope 0.8
  riskaudit samplesize --model frozen.yaml --data pilot-extract.csv --calibration-intercept 0.2
  riskaudit samplesize --model frozen.yaml --data-query 'SELECT * FROM pilot_extract' --db postgresql://audit@warehouse/clinic`,
		Args: func(cmd *cobra.Command, args []string) error {
			return pointToHelp(cmd, cobra.NoArgs(cmd, args))
		},
		RunE: func(cmd *cobra.Command, _ []string) error {
			return pointToHelp(cmd, runSampleSize(cmd, o, s))
		},
	}
	f := cmd.Flags()
	f.Float64Var(&o.phi, "event-rate", 0, "anticipated event proportion")
	f.Float64Var(&o.c, "c-statistic", 0, "anticipated C-statistic")
	f.Float64Var(&o.mu, "lp-mean", 0, "mean of the linear predictor")
	f.Float64Var(&o.sd, "lp-sd", 0, "standard deviation of the linear predictor")
	f.StringVar(&o.model, "model", "", "a frozen model whose linear predictor --data gives")
	f.StringVar(&o.dataFile, "data", "", "data to score with --model (outcomes not needed): CSV or TSV with a header row, Parquet, Arrow IPC, or an Excel workbook")
	f.Float64Var(&o.calA, "calibration-intercept", 0, "anticipated calibration intercept a (true risks expit(a + b·LP))")
	f.Float64Var(&o.calB, "calibration-slope", 1, "anticipated calibration slope b")
	f.Float64Var(&o.thr, "threshold", 0, "risk threshold for the net-benefit criterion (0: none)")
	widthFlags(f, "", &o.widths)
	f.StringVar(&o.jsonOut, "json", "", "also write the result as JSON")
	o.data.register(f)
	o.query.register(f, map[string]string{"data": "data"})
	o.query.stderr = func(format string, args ...any) { fmt.Fprintf(s.err, format, args...) }
	_ = cmd.MarkFlagFilename("data-query-file", "sql")
	_ = cmd.MarkFlagFilename("model", "yaml", "yml")
	_ = cmd.MarkFlagFilename("data", "csv", "tsv", "txt", "parquet", "arrow", "feather", "xlsx")
	return withExitStatuses(cmd, exitStatus{exitOK, ""},
		exitStatus{exitUsage, "wrong usage: an unknown flag, the linear predictor given in no way or\n     in two, values out of range or that no plan can meet, or a --json\n     output on an input"},
		exitStatus{exitBadInput, "bad input: with --model and --data, a data file or frozen model that\n     cannot be used as it is"},
		exitStatus{exitOtherFailed, ""}, exitStatus{exitSignalBase, ""})
}

// pointToHelp adds "(see 'riskaudit samplesize --help')" to an error
// of usage (exit status 2) that names no help yet, which would otherwise
// point to the top-level help; the error is wrapped, so its type and
// exit status are kept.
func pointToHelp(cmd *cobra.Command, err error) error {
	if err == nil || exitCode(err) != exitUsage || strings.Contains(err.Error(), "--help") {
		return err
	}
	return fmt.Errorf("%w (see '%s --help')", err, cmd.CommandPath())
}

// widthFlags registers the target 95% CI widths of the sample-size
// criteria, with their defaults; what prefixes each flag's help.
func widthFlags(f *pflag.FlagSet, what string, t *samplesize.Targets) {
	def := samplesize.DefaultTargets()
	f.Float64Var(&t.OEWidth, "oe-width", def.OEWidth, what+"target 95% CI width of O/E")
	f.Float64Var(&t.SlopeWidth, "slope-width", def.SlopeWidth, what+"target 95% CI width of the calibration slope")
	f.Float64Var(&t.CWidth, "c-width", def.CWidth, what+"target 95% CI width of the C-statistic")
	f.Float64Var(&t.NBWidth, "nb-width", def.NBWidth, what+"target 95% CI width of the standardised net benefit")
}

// checkWidths refuses a target width that is not positive (or, for the
// C-statistic, not below 1).
func checkWidths(t samplesize.Targets) error {
	for _, w := range []struct {
		flag string
		v    float64
	}{{"oe-width", t.OEWidth}, {"slope-width", t.SlopeWidth}, {"c-width", t.CWidth}, {"nb-width", t.NBWidth}} {
		if !(w.v > 0) || math.IsInf(w.v, 0) || (w.flag == "c-width" && w.v >= 1) {
			return usagef("--%s %g: give a positive width (below 1 for the C-statistic)", w.flag, w.v)
		}
	}
	return nil
}

func runSampleSize(cmd *cobra.Command, o *sizeOptions, s *streams) error {
	fl := cmd.Flags()
	if err := o.query.check(map[string]string{"data": o.dataFile}); err != nil {
		return err
	}
	hasData := o.dataFile != "" || o.query.given("data")
	byLP, byRate, byData := fl.Changed("lp-mean") || fl.Changed("lp-sd"), fl.Changed("event-rate"), o.model != "" || hasData
	switch {
	case fl.Changed("lp-mean") != fl.Changed("lp-sd"):
		return usagef("give --lp-mean and --lp-sd together")
	case (o.model == "") == hasData:
		return usagef("give --model and --data together")
	case byLP && byRate || byLP && byData || byRate && byData:
		return usagef("give the linear predictor one way: --lp-mean and --lp-sd, --event-rate and --c-statistic, or --model and --data")
	case byRate && !fl.Changed("c-statistic"):
		return usagef("give --event-rate and --c-statistic, or --lp-mean and --lp-sd")
	case !byLP && !byRate && !byData:
		return usagef("give --event-rate and --c-statistic, --lp-mean and --lp-sd, or --model and --data")
	case byLP && !(o.sd > 0):
		return usagef("--lp-sd must be positive")
	case !(o.calB > 0):
		return usagef("--calibration-slope %g: give a positive slope", o.calB)
	}
	if o.thr != 0 && !(o.thr > 0 && o.thr < 1) {
		return usagef("--threshold %g: give a risk threshold strictly between 0 and 1 (or 0 for no net-benefit criterion)", o.thr)
	}
	if fl.Changed("event-rate") && !(o.phi > 0 && o.phi < 1) {
		return usagef("--event-rate %g: give an event rate strictly between 0 and 1", o.phi)
	}
	if fl.Changed("c-statistic") && !(o.c > 0.5 && o.c < 1) {
		return usagef("--c-statistic %g: give a C-statistic in (0.5, 1)", o.c)
	}
	if err := checkWidths(o.widths); err != nil {
		return err
	}
	if err := checkOutputs([]string{o.jsonOut}, o.model, o.dataFile); err != nil {
		return err
	}
	copt, fail, err := o.data.options()
	if err != nil {
		return err
	}
	dataIn, err := o.query.only("data", o.dataFile)
	if err != nil {
		return err
	}
	cfg := audit.SizeConfig{Model: o.model, Data: dataIn, Read: copt, FailOnMissing: fail,
		CalIntercept: o.calA, CalSlope: o.calB, Threshold: o.thr, Targets: o.widths,
		Tool: "riskaudit " + toolVersion(), CommandLine: s.commandLine()}
	switch {
	case byRate:
		cfg.EventRate, cfg.CStatistic = o.phi, o.c
	case byLP:
		cfg.LPMean, cfg.LPSD = o.mu, o.sd
		fallthrough
	default:
		if fl.Changed("c-statistic") {
			cfg.CStatistic = o.c
		}
	}
	p, err := audit.PlanSize(cmd.Context(), cfg)
	if err != nil {
		return err
	}
	w := s.out
	fmt.Fprintf(w, "%s: event proportion %.4f, C-statistic %.3f, O/E %.3f\n", p.LinearPredictor, p.EventRate, p.C, p.OE)
	fmt.Fprintf(w, "Anticipated from %s\n", p.AnticipatedFrom)
	for _, cr := range p.Criteria {
		fmt.Fprintf(w, "  %-36s %-20s n %7d (%d events)\n", cr.Measure, cr.Target, cr.N, cr.Events)
	}
	fmt.Fprintf(w, "Minimum sample size %d (%d events), driven by the %s criterion\n", p.N, p.Events, p.Driver)
	if o.jsonOut == "" {
		return nil
	}
	b, err := jsonout.Marshal(p)
	if err != nil {
		return err
	}
	return atomicfile.WriteFile(o.jsonOut, b)
}
