package validate

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"sort"
	"strconv"
	"testing"

	"github.com/riskaudit/riskaudit/meta"
)

// loadClusters reads the invented multicentre cohort
// testdata/reference/clusters.csv (drawn by make_reference.py) as
// outcomes, risks and a cluster column coded in sorted order.
func loadClusters(t *testing.T) (y, p []float64, col GroupColumn) {
	t.Helper()
	f, err := os.Open("../testdata/reference/clusters.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	recs, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	code := map[string]int32{}
	for _, r := range recs[1:] {
		code[r[0]] = 0
	}
	for l := range code {
		col.Levels = append(col.Levels, l)
	}
	sort.Strings(col.Levels)
	for k, l := range col.Levels {
		code[l] = int32(k)
	}
	col.Name = "site"
	for _, r := range recs[1:] {
		v, err := strconv.ParseFloat(r[1], 64)
		if err != nil {
			t.Fatal(err)
		}
		p = append(p, v)
		y = append(y, map[string]float64{"0": 0, "1": 1}[r[2]])
		col.Codes = append(col.Codes, code[r[0]])
	}
	return y, p, col
}

type clusterRef struct {
	PerCluster []struct {
		Cluster   string
		N, Events int
		AUC       float64
		AUCSE     *float64 `json:"auc_se"`
		OE        float64
		LnOESE    float64 `json:"ln_oe_se"`
		CITL      float64
		CITLSE    float64 `json:"citl_se"`
		Slope     float64
		SlopeSE   float64 `json:"slope_se"`
		Pooled    bool
	} `json:"per_cluster"`
	Pooled map[string]map[string]struct {
		Tau2, I2, Estimate float64
		K                  int
		CI                 [2]float64
		PI                 [2]float64 `json:"prediction_interval"`
		Prob               *float64   `json:"prob_acceptable"`
	} `json:"pooled"`
}

// TestMeasureClustersReference checks every cluster's measures and the
// pooled ones against testdata/reference/clusters.json: AUC from
// scikit-learn's roc_auc_score and DeLong's standard error from a
// quadratic transcription of DeLong et al. (1988); O/E and the standard
// error of ln O/E transcribed from Debray et al. (2017);
// calibration-in-the-large and slope with their standard errors from
// statsmodels GLM; pooling by REML (matrix transcription of Viechtbauer
// 2005) and DerSimonian–Laird (statsmodels combine_effects), with HKSJ
// and prediction intervals and the probabilities of acceptable
// performance from scipy.stats.t (make_reference.py,
// write_clusters_reference).
func TestMeasureClustersReference(t *testing.T) {
	y, p, col := loadClusters(t)
	b, err := os.ReadFile("../testdata/reference/clusters.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref clusterRef
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	near := func(what string, got, want, tol float64) {
		t.Helper()
		if !(math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))) {
			t.Errorf("%s = %.10g, want %.10g", what, got, want)
		}
	}
	for _, method := range []meta.Tau2Method{meta.REML, meta.DL} {
		cl, err := MeasureClusters(y, p, nil, col, ClusterOptions{Column: "site", Meta: meta.Options{Tau2: method}, Epsilon: 1e-10})
		if err != nil {
			t.Fatal(err)
		}
		if len(cl.PerCluster) != len(ref.PerCluster) {
			t.Fatalf("%d clusters, want %d", len(cl.PerCluster), len(ref.PerCluster))
		}
		for i, w := range ref.PerCluster {
			g := cl.PerCluster[i]
			if g.Cluster != w.Cluster || g.N != w.N || g.Events != w.Events {
				t.Errorf("cluster %d: %s n %d events %d, want %s %d %d", i, g.Cluster, g.N, g.Events, w.Cluster, w.N, w.Events)
			}
			near(g.Cluster+" AUC", g.AUC, w.AUC, 1e-9)
			if w.AUCSE != nil {
				near(g.Cluster+" AUC SE", g.AUCSE, *w.AUCSE, 1e-9)
			} else if !math.IsNaN(g.AUCSE) {
				t.Errorf("%s: AUC SE %g, want none", g.Cluster, g.AUCSE)
			}
			near(g.Cluster+" O/E", g.OE, w.OE, 1e-9)
			near(g.Cluster+" SE ln O/E", g.LnOESE, w.LnOESE, 1e-9)
			near(g.Cluster+" CITL", g.CITL, w.CITL, 1e-6)
			near(g.Cluster+" CITL SE", g.CITLSE, w.CITLSE, 1e-6)
			near(g.Cluster+" slope", g.Slope, w.Slope, 1e-6)
			near(g.Cluster+" slope SE", g.SlopeSE, w.SlopeSE, 1e-6)
			if pooled := len(g.Excluded) == 0; pooled != w.Pooled {
				t.Errorf("%s: pooled %v, want %v (exclusions %v)", g.Cluster, pooled, w.Pooled, g.Excluded)
			}
		}
		for name, got := range map[string]PooledMeasure{"auc": cl.Pooled.AUC, "oe": cl.Pooled.OE, "citl": cl.Pooled.CITL, "slope": cl.Pooled.Slope} {
			w, ok := ref.Pooled[string(method)][name]
			if !ok {
				t.Fatalf("no reference for %s %s", method, name)
			}
			what := string(method) + " " + name
			if got.K != w.K {
				t.Errorf("%s: k = %d, want %d", what, got.K, w.K)
			}
			near(what+" τ²", got.Tau2, w.Tau2, 1e-7)
			near(what+" I²", got.I2, w.I2, 1e-7)
			near(what+" estimate", got.Estimate, w.Estimate, 1e-7)
			for j := 0; j < 2; j++ {
				near(what+" CI", got.CI[j], w.CI[j], 1e-7)
				near(what+" PI", got.PredictionInterval[j], w.PI[j], 1e-7)
			}
			if (got.ProbAcceptable == nil) != (w.Prob == nil) {
				t.Errorf("%s: probability of acceptable performance %v, want %v", what, got.ProbAcceptable, w.Prob)
			} else if w.Prob != nil {
				near(what+" P(acceptable)", *got.ProbAcceptable, *w.Prob, 1e-7)
			}
		}
	}
}

// TestMeasureClustersExclusions checks the reasons a cluster is left out
// of the pooling, by construction: no events, no non-events, too few
// events, and a cluster whose events all rank above its non-events (no
// DeLong standard error); fewer than 3 pooled clusters give no
// prediction interval and fewer than 2 no pooled value.
func TestMeasureClustersExclusions(t *testing.T) {
	var y, p []float64
	var codes []int32
	add := func(code int32, events, nonEvents int, risk func(i int, event bool) float64) {
		for i := 0; i < events; i++ {
			y, p, codes = append(y, 1), append(p, risk(i, true)), append(codes, code)
		}
		for i := 0; i < nonEvents; i++ {
			y, p, codes = append(y, 0), append(p, risk(i, false)), append(codes, code)
		}
	}
	spread := func(i int, event bool) float64 {
		r := 0.1 + 0.6*float64(i%17)/17
		if event {
			r += 0.1
		}
		return r
	}
	add(0, 0, 30, spread)                        // no events
	add(1, 30, 0, spread)                        // no non-events
	add(2, 4, 40, spread)                        // too few events
	add(3, 20, 20, func(i int, e bool) float64 { // separated
		if e {
			return 0.8 + float64(i)/1000
		}
		return 0.2 + float64(i)/1000
	})
	add(4, 40, 60, spread)
	add(5, 35, 50, spread)
	col := GroupColumn{Name: "site", Levels: []string{"a", "b", "c", "d", "e", "f"}, Codes: codes}
	cl, err := MeasureClusters(y, p, nil, col, ClusterOptions{Epsilon: 1e-10})
	if err != nil {
		t.Fatal(err)
	}
	reason := func(i int, measure string) string {
		for _, e := range cl.PerCluster[i].Excluded {
			if e.Measure == measure {
				return e.Reason
			}
		}
		return ""
	}
	for _, c := range []struct {
		i       int
		measure string
		want    string
	}{
		{0, "auc", "no events"}, {0, "oe", "no events"},
		{1, "slope", "no non-events"},
		{2, "citl", "4 events and 40 non-events, fewer than the 10 each a cluster needs"},
		{3, "auc", "DeLong's standard error cannot be estimated (every event ranked above, or below, every non-event)"},
		{4, "auc", ""}, {5, "oe", ""},
	} {
		if got := reason(c.i, c.measure); got != c.want {
			t.Errorf("cluster %s, %s: reason %q, want %q", col.Levels[c.i], c.measure, got, c.want)
		}
	}
	if cl.Pooled.AUC.K != 2 || cl.Pooled.OE.K != 3 {
		t.Errorf("k: AUC %d (want 2), O/E %d (want 3)", cl.Pooled.AUC.K, cl.Pooled.OE.K)
	}
	if !math.IsNaN(cl.Pooled.AUC.PredictionInterval[0]) || cl.Pooled.AUC.ProbAcceptable != nil || cl.Pooled.AUC.Note == "" {
		t.Errorf("AUC from 2 clusters: prediction interval %v, probability %v, note %q", cl.Pooled.AUC.PredictionInterval, cl.Pooled.AUC.ProbAcceptable, cl.Pooled.AUC.Note)
	}
	if math.IsNaN(cl.Pooled.OE.PredictionInterval[0]) || cl.Pooled.OE.ProbAcceptable == nil {
		t.Errorf("O/E from 3 clusters: prediction interval %v", cl.Pooled.OE.PredictionInterval)
	}
	if _, err := MeasureClusters(y, p, nil, col, ClusterOptions{Epsilon: 1e-10, Bounds: AcceptBounds{AUCMin: 1.5, SlopeHigh: 1, OELow: 1, OEHigh: 2}}); err == nil {
		t.Error("bounds with C > 1.5: no error")
	}
}
