package audit

import "github.com/riskaudit/riskaudit/validate"

// checkPooledCriteria refuses a criterion on a pooled measure
// (validate.PooledMeasureNames) without a cluster source: the pooled
// measures come only from the analysis across clusters.
func (c ClusterConfig) checkPooledCriteria(criteria []validate.Criterion) error {
	if c.Column != "" || len(c.Files) > 0 {
		return nil
	}
	if cr, _, ok := validate.HasPooledCriterion(criteria); ok {
		return configErrorf("the criterion on %s needs the analysis across clusters: give --cluster COLUMN or --cluster-file NAME=PATH (plan key cluster or cluster_files)", cr.Measure)
	}
	return nil
}
