package plots

import (
	"fmt"
	"math"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/riskaudit/riskaudit/validate"
)

// CaseMix draws the distributions of the linear predictor in both
// cohorts and the standardised differences of the predictors.
func CaseMix(cm *validate.CaseMix) ([]Figure, error) {
	p := newPlot("Linear predictor in both cohorts", "Linear predictor (log-odds)", "Share of patients (%)")
	step := func(sh []float64) plotter.XYs {
		var xys plotter.XYs
		for i, v := range sh {
			xys = append(xys, plotter.XY{X: cm.LPEdges[i], Y: 100 * v}, plotter.XY{X: cm.LPEdges[i+1], Y: 100 * v})
		}
		return xys
	}
	ld, err := line(step(cm.LPDev), blue, 1.8)
	if err != nil {
		return nil, err
	}
	ln, err := line(step(cm.LPNew), vermillion, 1.8, vg.Points(5), vg.Points(2))
	if err != nil {
		return nil, err
	}
	p.Add(ld, ln)
	p.Y.Min = 0
	p.Legend.Add(fmt.Sprintf("development (mean %.2f, SD %.2f)", cm.LPMeanDev, cm.LPSDDev), ld)
	p.Legend.Add(fmt.Sprintf("new cohort (mean %.2f, SD %.2f)", cm.LPMeanNew, cm.LPSDNew), ln)
	lp, err := render(p, 6*vg.Inch, 4*vg.Inch)
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
	q := newPlot("Standardised differences (new − development)", "standardised difference", "")
	n := len(vals)
	q.Y.Min, q.Y.Max = -0.7, float64(n)-0.3
	q.Y.Tick.Marker = labels
	lim := 0.25
	missing := 0
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
		bar, err := line(plotter.XYs{{X: 0, Y: y}, {X: v, Y: y}}, col, 5)
		if err != nil {
			return nil, err
		}
		q.Add(bar)
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
	q.Legend.Add("|difference| ≥ 0.1 (common practice)", &plotter.Line{LineStyle: draw.LineStyle{Color: vermillion, Width: vg.Points(5)}})
	if missing > 0 {
		q.Legend.Add(fmt.Sprintf("(none): %d without a difference (constant in each cohort)", missing), &plotter.Line{})
	}
	sd, err := render(q, 6.5*vg.Inch, vg.Length(1.4+0.28*float64(n))*vg.Inch)
	if err != nil {
		return nil, err
	}
	return []Figure{{Name: "casemix_lp.svg", Title: "Linear predictor in both cohorts", SVG: lp},
		{Name: "casemix_differences.svg", Title: "Standardised differences of the predictors", SVG: sd}}, nil
}
