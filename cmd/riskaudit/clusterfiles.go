package main

import (
	"strings"

	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/plan"
)

// clusterOnlyFlags are the flags that only the analysis across clusters
// reads.
var clusterOnlyFlags = []string{"tau2-method", "ci-method", "min-cluster-events", "accept-auc", "accept-slope", "accept-oe"}

// parseClusterFiles reads the values of --cluster-file: NAME=PATH (split
// at the first '=') or PATH, named by its base name without the
// extension.
func parseClusterFiles(values []string) ([]audit.ClusterFile, error) {
	var out []audit.ClusterFile
	for _, v := range values {
		name, path, ok := strings.Cut(v, "=")
		if !ok {
			name, path = audit.ClusterFileName(v), v
		}
		if strings.TrimSpace(name) == "" || path == "" {
			return nil, usagef("--cluster-file %s: give NAME=PATH, or PATH alone to name the cluster by the file's base name", cohort.Quote(v))
		}
		out = append(out, audit.ClusterFile{Name: name, Input: audit.Input{Path: path}})
	}
	return out, nil
}

// checkSource refuses options of the analysis across clusters given
// without a cluster column or cluster files, which would otherwise be
// ignored without a word: a flag typed, or the plan's clusters section.
func (c *clusterFlags) checkSource(flags *pflag.FlagSet) error {
	if c.column != "" || len(c.files) > 0 {
		return nil
	}
	for _, name := range clusterOnlyFlags {
		if flags.Changed(name) {
			return usagef("--%s is an option of the analysis across clusters: give --cluster COLUMN or --cluster-file NAME=PATH (or the plan's cluster or cluster_files) with it", name)
		}
	}
	if c.planOptions != nil {
		// As a plan's alarm criterion without a date column is: the
		// options contradict the run, a usage error with the plan's line.
		return usagef("%v", c.planOptions)
	}
	return nil
}

// fromPlan takes the plan's cluster files (relative to the plan's
// folder) unless a flag gives the cohort or its clusters, and keeps the
// refusal of the plan's clusters section for checkSource. A cluster
// source typed replaces the plan's other sources, as any flag overrides
// the plan: --cluster-file its cohort and cluster column, --cohort or
// --cluster its cluster files.
func (c *clusterFlags) fromPlan(flags *pflag.FlagSet, pl *plan.Plan, cohortPath *string) {
	typed := func(names ...string) bool {
		for _, n := range names {
			if flags.Changed(n) {
				return true
			}
		}
		return false
	}
	if pl.Set["cluster_files"] && !typed("cluster-file", "cohort", "cluster") {
		c.files = nil
		for _, f := range pl.ClusterFiles {
			c.files = append(c.files, f.Name+"="+f.Path)
		}
	}
	if typed("cluster-file") {
		if !typed("cohort") && pl.Set["cohort"] {
			*cohortPath = ""
		}
		if !typed("cluster") && pl.Set["cluster"] {
			c.column = ""
		}
	}
	c.planOptions = pl.CheckClusterOptions()
}
