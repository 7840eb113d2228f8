package main

import (
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/meta"
	"github.com/riskaudit/riskaudit/validate"
)

// clusterFlags are the audit's options for the validation across
// clusters, as typed (or as the plan gives them).
type clusterFlags struct {
	column, tau2, ci string
	minEvents        int
	// acceptAUC is the smallest acceptable C; acceptSlope and acceptOE
	// are ranges LOW:HIGH.
	acceptAUC             float64
	acceptSlope, acceptOE string
	// files are the values of --cluster-file (NAME=PATH or PATH), or the
	// plan's cluster_files.
	files []string
	// planOptions, when not nil, is the refusal of the plan's clusters
	// section should no cluster source be given (clusterfiles.go).
	planOptions error
}

func (c *clusterFlags) register(f *pflag.FlagSet) {
	d := validate.DefaultAcceptBounds()
	f.StringVar(&c.column, "cluster", "", "column naming the cluster (hospital, region, period): measure the model in each and pool the measures by random-effects meta-analysis")
	f.StringArrayVar(&c.files, "cluster-file", nil, "instead of --cohort and --cluster: a cohort file that is one cluster, NAME=PATH or PATH (named by its base name); repeat for each, at least two")
	f.StringVar(&c.tau2, "tau2-method", string(meta.REML), "with --cluster: between-cluster variance by reml, dl (DerSimonian–Laird) or pm (Paule–Mandel)")
	f.StringVar(&c.ci, "ci-method", string(meta.HKSJ), "with --cluster: interval of a pooled measure, hksj (Hartung–Knapp–Sidik–Jonkman, t on k−1 df) or wald")
	f.IntVar(&c.minEvents, "min-cluster-events", validate.DefaultMinClusterEvents, "with --cluster: clusters with fewer events (or non-events) are shown but not pooled")
	f.Float64Var(&c.acceptAUC, "accept-auc", d.AUCMin, "with --cluster: a new cluster's performance is acceptable with a C-statistic above this")
	f.StringVar(&c.acceptSlope, "accept-slope", "0.9:1.1", "with --cluster: acceptable calibration slopes, LOW:HIGH")
	f.StringVar(&c.acceptOE, "accept-oe", "0.8:1.2", "with --cluster: acceptable O/E ratios, LOW:HIGH")
}

// config checks the values and gives the library's ClusterConfig.
func (c *clusterFlags) config() (audit.ClusterConfig, error) {
	if c.column == "" && len(c.files) == 0 {
		return audit.ClusterConfig{}, nil
	}
	files, err := parseClusterFiles(c.files)
	if err != nil {
		return audit.ClusterConfig{}, err
	}
	if _, err := meta.ParseTau2Method(c.tau2); err != nil {
		return audit.ClusterConfig{}, usagef("--tau2-method %s: give reml (the default), dl or pm", c.tau2)
	}
	if _, err := meta.ParseCIMethod(c.ci); err != nil {
		return audit.ClusterConfig{}, usagef("--ci-method %s: give hksj (the default) or wald", c.ci)
	}
	if c.minEvents < 1 {
		return audit.ClusterConfig{}, usagef("--min-cluster-events %d: give at least 1", c.minEvents)
	}
	b := validate.AcceptBounds{AUCMin: c.acceptAUC}
	if b.SlopeLow, b.SlopeHigh, err = parseRange(c.acceptSlope); err != nil {
		return audit.ClusterConfig{}, usagef("--accept-slope %s: %v", c.acceptSlope, err)
	}
	if b.OELow, b.OEHigh, err = parseRange(c.acceptOE); err != nil {
		return audit.ClusterConfig{}, usagef("--accept-oe %s: %v", c.acceptOE, err)
	}
	if err := b.Check(); err != nil {
		return audit.ClusterConfig{}, usagef("--accept-auc, --accept-slope, --accept-oe: %v", err)
	}
	return audit.ClusterConfig{Column: c.column, Files: files, Tau2Method: c.tau2, CIMethod: c.ci, MinEvents: c.minEvents, Bounds: b}, nil
}

// parseRange reads LOW:HIGH.
func parseRange(s string) (lo, hi float64, err error) {
	a, b, ok := strings.Cut(s, ":")
	if !ok {
		return 0, 0, usagef("give LOW:HIGH, such as 0.9:1.1")
	}
	if lo, err = strconv.ParseFloat(strings.TrimSpace(a), 64); err == nil {
		hi, err = strconv.ParseFloat(strings.TrimSpace(b), 64)
	}
	if err != nil || !(lo < hi) {
		return 0, 0, usagef("give two numbers LOW:HIGH with LOW below HIGH, such as 0.9:1.1")
	}
	return lo, hi, nil
}
