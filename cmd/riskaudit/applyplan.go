package main

import (
	"os"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/plan"
)

func exists(path string) bool {
	_, err := os.Stat(path)
	return err == nil
}

// applyPlan fills every option the command line did not set from the
// plan.
func applyPlan(cmd *cobra.Command, o *auditOptions) error {
	pl, err := plan.Load(o.planFile)
	if err != nil {
		return err
	}
	fl := cmd.Flags()
	str := func(flag, key string, dst *string, v string) {
		if pl.Set[key] && !fl.Changed(flag) {
			*dst = v
		}
	}
	str("model", "model", &o.cfg.Model, pl.Model)
	str("predicted", "predicted", &o.predicted, pl.Predicted)
	str("outcome", "outcome", &o.outcome, pl.Outcome)
	str("event", "event", &o.event, pl.Event)
	str("non-event", "non_event", &o.nonEvent, pl.NonEvent)
	str("dev", "dev", &o.cfg.Dev.Path, pl.Dev)
	str("cohort", "cohort", &o.cfg.Cohort.Path, pl.Cohort)
	str("out", "out", &o.out, pl.Out)
	str("history", "history", &o.history, pl.History)
	str("audit-date", "audit_date", &o.auditDate, pl.AuditDate)
	str("thresholds", "thresholds", &o.thresholds, pl.Thresholds)
	str("delimiter", "data.delimiter", &o.data.delimiter, pl.Data.Delimiter)
	str("missing", "data.missing", &o.data.missing, pl.Data.Missing)
	if pl.Set["data.decimal_comma"] && !fl.Changed("decimal-comma") {
		o.data.decimalComma = pl.Data.DecimalComma
	}
	if pl.Set["data.na_values"] && !fl.Changed("na-values") {
		o.data.naValues = pl.Data.NAValues
	}
	if pl.Set["classify_at"] && !fl.Changed("classify-at") {
		o.cfg.Measures.ClassifyAt = pl.ClassifyAt
	}
	if pl.Set["subgroups"] && !fl.Changed("subgroups") {
		o.cfg.Subgroups = pl.Subgroups
	}
	if pl.Set["min_subgroup_events"] && !fl.Changed("min-subgroup-events") {
		o.cfg.MinSubgroupEvents = pl.MinSubgroupEvents
	}
	if pl.Set["bootstrap.replicates"] && !fl.Changed("bootstrap") {
		o.cfg.Bootstrap = pl.Bootstrap
	}
	if pl.Set["bootstrap.seed"] && !fl.Changed("seed") {
		o.cfg.Seed = pl.Seed
	}
	if pl.Set["ci_bootstrap"] && !fl.Changed("ci-bootstrap") {
		o.cfg.CIBootstrap = pl.CIBootstrap
	}
	// The sample-size section: widths the flags did not set, and the
	// threshold and anticipated values, which only a plan gives.
	widths := o.cfg.SampleSize
	o.cfg.SampleSize = pl.SampleSize
	for _, w := range []struct {
		flag, key string
		dst       *float64
		flagValue float64
	}{{"oe-width", "oe_width", &o.cfg.SampleSize.OEWidth, widths.OEWidth}, {"slope-width", "slope_width", &o.cfg.SampleSize.SlopeWidth, widths.SlopeWidth},
		{"c-width", "c_width", &o.cfg.SampleSize.CWidth, widths.CWidth}, {"nb-width", "nb_width", &o.cfg.SampleSize.NBWidth, widths.NBWidth}} {
		if !pl.Set["sample_size."+w.key] || fl.Changed(w.flag) {
			*w.dst = w.flagValue
		}
	}
	if pl.Set["criteria"] {
		o.cfg.Criteria = pl.Criteria
	}
	o.cfg.Read.Rename = pl.Rename
	if o.out == "" {
		return usagef("the plan %s names no out folder and --out is not given", o.planFile)
	}
	return nil
}
