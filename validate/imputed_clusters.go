package validate

import (
	"fmt"
	"math"
	"slices"

	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/meta"
	"github.com/riskaudit/riskaudit/metrics"
)

// MeasureClustersImputed is MeasureClusters for a multiply imputed
// cohort: in every cluster each measure is first pooled across the
// imputations by Rubin's rules on its pooling scale (logit AUC, ln O/E,
// calibration-in-the-large and slope as they are; meta.Rubin with the
// cluster's n − 1, or n − 2 for the slope, complete-data degrees of
// freedom), and the per-cluster pooled estimates, with their total
// variances T as within-cluster variances, are then meta-analysed across
// the clusters as MeasureClusters does. cols are the cluster column of
// each imputation, which must give every row the same cluster. A
// cluster's measure is left out of the pooling when it is left out in
// any imputation (the reason then names the imputation); the values shown
// for such a measure are the first imputation's.
func MeasureClustersImputed(sets []ImputedData, cols []GroupColumn, opt ClusterOptions) (*Clusters, error) {
	if len(sets) < 2 || len(cols) != len(sets) {
		return nil, fmt.Errorf("validate: %d imputations with %d cluster columns", len(sets), len(cols))
	}
	opt, err := opt.withDefaults()
	if err != nil {
		return nil, err
	}
	first := cols[0]
	for j, c := range cols[1:] {
		if !slices.Equal(c.Levels, first.Levels) || !slices.Equal(c.Codes, first.Codes) {
			return nil, fmt.Errorf("validate: the cluster column %s gives some row another value in imputation %d than in imputation 1: %w", opt.Column, j+2, ErrImputations)
		}
	}
	lps := make([][]float64, len(sets))
	for j, s := range sets {
		if s.LP == nil {
			lps[j], _ = metrics.ClampedLogits(s.P, opt.Epsilon)
		} else {
			lps[j], _ = clampLogits(s.LP, opt.Epsilon)
		}
	}
	cl := opt.newClusters()
	rows := clusterRows(first, cl)
	per := make([]ClusterMeasures, len(sets))
	for k, level := range first.Levels {
		if len(rows[k]) == 0 {
			continue
		}
		for j, s := range sets {
			per[j] = measureCluster(level, rows[k], s.Y, s.P, lps[j], opt.MinEvents)
		}
		m, err := rubinCluster(per)
		if err != nil {
			return nil, fmt.Errorf("cluster %s: %w", level, err)
		}
		cl.PerCluster = append(cl.PerCluster, m)
	}
	return cl, poolClusters(cl, opt)
}

// rubinCluster pools one cluster's measures across the imputations.
func rubinCluster(per []ClusterMeasures) (ClusterMeasures, error) {
	out := per[0]
	out.Excluded = nil
	for j, m := range per {
		for _, e := range m.Excluded {
			if !excluded(out, e.Measure) {
				reason := e.Reason
				if j > 0 {
					reason = fmt.Sprintf("in imputation %d, %s", j+1, e.Reason)
				}
				out.Excluded = append(out.Excluded, ClusterExclusion{Measure: e.Measure, Reason: reason})
			}
		}
	}
	n := float64(out.N)
	q, u := make([]float64, len(per)), make([]float64, len(per))
	combine := func(measure string, dfCom float64, f func(m ClusterMeasures) (est, se float64)) (meta.Combined, bool, error) {
		if excluded(out, measure) {
			return meta.Combined{}, false, nil
		}
		for j, m := range per {
			est, se := f(m)
			q[j], u[j] = est, se*se
		}
		c, err := meta.Rubin(q, u, dfCom, 0)
		return c, err == nil, err
	}
	if c, ok, err := combine("auc", n-1, func(m ClusterMeasures) (float64, float64) {
		return logistic.Logit(m.AUC), m.AUCSE / (m.AUC * (1 - m.AUC))
	}); err != nil {
		return out, err
	} else if ok {
		out.AUC = logistic.Expit(c.Estimate)
		out.AUCSE = math.Sqrt(c.Total) * out.AUC * (1 - out.AUC)
	}
	if c, ok, err := combine("oe", n-1, func(m ClusterMeasures) (float64, float64) { return math.Log(m.OE), m.LnOESE }); err != nil {
		return out, err
	} else if ok {
		out.OE, out.LnOESE = math.Exp(c.Estimate), math.Sqrt(c.Total)
		out.OECI = [2]float64{math.Exp(c.CI[0]), math.Exp(c.CI[1])}
	}
	if c, ok, err := combine("citl", n-1, func(m ClusterMeasures) (float64, float64) { return m.CITL, m.CITLSE }); err != nil {
		return out, err
	} else if ok {
		out.CITL, out.CITLSE = c.Estimate, math.Sqrt(c.Total)
	}
	if c, ok, err := combine("slope", n-2, func(m ClusterMeasures) (float64, float64) { return m.Slope, m.SlopeSE }); err != nil {
		return out, err
	} else if ok {
		out.Slope, out.SlopeSE = c.Estimate, math.Sqrt(c.Total)
	}
	return out, nil
}
