package plots

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/riskaudit/riskaudit/validate"
)

// CaseMix draws the distributions of the linear predictor in both
// cohorts and the standardised differences of the predictors.
func CaseMix(cm *validate.CaseMix) ([]Figure, error) {
	p := newPlot("", "Linear predictor (log-odds)", "Share of patients (%)")
	step := func(sh []float64) plotter.XYs {
		var xys plotter.XYs
		for i, v := range sh {
			xys = append(xys, plotter.XY{X: cm.LPEdges[i], Y: 100 * v}, plotter.XY{X: cm.LPEdges[i+1], Y: 100 * v})
		}
		return xys
	}
	dev, aud := step(cm.LPDev), step(cm.LPNew)
	ld, err := line(dev, blue, 1.8)
	if err != nil {
		return nil, err
	}
	ln, err := line(aud, vermillion, 1.8, vg.Points(5), vg.Points(2))
	if err != nil {
		return nil, err
	}
	p.Add(ld, ln)
	p.Y.Min = 0
	peak := 0.0
	for _, v := range append(slices.Clone(cm.LPDev), cm.LPNew...) {
		peak = math.Max(peak, 100*v)
	}
	p.Y.Max = 1.08 * math.Max(peak, 1)
	p.Y.Tick.Marker = roundTicks{}
	leg := newLegend()
	leg.Add(fmt.Sprintf("development cohort (mean %.2f, SD %.2f)", cm.LPMeanDev, cm.LPSDDev), ld)
	leg.Add(fmt.Sprintf("audited cohort (mean %.2f, SD %.2f)", cm.LPMeanNew, cm.LPSDNew), ln)
	lpSVG, lpPNG, err := single(p, sheet{title: "Linear predictor in both cohorts", legend: leg, entries: 2}, 6*vg.Inch, 3.8*vg.Inch)
	if err != nil {
		return nil, err
	}
	var labels rowTicks
	var vals []float64
	for _, pm := range cm.Predictors {
		if pm.Kind == "numeric" {
			labels, vals = append(labels, pm.Column), append(vals, pm.StdDiff[0])
			continue
		}
		for j, l := range pm.Levels {
			labels, vals = append(labels, shorten(pm.Column+" = "+l, 40)), append(vals, pm.StdDiff[j])
		}
	}
	q := newPlot("", "Standardised difference (audited − development)", "")
	n := len(vals)
	q.Y.Min, q.Y.Max = -0.7, float64(n)-0.3
	q.Y.Tick.Marker = labels
	q.Y.Tick.Length = 0
	q.Y.Padding = vg.Points(4)
	q.X.Tick.Marker = roundTicks{}
	lim := 0.25
	missing := 0
	var bars plotter.XYs
	for i, v := range vals {
		y := float64(n - 1 - i)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			// A predictor constant at different values in the two cohorts
			// has no standardised difference: no bar, a mark on the label.
			labels[i] += " (none)"
			missing++
			continue
		}
		col := blue
		if math.Abs(v) >= 0.1 {
			col = vermillion
		}
		seg := plotter.XYs{{X: 0, Y: y}, {X: v, Y: y}}
		bar, err := line(seg, col, 5)
		if err != nil {
			return nil, err
		}
		q.Add(bar)
		bars = append(bars, seg[1]) // the bar's drawn end
		lim = math.Max(lim, math.Abs(v)*1.1)
	}
	q.X.Min, q.X.Max = -lim, lim
	for _, x := range []float64{-0.1, 0.1} {
		ref, err := line(plotter.XYs{{X: x, Y: q.Y.Min}, {X: x, Y: q.Y.Max}}, grey, 1, vg.Points(4), vg.Points(3))
		if err != nil {
			return nil, err
		}
		q.Add(ref)
	}
	ql := newLegend()
	ql.Add("|difference| < 0.1", swatch(blue))
	ql.Add("|difference| ≥ 0.1 (a common rule of thumb for a notable shift)", swatch(vermillion))
	ql.Add("dashed lines: ±0.1", &plotter.Line{LineStyle: draw.LineStyle{Color: grey, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(4), vg.Points(3)}}})
	entries := 3
	if missing > 0 {
		ql.Add(fmt.Sprintf("(none): %d without a difference (constant in each cohort)", missing))
		entries++
	}
	sdSVG, sdPNG, err := single(q, sheet{title: "Standardised differences of the predictors", legend: ql, entries: entries}, 6.5*vg.Inch, vg.Length(0.9+0.28*float64(n))*vg.Inch)
	if err != nil {
		return nil, err
	}
	return []Figure{{Name: "casemix_lp.svg", Title: "Linear predictor in both cohorts", SVG: lpSVG, PNG: lpPNG,
		Series: []Series{{Name: "development", Points: dev}, {Name: "audited", Points: aud}}},
		{Name: "casemix_differences.svg", Title: "Standardised differences of the predictors", SVG: sdSVG, PNG: sdPNG,
			Series: []Series{{Name: "differences", Points: bars}}}}, nil
}
