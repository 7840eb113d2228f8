package main

import (
	"os"

	"github.com/spf13/cobra"

	"github.com/riskaudit/riskaudit/plan"
	"github.com/riskaudit/riskaudit/validate"
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
		{"predicted-percent", "predicted_percent", func() { o.predictedPercent = pl.PredictedPercent }},
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
		{"sheet", "data.sheet", func() { o.data.sheet = pl.Data.Sheet }},
		{"classify-at", "classify_at", func() { o.classifyAt = pl.ClassifyAt }},
		{"nb-min-gain", "net_benefit_min_gain", func() { o.minGain = pl.NetBenefitMinGain }},
		{"subgroups", "subgroups", func() { c.Subgroups, c.Bands = pl.Subgroups, pl.Bands }},
		{"date-column", "date_column", func() { c.OverTime.DateColumn = pl.DateColumn }},
		{"period", "periods", func() { o.period = pl.Periods }},
		{"subgroup-criteria", "subgroup_criteria", func() { c.SubgroupCriteria = pl.SubgroupCriteria }},
		{"min-subgroup-events", "min_subgroup_events", func() { c.MinSubgroupEvents = pl.MinSubgroupEvents }},
		{"cluster", "cluster", func() { o.clusters.column = pl.Cluster }},
		{"tau2-method", "clusters.tau2_method", func() { o.clusters.tau2 = pl.Clusters.Tau2Method }},
		{"ci-method", "clusters.ci_method", func() { o.clusters.ci = pl.Clusters.CIMethod }},
		{"min-cluster-events", "clusters.min_events", func() { o.clusters.minEvents = pl.Clusters.MinEvents }},
		{"accept-auc", "clusters.accept_auc", func() { o.clusters.acceptAUC = pl.Clusters.AcceptAUC }},
		{"accept-slope", "clusters.accept_slope", func() { o.clusters.acceptSlope = pl.Clusters.AcceptSlope }},
		{"accept-oe", "clusters.accept_oe", func() { o.clusters.acceptOE = pl.Clusters.AcceptOE }},
		{"imputation-column", "imputation_column", func() { o.imputed.column = pl.Imputation.Column }},
		{"imputed", "imputed", func() { o.imputed.files = pl.Imputation.Files }},
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
	// A file the plan names (and no flag overrides) that cannot be read
	// is reported with the plan's key and line.
	for _, f := range []struct{ flag, key string }{{"model", "model"}, {"dev", "dev"}, {"cohort", "cohort"}} {
		if !cmd.Flags().Changed(f.flag) {
			if err := pl.CheckFile(f.key); err != nil {
				return err
			}
		}
	}
	// The sample-size threshold and anticipated values, which only a plan
	// gives; the criteria; the renames.
	ss.Targets = c.SampleSize.Targets
	c.SampleSize = ss
	if pl.Set["criteria"] {
		c.Criteria = pl.Criteria
	}
	o.clusters.fromPlan(cmd.Flags(), pl, &c.Cohort.Path)
	if err := checkPooledPlanCriteria(pl, c.Criteria, &o.clusters); err != nil {
		return err
	}
	if pl.Set["cluster_files"] && len(o.clusters.files) > 0 && !cmd.Flags().Changed("cluster-file") {
		if err := pl.CheckClusterFiles(); err != nil {
			return err
		}
	}
	o.planRenames = pl.Rename
	o.dateFromPlan = pl.Set["audit_date"] && !cmd.Flags().Changed("audit-date")
	c.Plan = &validate.PlanFile{Path: o.planFile, Name: pl.Name, SHA256: pl.SHA256}
	c.Purpose = pl.Purpose
	if err := applyQueryPlan(cmd, &o.query, pl, map[string]*string{"cohort": &c.Cohort.Path, "dev": &c.Dev.Path}); err != nil {
		return err
	}
	if o.out == "" {
		return usagef("the plan %s names no out folder and --out is not given", o.planFile)
	}
	return nil
}
