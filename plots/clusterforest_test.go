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
