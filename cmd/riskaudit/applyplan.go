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
// plan: a plan key that the plan gives takes effect unless its flag was
// typed.
func applyPlan(cmd *cobra.Command, o *auditOptions) error {
	pl, err := plan.Load(o.planFile)
	if err != nil {
		return err
	}
	c, ss := &o.cfg, pl.SampleSize
	for _, f := range []struct {
		flag, key string
		apply     func()
	}{
		{"model", "model", func() { c.Model = pl.Model }},
		{"predicted", "predicted", func() { o.predicted = pl.Predicted }},
		{"outcome", "outcome", func() { o.outcome = pl.Outcome }},
		{"event", "event", func() { o.event = pl.Event }},
		{"non-event", "non_event", func() { o.nonEvent = pl.NonEvent }},
		{"dev", "dev", func() { c.Dev.Path = pl.Dev }},
		{"cohort", "cohort", func() { c.Cohort.Path = pl.Cohort }},
		{"out", "out", func() { o.out = pl.Out }},
		{"history", "history", func() { o.history = pl.History }},
		{"audit-date", "audit_date", func() { o.auditDate = pl.AuditDate }},
		{"thresholds", "thresholds", func() { o.thresholds = pl.Thresholds }},
		{"delimiter", "data.delimiter", func() { o.data.delimiter = pl.Data.Delimiter }},
		{"missing", "data.missing", func() { o.data.missing = pl.Data.Missing }},
		{"decimal-comma", "data.decimal_comma", func() { o.data.decimalComma = pl.Data.DecimalComma }},
		{"na-values", "data.na_values", func() { o.data.naValues = pl.Data.NAValues }},
		{"classify-at", "classify_at", func() { c.Measures.ClassifyAt = pl.ClassifyAt }},
		{"subgroups", "subgroups", func() { c.Subgroups = pl.Subgroups }},
		{"min-subgroup-events", "min_subgroup_events", func() { c.MinSubgroupEvents = pl.MinSubgroupEvents }},
		{"bootstrap", "bootstrap.replicates", func() { c.Bootstrap = pl.Bootstrap }},
		{"seed", "bootstrap.seed", func() { c.Seed = pl.Seed }},
		{"ci-bootstrap", "ci_bootstrap", func() { c.CIBootstrap = pl.CIBootstrap }},
		{"oe-width", "sample_size.oe_width", func() { c.SampleSize.OEWidth = ss.OEWidth }},
		{"slope-width", "sample_size.slope_width", func() { c.SampleSize.SlopeWidth = ss.SlopeWidth }},
		{"c-width", "sample_size.c_width", func() { c.SampleSize.CWidth = ss.CWidth }},
		{"nb-width", "sample_size.nb_width", func() { c.SampleSize.NBWidth = ss.NBWidth }},
	} {
		if pl.Set[f.key] && !cmd.Flags().Changed(f.flag) {
			f.apply()
		}
	}
	// The sample-size threshold and anticipated values, which only a plan
	// gives; the criteria; the renames.
	ss.Targets = c.SampleSize.Targets
	c.SampleSize = ss
	if pl.Set["criteria"] {
		c.Criteria = pl.Criteria
	}
	c.Read.Rename = pl.Rename
	if err := applyQueryPlan(cmd, &o.query, pl, map[string]*string{"cohort": &c.Cohort.Path, "dev": &c.Dev.Path}); err != nil {
		return err
	}
	if o.out == "" {
		return usagef("the plan %s names no out folder and --out is not given", o.planFile)
	}
	return nil
}
