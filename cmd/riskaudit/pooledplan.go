package main

import (
	"github.com/riskaudit/riskaudit/plan"
	"github.com/riskaudit/riskaudit/validate"
)

// checkPooledPlanCriteria refuses a plan's criterion on a pooled measure
// (validate.PooledMeasureNames) when neither the plan nor the flags give
// a cluster source, naming the criterion's line: the pooled measures
// come only from the analysis across clusters. Like an alarm criterion
// without a date column it is wrong usage (exit status 2), which a
// cluster flag resolves, written as the plan's errors are (file, line).
func checkPooledPlanCriteria(pl *plan.Plan, criteria []validate.Criterion, c *clusterFlags) error {
	if c.column != "" || len(c.files) > 0 || !pl.Set["criteria"] {
		return nil
	}
	cr, i, ok := validate.HasPooledCriterion(criteria)
	if !ok {
		return nil
	}
	line := pl.Lines["criteria"]
	if i < len(pl.CriteriaLines) {
		line = pl.CriteriaLines[i]
	}
	e := &plan.Error{File: pl.File, Line: line, Kind: plan.ErrValue,
		Msg: "criteria: the criterion on " + cr.Measure + " needs the analysis across clusters, but neither the plan (cluster, cluster_files) nor the flags (--cluster COLUMN, --cluster-file NAME=PATH) give clusters"}
	return usagef("%s", e.Error())
}
