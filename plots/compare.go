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
	p := newPlot("", "Risk threshold for treatment (%)", "Net benefit (true positives per patient)")
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
	if len(nb) > 0 {
		netBenefitAxes(p, nb[0].Threshold, nb[len(nb)-1].Threshold, hi)
	}
	leg := newLegend()
	none, err := line(plotter.XYs{{X: p.X.Min, Y: 0}, {X: p.X.Max, Y: 0}}, ink, 1)
	if err != nil {
		return Figure{}, err
	}
	p.Add(none)
	var series []Series
	if keep := clipBelow(all, p.Y.Min); len(keep) > 1 {
		lt, err := line(keep, orange, 1.8, vg.Points(5), vg.Points(2))
		if err != nil {
			return Figure{}, err
		}
		p.Add(lt)
		leg.Add("treat all", lt)
		series = append(series, Series{Name: "treat all", Points: keep})
	}
	ca, cb := clipBelow(la, p.Y.Min), clipBelow(lb, p.Y.Min)
	l1, err := line(ca, blue, 2)
	if err != nil {
		return Figure{}, err
	}
	l2, err := line(cb, purple, 2, vg.Points(6), vg.Points(2), vg.Points(1), vg.Points(2))
	if err != nil {
		return Figure{}, err
	}
	p.Add(l1, l2)
	leg.Add("model a (named above)", l1)
	leg.Add("model b (named above)", l2)
	leg.Add("treat none (net benefit 0)", none)
	series = append(series, Series{Name: "a", Points: ca}, Series{Name: "b", Points: cb})
	s := sheet{title: "Decision curves of both models", subtitle: "a: " + c.ModelA + "; b: " + c.ModelB, legend: leg, entries: len(series) + 1}
	svg, png, err := single(p, s, 6*vg.Inch, 4.2*vg.Inch)
	return Figure{Name: "decision_curves.svg", Title: "Decision curves of both models", SVG: svg, PNG: png, Series: series}, err
}
