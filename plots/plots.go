// Package plots draws the audit's figures as SVG with gonum/plot: the ROC
// curve, the calibration plot, the decision curve and the histogram of
// predicted risk by outcome.
//
// The look is riskaudit's own: risks in percent on both calibration axes,
// a light dotted grid, the Okabe–Ito colour-blind-safe palette (Okabe &
// Ito 2008, "Color universal design"), and the distribution of predicted
// risk drawn as mirrored bars under the calibration plot (events above the
// baseline, non-events below).
package plots

import (
	"bytes"
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/validate"
)

// The palette (Okabe & Ito 2008).
var (
	blue       = color.RGBA{0x00, 0x72, 0xB2, 0xff}
	vermillion = color.RGBA{0xD5, 0x5E, 0x00, 0xff}
	orange     = color.RGBA{0xE6, 0x9F, 0x00, 0xff}
	skyBand    = color.NRGBA{0x56, 0xB4, 0xE9, 0x60}
	grey       = color.RGBA{0x80, 0x80, 0x80, 0xff}
	gridGrey   = color.RGBA{0xd0, 0xd0, 0xd0, 0xff}
	ink        = color.RGBA{0x20, 0x20, 0x20, 0xff}
)

// Figure is one drawn figure.
type Figure struct {
	// Name is the file name, such as "roc.svg".
	Name string
	// Title is the figure's caption.
	Title string
	SVG   []byte
}

// All draws every figure of a performance. label names the cohort (it
// is user text and is escaped by the SVG writer).
func All(perf *validate.Performance, label string) ([]Figure, error) {
	type maker struct {
		name, title string
		draw        func(*validate.Performance, string) ([]byte, error)
	}
	makers := []maker{
		{"calibration.svg", "Calibration: observed against predicted risk, with the distribution of predicted risk by outcome", Calibration},
		{"roc.svg", "ROC curve", ROC},
		{"decision_curve.svg", "Decision curve: net benefit by risk threshold", DecisionCurve},
		{"risk_histogram.svg", "Predicted risk by outcome", RiskHistogram},
	}
	var out []Figure
	for _, m := range makers {
		b, err := m.draw(perf, label)
		if err != nil {
			return nil, fmt.Errorf("drawing %s: %w", m.name, err)
		}
		out = append(out, Figure{Name: m.name, Title: m.title, SVG: b})
	}
	return out, nil
}

// caption joins a figure's title and the label, shortened to fit.
func caption(title, label string) string {
	if label == "" {
		return title
	}
	return title + " — " + shorten(label, 50-len([]rune(title)))
}

// shorten cuts s to at most n characters, ending in an ellipsis when cut.
func shorten(s string, n int) string {
	if r := []rune(s); len(r) > n && n > 1 {
		return string(r[:n-1]) + "…"
	}
	return s
}

func newPlot(title, x, y string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.Padding = vg.Points(8)
	p.Title.TextStyle.Font.Size = vg.Points(11.5)
	p.Title.TextStyle.Color = ink
	p.X.Label.Text = x
	p.Y.Label.Text = y
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font.Size = vg.Points(10.5)
		a.Tick.Label.Font.Size = vg.Points(9)
		a.Color, a.Tick.Color = grey, grey
	}
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = gridGrey, gridGrey
	g.Vertical.Dashes = []vg.Length{vg.Points(1), vg.Points(2)}
	g.Horizontal.Dashes = g.Vertical.Dashes
	p.Add(g)
	p.Legend.Top = true
	p.Legend.Left = true
	p.Legend.TextStyle.Font.Size = vg.Points(9)
	p.Legend.XOffs = vg.Points(6)
	p.Legend.YOffs = -vg.Points(4)
	p.Legend.ThumbnailWidth = vg.Points(22)
	p.Legend.Padding = vg.Points(5)
	return p
}

// shiftLegend moves the (left-aligned) legend right by the given share of
// a figure of the given width, to clear the data.
func shiftLegend(p *plot.Plot, share float64, width vg.Length) {
	p.Legend.XOffs = vg.Length(share) * (width - vg.Points(70))
}

func line(xys plotter.XYs, c color.Color, width float64, dashes ...vg.Length) (*plotter.Line, error) {
	l, err := plotter.NewLine(xys)
	if err != nil {
		return nil, err
	}
	l.Color = c
	l.Width = vg.Points(width)
	l.Dashes = dashes
	return l, nil
}

// render draws the plot into an SVG. Fonts are named, not embedded; since
// a viewer may substitute a wider font, every legend is left-aligned so
// that its text runs away from its symbols.
func render(p *plot.Plot, w, h vg.Length) ([]byte, error) {
	c := vgsvg.New(w, h)
	p.Draw(margins(draw.New(c)))
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// margins keeps a figure clear of the edges of its canvas.
func margins(c draw.Canvas) draw.Canvas {
	return draw.Crop(c, vg.Points(6), -vg.Points(14), vg.Points(4), -vg.Points(6))
}

// percentTicks marks 0 … max percent in steps that give about six
// labels.
type percentTicks struct{}

func (percentTicks) Ticks(min, max float64) []plot.Tick {
	span := max - min
	step := 10.0
	for _, s := range []float64{1, 2, 5, 10, 20, 25} {
		if span/s <= 7 {
			step = s
			break
		}
	}
	var ts []plot.Tick
	for v := math.Ceil(math.Max(min, 0)/step) * step; v <= max+1e-9; v += step {
		ts = append(ts, plot.Tick{Value: v, Label: fmt.Sprintf("%g", v+0)})
	}
	return ts
}

// Calibration draws the calibration plot: the line of ideal agreement,
// the flexible calibration curve with its pointwise band, the risk groups
// with their 95% intervals and, in a strip below the zero line, the
// distribution of predicted risk by outcome as mirrored bars (events up,
// non-events down, each as a share of its own group).
func Calibration(perf *validate.Performance, label string) ([]byte, error) {
	curve := perf.Curves.Flexible
	groups := perf.Curves.Groups
	xTop, yTop := 0.0, 0.0
	for _, c := range curve {
		xTop = math.Max(xTop, c.Predicted)
		yTop = math.Max(yTop, c.Upper)
	}
	for _, g := range groups {
		xTop = math.Max(xTop, g.MaxRisk)
		yTop = math.Max(yTop, g.Observed.CI[1])
	}
	// A risk on or just below a multiple of 10% keeps room to its right.
	xTop = math.Max(10, math.Min(100, math.Ceil(xTop*10+0.02)*10))
	yTop = math.Max(xTop, math.Min(100, math.Ceil(yTop*10)*10))
	strip := 0.22 * yTop // height of the distribution strip below zero
	p := newPlot(caption("Calibration", label), "Predicted risk (%)", "Observed events (%)")
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, xTop, -strip, yTop
	p.X.Tick.Marker, p.Y.Tick.Marker = percentTicks{}, percentTicks{}
	if err := addDistribution(p, perf.Curves.Histogram, xTop, strip); err != nil {
		return nil, err
	}
	ideal, err := line(plotter.XYs{{X: 0, Y: 0}, {X: math.Min(xTop, yTop), Y: math.Min(xTop, yTop)}}, grey, 1, vg.Points(4), vg.Points(3))
	if err != nil {
		return nil, err
	}
	p.Add(ideal)
	p.Legend.Add("ideal agreement", ideal)
	if len(curve) > 0 && curve[0].Predicted == curve[len(curve)-1].Predicted {
		// Every risk is the same: the curve is one point, the event
		// rate, with its band as an interval.
		c := curve[0]
		pt := plotter.XYs{{X: 100 * c.Predicted, Y: 100 * c.Observed}}
		sc, err := plotter.NewScatter(pt)
		if err != nil {
			return nil, err
		}
		// A ring, so that a risk group's mark at the same place shows
		// inside it.
		sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.RingGlyph{}, blue, vg.Points(6)
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYs
			plotter.YErrors
		}{pt, plotter.YErrors{{Low: 100 * (c.Observed - c.Lower), High: 100 * (c.Upper - c.Observed)}}})
		if err != nil {
			return nil, err
		}
		eb.LineStyle.Color, eb.LineStyle.Width = blue, vg.Points(2)
		p.Add(eb, sc)
		p.Legend.Add("flexible curve: one point (every risk the same), 95% band", sc)
	} else if len(curve) > 1 {
		band := make(plotter.XYs, 0, 2*len(curve))
		for _, c := range curve {
			band = append(band, plotter.XY{X: 100 * c.Predicted, Y: 100 * c.Upper})
		}
		for i := len(curve) - 1; i >= 0; i-- {
			band = append(band, plotter.XY{X: 100 * curve[i].Predicted, Y: 100 * curve[i].Lower})
		}
		poly, err := plotter.NewPolygon(band)
		if err != nil {
			return nil, err
		}
		poly.Color = skyBand
		poly.LineStyle.Width = 0
		p.Add(poly)
		xys := make(plotter.XYs, len(curve))
		for i, c := range curve {
			xys[i] = plotter.XY{X: 100 * c.Predicted, Y: 100 * c.Observed}
		}
		l, err := line(xys, blue, 2)
		if err != nil {
			return nil, err
		}
		p.Add(l)
		p.Legend.Add("flexible curve (LOWESS), 95% band", l, poly)
	}
	if len(groups) > 0 {
		pts := make(plotter.XYs, len(groups))
		errs := make(plotter.YErrors, len(groups))
		for i, g := range groups {
			pts[i] = plotter.XY{X: 100 * g.MeanRisk, Y: 100 * g.Observed.Value}
			errs[i].Low = 100 * (g.Observed.Value - g.Observed.CI[0])
			errs[i].High = 100 * (g.Observed.CI[1] - g.Observed.Value)
		}
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle.Shape = draw.PyramidGlyph{}
		sc.GlyphStyle.Color = vermillion
		sc.GlyphStyle.Radius = vg.Points(3.5)
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYs
			plotter.YErrors
		}{pts, errs})
		if err != nil {
			return nil, err
		}
		eb.LineStyle.Color = vermillion
		eb.LineStyle.Width = vg.Points(1)
		p.Add(eb, sc)
		what := "risk groups"
		if len(groups) == 1 {
			what = "risk group"
		}
		p.Legend.Add(fmt.Sprintf("%d %s, observed with 95%% CI", len(groups), what), sc)
	}
	p.Legend.Add("risk distribution below 0: with the event (up)", &plotter.Line{LineStyle: draw.LineStyle{Color: vermillion, Width: vg.Points(6)}})
	p.Legend.Add("and without (down)", &plotter.Line{LineStyle: draw.LineStyle{Color: blue, Width: vg.Points(6)}})
	return render(p, 6*vg.Inch, 6.4*vg.Inch)
}

// addDistribution draws the risk histogram as mirrored bars in the strip
// [−strip, 0] of the calibration plot, around its middle.
func addDistribution(p *plot.Plot, h metrics.Histogram, xTop, strip float64) error {
	nE, nN := 0, 0
	for i := range h.Events {
		nE += h.Events[i]
		nN += h.NonEvents[i]
	}
	peak := 0.0
	for i := range h.Events {
		peak = math.Max(peak, math.Max(share(h.Events[i], nE), share(h.NonEvents[i], nN)))
	}
	if peak == 0 {
		return nil
	}
	mid := -strip / 2
	scale := 0.45 * strip / peak
	base, err := line(plotter.XYs{{X: 0, Y: mid}, {X: xTop, Y: mid}}, grey, 0.5)
	if err != nil {
		return err
	}
	p.Add(base)
	for i := range h.Events {
		lo, hi := 100*h.Edges[i], math.Min(100*h.Edges[i+1], xTop)
		if lo >= xTop {
			break
		}
		for _, bar := range []struct {
			v float64
			c color.Color
		}{{share(h.Events[i], nE), vermillion}, {-share(h.NonEvents[i], nN), blue}} {
			if bar.v == 0 {
				continue
			}
			top := mid + bar.v*scale
			poly, err := plotter.NewPolygon(plotter.XYs{{X: lo, Y: mid}, {X: hi, Y: mid}, {X: hi, Y: top}, {X: lo, Y: top}})
			if err != nil {
				return err
			}
			poly.Color = bar.c
			poly.LineStyle.Width = 0
			p.Add(poly)
		}
	}
	return nil
}

func share(k, n int) float64 {
	if n == 0 {
		return 0
	}
	return 100 * float64(k) / float64(n)
}

// ROC draws the ROC curve with the diagonal of no discrimination.
func ROC(perf *validate.Performance, label string) ([]byte, error) {
	d := perf.Discrimination
	p := newPlot(caption("ROC curve", label), "1 − specificity (false-positive rate, %)", "Sensitivity (true-positive rate, %)")
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, 100, 0, 100
	p.X.Tick.Marker, p.Y.Tick.Marker = percentTicks{}, percentTicks{}
	p.Legend.Top = false
	shiftLegend(p, 0.40, 5.5*vg.Inch)
	p.Legend.YOffs = vg.Points(6)
	diag, err := line(plotter.XYs{{X: 0, Y: 0}, {X: 100, Y: 100}}, grey, 1, vg.Points(4), vg.Points(3))
	if err != nil {
		return nil, err
	}
	xys := make(plotter.XYs, len(perf.Curves.ROC))
	for i, r := range perf.Curves.ROC {
		xys[i] = plotter.XY{X: 100 * r.FPR, Y: 100 * r.TPR}
	}
	l, err := line(xys, blue, 2)
	if err != nil {
		return nil, err
	}
	p.Add(diag, l)
	p.Legend.Add("model: AUC "+aucLabel(d.AUC, d.CI), l)
	p.Legend.Add("no discrimination", diag)
	return render(p, 5.5*vg.Inch, 5.5*vg.Inch)
}

// aucLabel writes an AUC with its interval for a legend, "not
// estimable" where the interval (or the AUC) does not exist.
func aucLabel(auc float64, ci [2]float64) string {
	switch {
	case !finite(auc):
		return "not estimable"
	case !finite(ci[0]) || !finite(ci[1]):
		return fmt.Sprintf("%.3f (95%% CI not estimable)", auc)
	}
	return fmt.Sprintf("%.3f (95%% CI %.3f–%.3f)", auc, ci[0], ci[1])
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

// finitePoints keeps the points whose coordinates are both finite:
// gonum/plot refuses NaN, and a measure that does not exist has no place
// on a chart.
func finitePoints(xys plotter.XYs) plotter.XYs {
	out := make(plotter.XYs, 0, len(xys))
	for _, v := range xys {
		if finite(v.X) && finite(v.Y) {
			out = append(out, v)
		}
	}
	return out
}

// DecisionCurve draws net benefit against the risk threshold for the
// model, treating everyone and treating no one.
func DecisionCurve(perf *validate.Performance, label string) ([]byte, error) {
	nb := perf.NetBenefit
	p := newPlot(caption("Decision curve", label), "Risk threshold for treatment (%)", "Net benefit (true positives per patient)")
	model := make(plotter.XYs, len(nb))
	all := make(plotter.XYs, len(nb))
	hi := 0.0
	for i, v := range nb {
		model[i] = plotter.XY{X: 100 * v.Threshold, Y: v.Model}
		all[i] = plotter.XY{X: 100 * v.Threshold, Y: v.TreatAll}
		hi = math.Max(hi, math.Max(v.Model, v.TreatAll))
	}
	if len(nb) == 0 {
		return render(p, 6*vg.Inch, 4.5*vg.Inch)
	}
	hi = math.Max(hi, 0.01)
	p.Y.Min, p.Y.Max = -hi*0.25, hi*1.1
	p.X.Min, p.X.Max = 0, 100*nb[len(nb)-1].Threshold
	p.X.Tick.Marker = percentTicks{}
	clip := func(xys plotter.XYs) plotter.XYs {
		out := make(plotter.XYs, 0, len(xys))
		for _, v := range xys {
			if v.Y >= p.Y.Min {
				out = append(out, v)
			}
		}
		return out
	}
	none, err := line(plotter.XYs{{X: p.X.Min, Y: 0}, {X: p.X.Max, Y: 0}}, ink, 1)
	if err != nil {
		return nil, err
	}
	p.Add(none)
	if a := clip(all); len(a) > 1 {
		la, err := line(a, orange, 1.5, vg.Points(5), vg.Points(2))
		if err != nil {
			return nil, err
		}
		p.Add(la)
		p.Legend.Add("treat everyone", la)
	}
	lm, err := line(clip(model), blue, 2)
	if err != nil {
		return nil, err
	}
	pts, err := plotter.NewScatter(clip(model))
	if err != nil {
		return nil, err
	}
	pts.GlyphStyle.Color = blue
	pts.GlyphStyle.Shape = draw.CircleGlyph{}
	pts.GlyphStyle.Radius = vg.Points(2)
	p.Add(lm, pts)
	p.Legend.Add("treat if risk ≥ threshold (model)", lm, pts)
	p.Legend.Add("treat no one", none)
	shiftLegend(p, 0.42, 6*vg.Inch)
	return render(p, 6*vg.Inch, 4.5*vg.Inch)
}

// RiskHistogram draws the distribution of predicted risk for patients
// with and without the event, each as a share of its group.
func RiskHistogram(perf *validate.Performance, label string) ([]byte, error) {
	h := perf.Curves.Histogram
	p := newPlot(caption("Predicted risk by outcome", label), "Predicted risk (%)", "Share of patients in the group (%)")
	nE, nN := 0, 0
	for i := range h.Events {
		nE += h.Events[i]
		nN += h.NonEvents[i]
	}
	step := func(counts []int, n int) plotter.XYs {
		var xys plotter.XYs
		for i, c := range counts {
			v := share(c, n)
			xys = append(xys, plotter.XY{X: 100 * h.Edges[i], Y: v}, plotter.XY{X: 100 * h.Edges[i+1], Y: v})
		}
		return xys
	}
	le, err := line(step(h.Events, nE), vermillion, 1.8)
	if err != nil {
		return nil, err
	}
	ln, err := line(step(h.NonEvents, nN), blue, 1.8, vg.Points(5), vg.Points(2))
	if err != nil {
		return nil, err
	}
	p.Add(le, ln)
	p.X.Min, p.X.Max = 0, 100*h.Edges[len(h.Edges)-1]
	p.Y.Min = 0
	peak := 0.0
	for i := range h.Events {
		peak = math.Max(peak, math.Max(share(h.Events[i], nE), share(h.NonEvents[i], nN)))
	}
	p.Y.Max = 1.12 * math.Max(peak, 1)
	p.X.Tick.Marker = percentTicks{}
	p.Legend.Add(fmt.Sprintf("with the event (n = %d)", nE), le)
	p.Legend.Add(fmt.Sprintf("without (n = %d)", nN), ln)
	shiftLegend(p, 0.55, 6*vg.Inch)
	return render(p, 6*vg.Inch, 4.2*vg.Inch)
}
