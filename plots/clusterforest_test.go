package plots

import (
	"bytes"
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/validate"
)

// TestClusterForests checks that every measure gets its own figure, that
// each names every cluster and the pooled row, and that a measure with
// too few clusters to pool is still drawn with its reason.
func TestClusterForests(t *testing.T) {
	nan := math.NaN()
	per := []validate.ClusterMeasures{
		{Cluster: "north", N: 200, Events: 40, AUC: 0.74, AUCSE: 0.04, OE: 1.1, OECI: [2]float64{0.8, 1.4}, CITL: 0.1, CITLSE: 0.15, Slope: 0.95, SlopeSE: 0.2},
		{Cluster: "south", N: 150, Events: 30, AUC: 0.70, AUCSE: 0.05, OE: 0.9, OECI: [2]float64{0.6, 1.3}, CITL: -0.1, CITLSE: 0.2, Slope: 1.1, SlopeSE: 0.25},
		{Cluster: "tiny", N: 20, Events: 2, AUC: 0.9, AUCSE: nan, OE: 0.5, OECI: [2]float64{0.1, 2}, CITL: -0.7, CITLSE: 1, Slope: 3, SlopeSE: 4,
			Excluded: []validate.ClusterExclusion{{Measure: "auc", Reason: "few"}, {Measure: "oe", Reason: "few"}, {Measure: "citl", Reason: "few"}, {Measure: "slope", Reason: "few"}}},
	}
	pooled := validate.PooledMeasure{Estimate: 0.72, CI: [2]float64{0.6, 0.8}, PredictionInterval: [2]float64{nan, nan}, K: 2, Note: "no prediction interval"}
	none := validate.PooledMeasure{Estimate: nan, CI: [2]float64{nan, nan}, PredictionInterval: [2]float64{nan, nan}, K: 1, Note: "not pooled: 1 cluster(s)"}
	c := &validate.Clusters{Column: "region", CIMethod: "hksj", PerCluster: per, Bounds: validate.DefaultAcceptBounds(),
		Pooled: validate.PooledMeasures{AUC: pooled, OE: pooled, CITL: none, Slope: pooled}}
	figs, err := ClusterForests(c)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"clusters_auc.svg", "clusters_oe.svg", "clusters_citl.svg", "clusters_slope.svg"}
	if len(figs) != len(want) {
		t.Fatalf("%d figures, want %d", len(figs), len(want))
	}
	for i, f := range figs {
		if f.Name != want[i] {
			t.Errorf("figure %d: %s, want %s", i, f.Name, want[i])
		}
		for _, s := range []string{"north (n 200, events 40)", "tiny (n 20, events 2): not pooled", "<svg"} {
			if !bytes.Contains(f.SVG, []byte(s)) {
				t.Errorf("%s lacks %q", f.Name, s)
			}
		}
	}
	if !bytes.Contains(figs[2].SVG, []byte("pooled: not pooled: 1 cluster(s)")) || !bytes.Contains(figs[0].SVG, []byte("pooled (2 clusters)")) {
		t.Error("the pooled row does not say what was pooled")
	}
}

// TestClusterForestSeries checks the data each forest plot draws against
// the analysis it is given: every cluster's estimate at its row and its
// interval (for the AUC the logit-scale Wald interval, transcribed here:
// expit(logit A ± 1.959964·SE/(A(1 − A))), Snell et al. 2018), the
// pooled estimate, its CI and the prediction interval at their own ends.
func TestClusterForestSeries(t *testing.T) {
	per := []validate.ClusterMeasures{
		{Cluster: "north", N: 200, Events: 40, AUC: 0.74, AUCSE: 0.04, OE: 1.1, OECI: [2]float64{0.8, 1.4}, CITL: 0.1, CITLSE: 0.15, Slope: 0.95, SlopeSE: 0.2},
		{Cluster: "south", N: 150, Events: 30, AUC: 0.70, AUCSE: 0.05, OE: 0.9, OECI: [2]float64{0.6, 1.3}, CITL: -0.1, CITLSE: 0.2, Slope: 1.1, SlopeSE: 0.25},
		{Cluster: "east", N: 180, Events: 35, AUC: 0.78, AUCSE: 0.045, OE: 1.0, OECI: [2]float64{0.7, 1.35}, CITL: 0.02, CITLSE: 0.17, Slope: 1.02, SlopeSE: 0.22},
	}
	pm := func(est, lo, hi, plo, phi float64) validate.PooledMeasure {
		return validate.PooledMeasure{Estimate: est, CI: [2]float64{lo, hi}, PredictionInterval: [2]float64{plo, phi}, K: 3}
	}
	c := &validate.Clusters{Column: "region", CIMethod: "hksj", PerCluster: per, Bounds: validate.DefaultAcceptBounds(),
		Pooled: validate.PooledMeasures{AUC: pm(0.74, 0.69, 0.79, 0.55, 0.88), OE: pm(1.0, 0.85, 1.17, 0.5, 1.9),
			CITL: pm(0.01, -0.2, 0.22, -0.6, 0.62), Slope: pm(1.01, 0.8, 1.2, 0.5, 1.5)}}
	figs, err := ClusterForests(c)
	if err != nil {
		t.Fatal(err)
	}
	expit := func(x float64) float64 { return 1 / (1 + math.Exp(-x)) }
	z := 1.959963984540054
	for i, want := range []struct {
		pooled validate.PooledMeasure
		est    func(validate.ClusterMeasures) (float64, [2]float64)
	}{
		{c.Pooled.AUC, func(m validate.ClusterMeasures) (float64, [2]float64) {
			l, s := math.Log(m.AUC/(1-m.AUC)), m.AUCSE/(m.AUC*(1-m.AUC))
			return m.AUC, [2]float64{expit(l - z*s), expit(l + z*s)}
		}},
		{c.Pooled.OE, func(m validate.ClusterMeasures) (float64, [2]float64) { return m.OE, m.OECI }},
		{c.Pooled.CITL, func(m validate.ClusterMeasures) (float64, [2]float64) {
			return m.CITL, [2]float64{m.CITL - z*m.CITLSE, m.CITL + z*m.CITLSE}
		}},
		{c.Pooled.Slope, func(m validate.ClusterMeasures) (float64, [2]float64) {
			return m.Slope, [2]float64{m.Slope - z*m.SlopeSE, m.Slope + z*m.SlopeSE}
		}},
	} {
		f := figs[i]
		got := map[string][]float64{}
		for _, s := range f.Series {
			for _, p := range s.Points {
				got[s.Name] = append(got[s.Name], p.X)
			}
		}
		var ests, ints []float64
		for _, m := range per {
			v, ci := want.est(m)
			ests, ints = append(ests, v), append(ints, ci[0], ci[1])
		}
		p := want.pooled
		for name, w := range map[string][]float64{
			"clusters": ests, "cluster intervals": ints, "pooled estimate": {p.Estimate},
			"pooled CI": p.CI[:], "prediction interval": p.PredictionInterval[:],
		} {
			g := got[name]
			if len(g) != len(w) {
				t.Errorf("%s %s: %d values drawn, want %d", f.Name, name, len(g), len(w))
				continue
			}
			for k := range g {
				if math.Abs(g[k]-w[k]) > 1e-12 {
					t.Errorf("%s %s[%d]: drawn %.6g, want %.6g", f.Name, name, k, g[k], w[k])
				}
			}
		}
	}
}
