package plots

import (
	"fmt"
	"math"
	"unicode"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/riskaudit/riskaudit/validate"
)

// clusterMeasure is what a cluster forest plot draws of one measure.
type clusterMeasure struct {
	key, name, axis string
	ref             float64
	// get gives a cluster's estimate and 95% interval on the measure's
	// own scale.
	get    func(validate.ClusterMeasures) (float64, [2]float64)
	pooled func(*validate.Clusters) validate.PooledMeasure
}

func waldCI(v, se float64, back func(float64) float64) [2]float64 {
	return [2]float64{back(v - 1.959963984540054*se), back(v + 1.959963984540054*se)}
}

func identity(x float64) float64 { return x }

var clusterMeasures = []clusterMeasure{
	{"auc", "AUC", "AUC (95% CI; logit-scale interval)", 0.5, func(m validate.ClusterMeasures) (float64, [2]float64) {
		l := math.Log(m.AUC / (1 - m.AUC))
		return m.AUC, waldCI(l, m.AUCSE/(m.AUC*(1-m.AUC)), func(x float64) float64 { return 1 / (1 + math.Exp(-x)) })
	}, func(c *validate.Clusters) validate.PooledMeasure { return c.Pooled.AUC }},
	{"oe", "O/E", "observed / expected (95% CI)", 1, func(m validate.ClusterMeasures) (float64, [2]float64) {
		return m.OE, m.OECI
	}, func(c *validate.Clusters) validate.PooledMeasure { return c.Pooled.OE }},
	{"citl", "calibration-in-the-large", "calibration-in-the-large (95% CI)", 0, func(m validate.ClusterMeasures) (float64, [2]float64) {
		return m.CITL, waldCI(m.CITL, m.CITLSE, identity)
	}, func(c *validate.Clusters) validate.PooledMeasure { return c.Pooled.CITL }},
	{"slope", "calibration slope", "calibration slope (95% CI)", 1, func(m validate.ClusterMeasures) (float64, [2]float64) {
		return m.Slope, waldCI(m.Slope, m.SlopeSE, identity)
	}, func(c *validate.Clusters) validate.PooledMeasure { return c.Pooled.Slope }},
}

// ClusterForests draws one forest plot per measure of an analysis across
// clusters (clusters_auc.svg, clusters_oe.svg, clusters_citl.svg,
// clusters_slope.svg): a row per cluster with its estimate and 95%
// interval (hollow and grey when the cluster was left out of that
// measure's pooling), then the pooled estimate with its interval (thick)
// and its 95% prediction interval for a new cluster (thin, dashed), and a
// grey line at the value of perfect calibration or, for the AUC, at the
// smallest acceptable C (validate.AcceptBounds).
func ClusterForests(c *validate.Clusters) ([]Figure, error) {
	var figs []Figure
	for _, m := range clusterMeasures {
		d, series, err := clusterForest(c, m)
		if err != nil {
			return nil, fmt.Errorf("forest plot of the %s by cluster: %w", m.name, err)
		}
		figs = append(figs, Figure{Name: "clusters_" + m.key + ".svg", Title: "The " + m.name + " by " + c.Column, SVG: d.svg, PNG: d.png, Series: series})
	}
	return figs, nil
}

// ciMethodName is the pooled interval's method as the legend names it.
func ciMethodName(m string) string {
	switch m {
	case "hksj":
		return "Hartung–Knapp–Sidik–Jonkman"
	case "wald":
		return "Wald"
	}
	return m
}

// clusterForest draws one measure's forest plot and returns the data it
// draws: "clusters" (each drawn estimate at its row), "cluster intervals"
// (each drawn interval's two ends, as clipped to the axis), "pooled
// estimate", "pooled CI" and "prediction interval" (the ends of each).
func clusterForest(c *validate.Clusters, m clusterMeasure) (drawn, []Series, error) {
	var est, ints plotter.XYs
	var series []Series
	pm := m.pooled(c)
	refText := map[string]string{"auc": "AUC = 0.5", "oe": "O/E = 1", "citl": "CITL = 0", "slope": "slope = 1"}[m.key]
	if m.key == "auc" && c.Bounds.AUCMin > 0 {
		m.ref = c.Bounds.AUCMin // the line a new cluster should stay right of
		refText = fmt.Sprintf("acceptable: AUC > %g", c.Bounds.AUCMin)
	}
	n := len(c.PerCluster) + 2 // a gap row, then the pooled row
	labels := make(rowTicks, n)
	p := newPlot("", m.axis, "")
	// A row above the clusters holds the reference line's label.
	p.Y.Min, p.Y.Max = -0.7, float64(n)+0.5
	p.Y.Tick.Marker = labels
	p.Y.Tick.Length = 0
	p.Y.Padding = vg.Points(4)
	p.X.Tick.Marker = roundTicks{}
	lo, hi := m.ref, m.ref
	widen := func(v ...float64) {
		for _, x := range v {
			if finite(x) {
				lo, hi = math.Min(lo, x), math.Max(hi, x)
			}
		}
	}
	// The axis spans the pooled clusters and the pooled intervals; the
	// interval of a cluster left out (often very wide) is cut at its ends.
	for _, g := range c.PerCluster {
		if v, ci := m.get(g); !leftOut(g, m.key) {
			widen(v, ci[0], ci[1])
		}
	}
	widen(pm.Estimate, pm.CI[0], pm.CI[1], pm.PredictionInterval[0], pm.PredictionInterval[1])
	if lo == hi {
		for _, g := range c.PerCluster {
			v, _ := m.get(g)
			widen(v)
		}
	}
	pad := 0.08 * math.Max(hi-lo, 0.05)
	lo, hi = lo-pad, hi+pad
	clip := func(x float64) float64 { return math.Max(lo, math.Min(hi, x)) }
	leg := newLegend()
	entries := 0
	var pooledTh, leftTh []plot.Thumbnailer
	for i, g := range c.PerCluster {
		y := float64(n - 1 - i)
		v, ci := m.get(g)
		left := ""
		if leftOut(g, m.key) {
			left = ": not pooled"
		}
		labels[i] = shorten(fmt.Sprintf("%s (n %d, events %d)", g.Cluster, g.N, g.Events), 44-len(left)) + left
		if !finite(v) {
			continue
		}
		col, shape := blue, draw.GlyphDrawer(draw.BoxGlyph{})
		if left != "" {
			col, shape = grey, draw.SquareGlyph{}
		}
		if finite(ci[0]) && finite(ci[1]) {
			ends := plotter.XYs{{X: clip(ci[0]), Y: y}, {X: clip(ci[1]), Y: y}}
			ints = append(ints, ends...)
			seg, err := line(ends, col, 1.5)
			if err != nil {
				return drawn{}, nil, err
			}
			p.Add(seg)
		}
		if left != "" && leftTh == nil {
			leftTh = intervalMark(col, shape)
		}
		if v < lo || v > hi {
			continue // a cluster left out, its estimate beyond the axis
		}
		est = append(est, plotter.XY{X: v, Y: y})
		pt, err := plotter.NewScatter(plotter.XYs{{X: v, Y: y}})
		if err != nil {
			return drawn{}, nil, err
		}
		pt.GlyphStyle.Shape, pt.GlyphStyle.Color, pt.GlyphStyle.Radius = shape, col, vg.Points(3.5)
		p.Add(pt)
		if left == "" && pooledTh == nil {
			pooledTh = intervalMark(col, shape)
		}
	}
	if pooledTh != nil {
		leg.Add("a cluster: estimate and 95% CI", pooledTh...)
		entries++
	}
	if leftTh != nil {
		leg.Add("hollow, grey: a cluster left out of the pooling (its interval cut at the axis's ends)", leftTh...)
		entries++
	}
	series = append(series, Series{Name: "clusters", Points: est}, Series{Name: "cluster intervals", Points: ints})
	labels[n-2] = ""
	labels[n-1] = fmt.Sprintf("pooled (%d clusters)", pm.K)
	if finite(pm.Estimate) {
		ends := plotter.XYs{{X: pm.CI[0], Y: 0}, {X: pm.CI[1], Y: 0}}
		series = append(series, Series{Name: "pooled CI", Points: ends})
		ci, err := line(ends, ink, 4)
		if err != nil {
			return drawn{}, nil, err
		}
		p.Add(ci)
		series = append(series, Series{Name: "pooled estimate", Points: plotter.XYs{{X: pm.Estimate, Y: 0}}})
		pt, err := plotter.NewScatter(plotter.XYs{{X: pm.Estimate, Y: 0}})
		if err != nil {
			return drawn{}, nil, err
		}
		pt.GlyphStyle.Shape, pt.GlyphStyle.Color, pt.GlyphStyle.Radius = draw.PyramidGlyph{}, ink, vg.Points(5)
		p.Add(pt)
		leg.Add(fmt.Sprintf("pooled estimate (triangle), 95%% CI (%s)", ciMethodName(string(c.CIMethod))), ci, pt)
		entries++
		if finite(pm.PredictionInterval[0]) {
			ends := plotter.XYs{{X: pm.PredictionInterval[0], Y: -0.25}, {X: pm.PredictionInterval[1], Y: -0.25}}
			series = append(series, Series{Name: "prediction interval", Points: ends})
			pi, err := line(ends, vermillion, 1.2, vg.Points(4), vg.Points(2))
			if err != nil {
				return drawn{}, nil, err
			}
			p.Add(pi)
			leg.Add("95% prediction interval for a new cluster", pi)
			entries++
		}
	} else {
		labels[n-1] = "pooled: " + shorten(pm.Note, 40)
	}
	p.X.Min, p.X.Max = lo, hi
	rl, err := line(plotter.XYs{{X: m.ref, Y: p.Y.Min}, {X: m.ref, Y: float64(n) - 0.3}}, grey, 1, vg.Points(4), vg.Points(3))
	if err != nil {
		return drawn{}, nil, err
	}
	p.Add(rl, &refLabel{x: m.ref, y: float64(n) + 0.1, text: refText})
	leg.Add("dashed line: reference value, named at its top", rl)
	entries++
	s := sheet{title: fmt.Sprintf("%s by %s", upperFirst(m.name), c.Column), legend: leg, entries: entries}
	svg, png, err := single(p, s, 7*vg.Inch, vg.Length(1.2+0.3*float64(n))*vg.Inch)
	return drawn{svg: svg, png: png}, series, err
}

// upperFirst capitalises the first letter of a measure's name for a
// title.
func upperFirst(s string) string {
	r := []rune(s)
	if len(r) == 0 {
		return s
	}
	return string(unicode.ToUpper(r[0])) + string(r[1:])
}

// leftOut reports whether the cluster was left out of the measure's
// pooling.
func leftOut(g validate.ClusterMeasures, measure string) bool {
	for _, e := range g.Excluded {
		if e.Measure == measure {
			return true
		}
	}
	return false
}
