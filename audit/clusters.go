package audit

import (
	"github.com/riskaudit/riskaudit/meta"
	"github.com/riskaudit/riskaudit/validate"
)

// ClusterConfig asks for the validation across clusters: the model's
// measures in every level of a categorical column (hospitals, regions,
// periods) and their random-effects meta-analysis (validate.MeasureClusters).
type ClusterConfig struct {
	// Column is the cluster column; empty means no analysis across
	// clusters, unless Files are given.
	Column string
	// Files, instead of a column and of Config.Cohort, are the cohort's
	// files, each one cluster (clusterfiles.go): at least two, scored by
	// the same model and audited as one cohort.
	Files []ClusterFile
	// Tau2Method is "reml" (also ""), "dl" or "pm"; CIMethod "hksj" (also
	// "") or "wald".
	Tau2Method, CIMethod string
	// MinEvents is the fewest events and non-events a cluster needs to be
	// pooled (0: validate.DefaultMinClusterEvents).
	MinEvents int
	// Bounds of acceptable performance in a new cluster (zero:
	// validate.DefaultAcceptBounds).
	Bounds validate.AcceptBounds
}

// check refuses options that do not name a method, or bounds that are
// not ranges, naming the flags.
func (c ClusterConfig) check() error {
	if c.Column == "" && len(c.Files) == 0 {
		return nil
	}
	if c.Tau2Method != "" {
		if _, err := meta.ParseTau2Method(c.Tau2Method); err != nil {
			return configErrorf("--tau2-method: %v", err)
		}
	}
	if c.CIMethod != "" {
		if _, err := meta.ParseCIMethod(c.CIMethod); err != nil {
			return configErrorf("--ci-method: %v", err)
		}
	}
	if c.Bounds != (validate.AcceptBounds{}) {
		if err := c.Bounds.Check(); err != nil {
			return configErrorf("--accept-auc, --accept-slope, --accept-oe: %v", err)
		}
	}
	if c.MinEvents < 0 {
		return configErrorf("--min-cluster-events %d: give at least 1", c.MinEvents)
	}
	return nil
}

// clusterOptions are the cluster analysis's options from the Config.
func clusterOptions(cfg *Config) validate.ClusterOptions {
	c := cfg.Clusters
	column := c.Column
	if column == "" {
		column = ClusterFilesLabel // clusters from files, one each
	}
	return validate.ClusterOptions{Column: column, MinEvents: c.MinEvents, Bounds: c.Bounds, Epsilon: cfg.Measures.Epsilon,
		Meta: meta.Options{Tau2: meta.Tau2Method(c.Tau2Method), CI: meta.CIMethod(c.CIMethod)}}
}

// clusters measures the model in every cluster and pools the measures.
func (r *run) clusters(a *validate.Audit) error {
	if r.imp != nil {
		return r.imputedClusters(a)
	}
	opt := clusterOptions(r.cfg)
	r.prog.Step("measuring and pooling across " + opt.Column)
	cl, err := validate.MeasureClusters(r.cur.y, r.cur.p, r.cur.lp, *r.cur.cluster, opt)
	if err != nil {
		return err
	}
	a.Clusters = cl
	return nil
}
