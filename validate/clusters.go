package validate

import (
	"fmt"
	"math"

	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/meta"
	"github.com/riskaudit/riskaudit/metrics"
)

// DefaultMinClusterEvents is the fewest events, and the fewest
// non-events, a cluster needs for its measures to enter the pooling. The
// issue leaves the number open; 10 is a decision of ours (common
// practice: below about 10 events a calibration slope and its standard
// error are too unstable for the normal approximation that
// inverse-variance pooling assumes), lower than the subgroups' 20
// because a small cluster still counts, with its large variance, in a
// meta-analysis, while a small subgroup is judged on its own.
const DefaultMinClusterEvents = 10

// AcceptBounds are the bounds of acceptable performance in a new
// cluster: C > AUCMin, SlopeLow ≤ slope ≤ SlopeHigh, OELow ≤ O/E ≤ OEHigh.
// A zero AcceptBounds takes DefaultAcceptBounds.
type AcceptBounds struct {
	AUCMin    float64 `json:"auc_min"`
	SlopeLow  float64 `json:"slope_low"`
	SlopeHigh float64 `json:"slope_high"`
	OELow     float64 `json:"oe_low"`
	OEHigh    float64 `json:"oe_high"`
}

// DefaultAcceptBounds are the examples: C > 0.7, slope within
// 0.9–1.1, O/E within 0.8–1.2.
func DefaultAcceptBounds() AcceptBounds {
	return AcceptBounds{AUCMin: 0.7, SlopeLow: 0.9, SlopeHigh: 1.1, OELow: 0.8, OEHigh: 1.2}
}

// Check refuses bounds that are not ranges on their measure's scale.
func (b AcceptBounds) Check() error {
	switch {
	case !(b.AUCMin > 0 && b.AUCMin < 1):
		return fmt.Errorf("the smallest acceptable C-statistic %v is not between 0 and 1", b.AUCMin)
	case !(b.SlopeLow < b.SlopeHigh):
		return fmt.Errorf("the acceptable slope range %v–%v is empty", b.SlopeLow, b.SlopeHigh)
	case !(b.OELow > 0 && b.OELow < b.OEHigh):
		return fmt.Errorf("the acceptable O/E range %v–%v is not a positive range", b.OELow, b.OEHigh)
	}
	return nil
}

// ClusterOptions configure the analysis across clusters.
type ClusterOptions struct {
	// Column names the cluster column, for the record.
	Column string
	// Meta chooses τ² and the interval (zero: REML and HKSJ).
	Meta meta.Options
	// MinEvents is the fewest events and non-events a cluster needs for
	// its measures to be pooled (0: DefaultMinClusterEvents).
	MinEvents int
	// Bounds of acceptable performance (zero: DefaultAcceptBounds).
	Bounds AcceptBounds
	// Epsilon clamps risks before logits, as for the overall measures
	// (0: DefaultEpsilon).
	Epsilon float64
}

// ClusterMeasures are one cluster's measures, by the estimators of the
// overall audit: AUC with DeLong's standard error, O/E with its interval
// and the standard error of ln(O/E), √((1 − O/n)/O) (metrics.OE),
// calibration-in-the-large and slope with the standard errors of their
// logistic fits. A measure that does not exist is NaN (null in JSON).
type ClusterMeasures struct {
	Cluster  string             `json:"cluster"`
	N        int                `json:"n"`
	Events   int                `json:"events"`
	AUC      float64            `json:"auc"`
	AUCSE    float64            `json:"auc_se"`
	OE       float64            `json:"oe"`
	OECI     [2]float64         `json:"oe_ci"`
	LnOESE   float64            `json:"ln_oe_se"`
	CITL     float64            `json:"citl"`
	CITLSE   float64            `json:"citl_se"`
	Slope    float64            `json:"slope"`
	SlopeSE  float64            `json:"slope_se"`
	Excluded []ClusterExclusion `json:"excluded,omitempty"`
}

// ClusterExclusion says why a cluster's measure was left out of that
// measure's pooling.
type ClusterExclusion struct {
	Measure string `json:"measure"`
	Reason  string `json:"reason"`
}

// PooledMeasure is the random-effects meta-analysis of one measure
// across clusters. Estimate, CI and PredictionInterval are on the
// measure's own scale (AUC and O/E back-transformed by expit and exp);
// Scale says where the pooling was done, and the Scale* fields are there.
type PooledMeasure struct {
	Estimate           float64    `json:"estimate"`
	CI                 [2]float64 `json:"ci"`
	PredictionInterval [2]float64 `json:"prediction_interval"`
	Tau2               float64    `json:"tau2"`
	I2                 float64    `json:"i2"`
	K                  int        `json:"k"`
	Q                  float64    `json:"q"`
	Scale              string     `json:"scale"`
	ScaleEstimate      float64    `json:"scale_estimate"`
	ScaleSE            float64    `json:"scale_se"`
	ScaleCI            [2]float64 `json:"scale_ci"`
	ScalePI            [2]float64 `json:"scale_prediction_interval"`
	// Acceptable is the range judged acceptable and ProbAcceptable the
	// probability that the true value in a new cluster lies in it, from
	// the predictive t distribution (meta.Result.ProbWithin); absent for
	// calibration-in-the-large, which has no default range.
	Acceptable     string   `json:"acceptable,omitempty"`
	ProbAcceptable *float64 `json:"prob_acceptable,omitempty"`
	// Note says why there is no pooled value or no prediction interval.
	Note string `json:"note,omitempty"`
}

// PooledMeasures are the four pooled measures.
type PooledMeasures struct {
	AUC   PooledMeasure `json:"auc"`
	OE    PooledMeasure `json:"oe"`
	CITL  PooledMeasure `json:"citl"`
	Slope PooledMeasure `json:"slope"`
}

// Clusters is the validation across clusters.
type Clusters struct {
	Column     string            `json:"column"`
	Tau2Method meta.Tau2Method   `json:"tau2_method"`
	CIMethod   meta.CIMethod     `json:"ci_method"`
	MinEvents  int               `json:"min_events"`
	Bounds     AcceptBounds      `json:"bounds"`
	PerCluster []ClusterMeasures `json:"per_cluster"`
	Pooled     PooledMeasures    `json:"pooled"`
	// MissingCluster counts audited rows without a cluster value; they
	// are in the overall measures but in no cluster.
	MissingCluster int `json:"missing_cluster"`
}

// MeasureClusters measures risks p (logits lp, or nil to take them from
// p) against y in every level of the cluster column col, and pools each
// measure across the clusters by random-effects meta-analysis on the
// scale where it is closer to normal: logit AUC (variance
// SE²/(AUC(1 − AUC))² by the delta method), ln O/E (variance
// (1 − O/n)/O), calibration-in-the-large and slope as they are (Snell et
// al. 2018, Statistical Methods in Medical Research 27:3505–3522; Debray
// et al. 2017, BMJ 356:i6460). A cluster enters a measure's pooling only
// with at least MinEvents events and as many non-events and a finite,
// positive variance; otherwise the measure is shown with the reason it
// was left out.
func MeasureClusters(y, p, lp []float64, col GroupColumn, opt ClusterOptions) (*Clusters, error) {
	opt, err := opt.withDefaults()
	if err != nil {
		return nil, err
	}
	if lp == nil {
		lp, _ = metrics.ClampedLogits(p, opt.Epsilon)
	} else {
		lp, _ = clampLogits(lp, opt.Epsilon)
	}
	cl := opt.newClusters()
	rows := clusterRows(col, cl)
	for k, level := range col.Levels {
		if len(rows[k]) == 0 {
			continue
		}
		cl.PerCluster = append(cl.PerCluster, measureCluster(level, rows[k], y, p, lp, opt.MinEvents))
	}
	return cl, poolClusters(cl, opt)
}

// withDefaults fills in the defaults and checks the bounds.
func (opt ClusterOptions) withDefaults() (ClusterOptions, error) {
	if opt.MinEvents <= 0 {
		opt.MinEvents = DefaultMinClusterEvents
	}
	if opt.Bounds == (AcceptBounds{}) {
		opt.Bounds = DefaultAcceptBounds()
	}
	if err := opt.Bounds.Check(); err != nil {
		return opt, err
	}
	if opt.Epsilon == 0 {
		opt.Epsilon = DefaultEpsilon
	}
	if opt.Meta.Tau2 == "" {
		opt.Meta.Tau2 = meta.REML
	}
	if opt.Meta.CI == "" {
		opt.Meta.CI = meta.HKSJ
	}
	return opt, nil
}

func (opt ClusterOptions) newClusters() *Clusters {
	return &Clusters{Column: opt.Column, Tau2Method: opt.Meta.Tau2, CIMethod: opt.Meta.CI, MinEvents: opt.MinEvents, Bounds: opt.Bounds}
}

// clusterRows lists the rows of every level, counting those without one
// in cl.MissingCluster.
func clusterRows(col GroupColumn, cl *Clusters) [][]int {
	rows := make([][]int, len(col.Levels))
	for i, c := range col.Codes {
		if c < 0 {
			cl.MissingCluster++
			continue
		}
		rows[c] = append(rows[c], i)
	}
	return rows
}

// poolClusters pools each measure of cl.PerCluster across the clusters
// that were not excluded from it.
func poolClusters(cl *Clusters, opt ClusterOptions) error {
	type scaled struct{ y, v []float64 }
	var auc, oe, citl, slope scaled
	add := func(s *scaled, est, se float64) {
		s.y, s.v = append(s.y, est), append(s.v, se*se)
	}
	for _, m := range cl.PerCluster {
		if !excluded(m, "auc") {
			add(&auc, logistic.Logit(m.AUC), m.AUCSE/(m.AUC*(1-m.AUC)))
		}
		if !excluded(m, "oe") {
			add(&oe, math.Log(m.OE), m.LnOESE)
		}
		if !excluded(m, "citl") {
			add(&citl, m.CITL, m.CITLSE)
		}
		if !excluded(m, "slope") {
			add(&slope, m.Slope, m.SlopeSE)
		}
	}
	b := opt.Bounds
	var err error
	if cl.Pooled.AUC, err = pool(auc.y, auc.v, opt.Meta, "logit", logistic.Expit, logistic.Logit(b.AUCMin), math.Inf(1), fmt.Sprintf("C > %g", b.AUCMin)); err != nil {
		return fmt.Errorf("pooling the AUC: %w", err)
	}
	if cl.Pooled.OE, err = pool(oe.y, oe.v, opt.Meta, "log", math.Exp, math.Log(b.OELow), math.Log(b.OEHigh), fmt.Sprintf("%g ≤ O/E ≤ %g", b.OELow, b.OEHigh)); err != nil {
		return fmt.Errorf("pooling O/E: %w", err)
	}
	if cl.Pooled.CITL, err = pool(citl.y, citl.v, opt.Meta, "identity", nil, 0, 0, ""); err != nil {
		return fmt.Errorf("pooling calibration-in-the-large: %w", err)
	}
	if cl.Pooled.Slope, err = pool(slope.y, slope.v, opt.Meta, "identity", nil, b.SlopeLow, b.SlopeHigh, fmt.Sprintf("%g ≤ slope ≤ %g", b.SlopeLow, b.SlopeHigh)); err != nil {
		return fmt.Errorf("pooling the calibration slope: %w", err)
	}
	return nil
}

func excluded(m ClusterMeasures, measure string) bool {
	for _, e := range m.Excluded {
		if e.Measure == measure {
			return true
		}
	}
	return false
}

// pool meta-analyses one measure on its scale and back-transforms by
// back (nil: identity); [lo, hi] on the pooling scale is the acceptable
// range, none when what is empty.
func pool(y, v []float64, opt meta.Options, scale string, back func(float64) float64, lo, hi float64, what string) (PooledMeasure, error) {
	nan := math.NaN()
	nan2 := [2]float64{nan, nan}
	pm := PooledMeasure{K: len(y), Scale: scale, Estimate: nan, CI: nan2, PredictionInterval: nan2, Tau2: nan, I2: nan, Q: nan,
		ScaleEstimate: nan, ScaleSE: nan, ScaleCI: nan2, ScalePI: nan2, Acceptable: what}
	if len(y) < 2 {
		pm.Note = fmt.Sprintf("not pooled: %d cluster(s) with this measure, at least 2 needed", len(y))
		return pm, nil
	}
	r, err := meta.Pool(y, v, opt)
	if err != nil {
		return pm, err
	}
	if back == nil {
		back = func(x float64) float64 { return x }
	}
	pm.ScaleEstimate, pm.ScaleSE, pm.ScaleCI, pm.ScalePI = r.Estimate, r.SE, r.CI, r.PI
	pm.Tau2, pm.I2, pm.Q = r.Tau2, r.I2, r.Q
	pm.Estimate = back(r.Estimate)
	pm.CI = [2]float64{back(r.CI[0]), back(r.CI[1])}
	pm.PredictionInterval = [2]float64{back(r.PI[0]), back(r.PI[1])}
	if r.K < 3 {
		pm.Note = "no prediction interval: it needs at least 3 clusters (a t distribution on k − 2 degrees of freedom)"
		return pm, nil
	}
	if what != "" {
		pr := r.ProbWithin(lo, hi)
		pm.ProbAcceptable = &pr
	}
	return pm, nil
}

// measureCluster measures the rows idx of one cluster and records which
// measures cannot enter the pooling, and why.
func measureCluster(level string, idx []int, y, p, lp []float64, minEvents int) ClusterMeasures {
	ys, ps, ls := make([]float64, len(idx)), make([]float64, len(idx)), make([]float64, len(idx))
	events := 0
	for k, i := range idx {
		ys[k], ps[k], ls[k] = y[i], p[i], lp[i]
		if y[i] == 1 {
			events++
		}
	}
	nan := math.NaN()
	m := ClusterMeasures{Cluster: level, N: len(idx), Events: events, AUC: nan, AUCSE: nan, OE: nan, OECI: [2]float64{nan, nan},
		LnOESE: nan, CITL: nan, CITLSE: nan, Slope: nan, SlopeSE: nan}
	all := []string{"auc", "oe", "citl", "slope"}
	exclude := func(measure, reason string) {
		if !excluded(m, measure) {
			m.Excluded = append(m.Excluded, ClusterExclusion{Measure: measure, Reason: reason})
		}
	}
	nonEvents := len(idx) - events
	switch {
	case events == 0:
		for _, s := range all {
			exclude(s, "no events")
		}
	case nonEvents == 0:
		for _, s := range all {
			exclude(s, "no non-events")
		}
	case events < minEvents || nonEvents < minEvents:
		for _, s := range all {
			exclude(s, fmt.Sprintf("%s and %s, fewer than the %d each a cluster needs", count(events, "event"), count(nonEvents, "non-event"), minEvents))
		}
	}
	if events > 0 && nonEvents > 0 {
		a, _ := metrics.AUC(metrics.SortByRisk(ys, ps))
		m.AUC, m.AUCSE = a.AUC, a.SE
		if !(a.SE > 0) || !(a.AUC > 0 && a.AUC < 1) {
			exclude("auc", "DeLong's standard error cannot be estimated (every event ranked above, or below, every non-event)")
		}
		if c, err := metrics.CalibrationInTheLarge(ys, ls); err == nil {
			m.CITL, m.CITLSE = c.Value, c.SE
		} else {
			exclude("citl", "the calibration model cannot be fitted: "+err.Error())
		}
		if s, _, err := metrics.CalibrationSlope(ys, ls); err == nil {
			m.Slope, m.SlopeSE = s.Value, s.SE
		} else {
			exclude("slope", "the calibration model cannot be fitted: "+err.Error())
		}
	}
	if events > 0 {
		var o float64
		m.OE, m.OECI, o, _ = metrics.OE(ys, ps)
		m.LnOESE = math.Sqrt((1 - o/float64(len(idx))) / o)
		if !(m.LnOESE > 0) {
			exclude("oe", "the standard error of ln(O/E) is 0 (every patient had the event)")
		}
	} else if len(idx) > 0 {
		m.OE, _, _, _ = metrics.OE(ys, ps)
	}
	for _, s := range []struct {
		name string
		se   float64
	}{{"citl", m.CITLSE}, {"slope", m.SlopeSE}} {
		if !(s.se > 0) || math.IsInf(s.se, 0) {
			exclude(s.name, "no finite standard error")
		}
	}
	return m
}

// count writes n with the noun, plural unless n is 1.
func count(n int, noun string) string {
	if n == 1 {
		return "1 " + noun
	}
	return fmt.Sprintf("%d %ss", n, noun)
}
