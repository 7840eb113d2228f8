package plots

import (
	"math"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"github.com/riskaudit/riskaudit/validate"
)

// CompareDecision draws the decision curves of the two models of a
// comparison on one chart, with treating everyone and treating no one.
func CompareDecision(c *validate.Comparison) (Figure, error) {
	p := newPlot("Decision curves", "Risk threshold for treatment (%)", "Net benefit (true positives per patient)")
	hi := 0.01
	nb := c.NetBenefit
	mk := func(get func(validate.NetBenefitPair) float64) plotter.XYs {
		xys := make(plotter.XYs, 0, len(nb))
		for _, v := range nb {
			hi = math.Max(hi, get(v))
			xys = append(xys, plotter.XY{X: 100 * v.Threshold, Y: get(v)})
		}
		return xys
	}
	la := mk(func(v validate.NetBenefitPair) float64 { return v.A })
	lb := mk(func(v validate.NetBenefitPair) float64 { return v.B })
	all := mk(func(v validate.NetBenefitPair) float64 { return v.TreatAll })
	p.Y.Min, p.Y.Max = -hi*0.25, hi*1.1
	if len(nb) > 0 {
		p.X.Min, p.X.Max = 0, 100*nb[len(nb)-1].Threshold
	}
	p.X.Tick.Marker = percentTicks{}
	var keep plotter.XYs
	for _, v := range all {
		if v.Y >= p.Y.Min {
			keep = append(keep, v)
		}
	}
	none, err := line(plotter.XYs{{X: p.X.Min, Y: 0}, {X: p.X.Max, Y: 0}}, ink, 1)
	if err != nil {
		return Figure{}, err
	}
	p.Add(none)
	if len(keep) > 1 {
		lt, err := line(keep, orange, 1.5, vg.Points(5), vg.Points(2))
		if err != nil {
			return Figure{}, err
		}
		p.Add(lt)
		p.Legend.Add("treat everyone", lt)
	}
	l1, err := line(la, blue, 2)
	if err != nil {
		return Figure{}, err
	}
	l2, err := line(lb, vermillion, 2, vg.Points(6), vg.Points(2), vg.Points(1), vg.Points(2))
	if err != nil {
		return Figure{}, err
	}
	p.Add(l1, l2)
	p.Legend.Add("a: "+shorten(c.ModelA, 40), l1)
	p.Legend.Add("b: "+shorten(c.ModelB, 40), l2)
	p.Legend.Add("treat no one", none)
	shiftLegend(p, 0.40, 6*vg.Inch)
	svg, err := render(p, 6*vg.Inch, 4.5*vg.Inch)
	return Figure{Name: "decision_curves.svg", Title: "Decision curves of both models", SVG: svg}, err
}
