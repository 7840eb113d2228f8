// Package plots draws the audit's figures with gonum/plot, each as SVG
// and as PNG at print resolution: the ROC curve, the calibration figure,
// the decision curve and the histogram of predicted risk by outcome, and
// the subgroup, case-mix, comparison and trend charts.
//
// The look is riskaudit's own: a bold title with the model's name as a
// subtitle above, every legend in a strip below the charts (never on the
// data), risks in percent, a light dotted grid, ticks at round values,
// the Okabe–Ito colour-blind-safe palette (Okabe & Ito 2008, "Color
// universal design", https://jfly.uni-koeln.de/color/) with no colour
// shared by two series of one chart, and Liberation Sans named with
// metric-compatible fallbacks (fontFamily). The calibration figure puts
// observed against predicted risk on equal axes in a square panel, with
// the distribution of predicted risk by outcome as two rows of bars in a
// separate panel below, aligned on the same risk axis.
package plots

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

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
	green      = color.RGBA{0x00, 0x9E, 0x73, 0xff}
	purple     = color.RGBA{0xCC, 0x79, 0xA7, 0xff}
	skyBand    = color.NRGBA{0x56, 0xB4, 0xE9, 0x60}
	grey       = color.RGBA{0x80, 0x80, 0x80, 0xff}
	gridGrey   = color.RGBA{0xd0, 0xd0, 0xd0, 0xff}
	ink        = color.RGBA{0x20, 0x20, 0x20, 0xff}
)

// Figure is one drawn figure.
type Figure struct {
	// Name is the SVG file name, such as "roc.svg"; the PNG copy is
	// PNGName.
	Name string
	// Title is the figure's caption.
	Title string
	SVG   []byte
	// PNG is the same figure at PNGDPI.
	PNG []byte
	// Series are the data the figure draws, series by series, in the
	// figure's own units (risks in percent), so that a test can check
	// them against audit.json.
	Series []Series
}

// Series is the data of one drawn series.
type Series struct {
	// Name says what the series is, such as "treat all".
	Name   string
	Points plotter.XYs
}

// All draws every figure of a performance. label names the model (it is
// user text, escaped by the SVG writer) and is the figures' subtitle.
func All(perf *validate.Performance, label string) ([]Figure, error) {
	type maker struct {
		name, title string
		draw        func(*validate.Performance, string) (Figure, error)
	}
	makers := []maker{
		{"calibration.svg", "Calibration: observed against predicted risk, with the distribution of predicted risk by outcome", calibration},
		{"roc.svg", "ROC curve", roc},
		{"decision_curve.svg", "Decision curve: net benefit by risk threshold", decisionCurve},
		{"risk_histogram.svg", "Predicted risk by outcome", riskHistogram},
	}
	// The figures are drawn on up to GOMAXPROCS goroutines (each reads
	// perf, builds its own plots and canvases); the first error in the
	// makers' order is returned.
	out := make([]Figure, len(makers))
	errs := make([]error, len(makers))
	eachConcurrently(len(makers), func(i int) {
		m := makers[i]
		f, err := m.draw(perf, label)
		if err != nil {
			errs[i] = fmt.Errorf("drawing %s: %w", m.name, err)
			return
		}
		f.Name, f.Title = m.name, m.title
		out[i] = f
	})
	for _, err := range errs {
		if err != nil {
			return nil, err
		}
	}
	return out, nil
}

// subtitle names the model under a figure's title.
func subtitle(label string) string {
	if label == "" {
		return ""
	}
	return "Model: " + label
}

// shorten cuts s to at most n characters, ending in an ellipsis when cut.
// Titles are never shortened (they wrap); only row labels of very long
// user text are, and the table in the report gives them whole.
func shorten(s string, n int) string {
	if r := []rune(s); len(r) > n && n > 1 {
		return string(r[:n-1]) + "…"
	}
	return s
}

// newPlot is a chart in the figures' style, its title (if any) drawn by
// the sheet around it.
func newPlot(title, x, y string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.Padding = vg.Points(6)
	p.Title.TextStyle.Font = bold(10)
	p.Title.TextStyle.Color = ink
	p.X.Label.Text = x
	p.Y.Label.Text = y
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = sans(10)
		a.Label.TextStyle.Color = ink
		a.Tick.Label.Font = sans(9)
		a.Tick.Label.Color = ink
		a.Color, a.Tick.Color = grey, grey
	}
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = gridGrey, gridGrey
	g.Vertical.Dashes = []vg.Length{vg.Points(1), vg.Points(2)}
	g.Horizontal.Dashes = g.Vertical.Dashes
	p.Add(g)
	styleLegend(&p.Legend)
	return p
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

// swatch is a legend thumbnail of a filled colour.
func swatch(c color.Color) plot.Thumbnailer {
	return &plotter.Line{LineStyle: draw.LineStyle{Color: c, Width: vg.Points(7)}}
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
	for v := math.Ceil(math.Max(min, 0)/step-1e-9) * step; v <= max+1e-9; v += step {
		ts = append(ts, plot.Tick{Value: v, Label: fmt.Sprintf("%g", v+0)})
	}
	return ts
}

// roundTicks marks multiples of 1, 2 or 5 × 10^k, about five to seven
// of them, so that 0 is labelled whenever the range holds it.
type roundTicks struct{}

func (roundTicks) Ticks(min, max float64) []plot.Tick {
	step := roundStep(max - min)
	var ts []plot.Tick
	for k := math.Ceil(min/step - 1e-9); k*step <= max+1e-9*step; k++ {
		v := k * step
		if math.Abs(v) < 1e-12*step {
			v = 0
		}
		ts = append(ts, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', decimals(step), 64)})
	}
	return ts
}

// roundStep is the step of 1, 2 or 5 × 10^k that cuts span into at most
// seven parts.
func roundStep(span float64) float64 {
	if !(span > 0) || math.IsInf(span, 0) {
		return 1
	}
	e := math.Pow(10, math.Floor(math.Log10(span/7)))
	for _, m := range []float64{1, 2, 5, 10} {
		if span/(m*e) <= 7 {
			return m * e
		}
	}
	return 10 * e
}

// decimals is how many decimals a multiple of step needs.
func decimals(step float64) int {
	d := 0
	for d < 10 && math.Abs(step*math.Pow(10, float64(d))-math.Round(step*math.Pow(10, float64(d)))) > 1e-9 {
		d++
	}
	return d
}

// calibration draws the calibration figure: a square main panel with
// equal axes where observed equals predicted on the 45° diagonal, the
// LOWESS smooth with its pointwise band and the risk groups' observed
// proportions with 95% intervals; below it, on the same risk axis, the
// distribution of predicted risk as two rows of bars, patients with the
// event above and without below, each as a share of its own group.
func calibration(perf *validate.Performance, label string) (Figure, error) {
	curve := perf.Curves.Flexible
	groups := perf.Curves.Groups
	top := 0.0
	for _, c := range curve {
		top = math.Max(top, math.Max(c.Predicted, c.Upper))
	}
	for _, g := range groups {
		top = math.Max(top, math.Max(g.MaxRisk, g.Observed.CI[1]))
	}
	// Equal axes: the same range on both, a multiple of 10% that keeps a
	// risk just below it clear of the edge.
	top = math.Max(10, math.Min(100, math.Ceil(top*10+0.02)*10))
	p := newPlot("", "Predicted risk (%)", "Observed proportion with the event (%)")
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, top, 0, top
	p.X.Tick.Marker, p.Y.Tick.Marker = percentTicks{}, percentTicks{}
	leg := newLegend()
	n := 0
	add := func(text string, th ...plot.Thumbnailer) { leg.Add(text, th...); n++ }
	var series []Series
	diag, err := line(plotter.XYs{{X: 0, Y: 0}, {X: top, Y: top}}, grey, 1, vg.Points(4), vg.Points(3))
	if err != nil {
		return Figure{}, err
	}
	p.Add(diag)
	add("diagonal: observed equals predicted (perfect calibration)", diag)
	if len(curve) > 0 && curve[0].Predicted == curve[len(curve)-1].Predicted {
		// Every risk is the same: the smooth is one point, the event
		// rate, with its band as an interval.
		c := curve[0]
		pt := plotter.XYs{{X: 100 * c.Predicted, Y: 100 * c.Observed}}
		sc, err := plotter.NewScatter(pt)
		if err != nil {
			return Figure{}, err
		}
		// A ring, so that a risk group's mark at the same place shows
		// inside it.
		sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.RingGlyph{}, blue, vg.Points(6)
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYs
			plotter.YErrors
		}{pt, plotter.YErrors{{Low: 100 * (c.Observed - c.Lower), High: 100 * (c.Upper - c.Observed)}}})
		if err != nil {
			return Figure{}, err
		}
		eb.LineStyle.Color, eb.LineStyle.Width, eb.CapWidth = blue, vg.Points(2), 0
		p.Add(eb, sc)
		add("LOWESS smooth: one point (every risk the same), with its 95% band", sc)
		series = append(series, Series{Name: "smooth", Points: pt})
	} else if len(curve) > 1 {
		band := make(plotter.XYs, 0, 2*len(curve))
		xys := make(plotter.XYs, len(curve))
		lo, hi := make(plotter.XYs, len(curve)), make(plotter.XYs, len(curve))
		for i, c := range curve {
			xys[i] = plotter.XY{X: 100 * c.Predicted, Y: 100 * c.Observed}
			lo[i] = plotter.XY{X: 100 * c.Predicted, Y: 100 * c.Lower}
			hi[i] = plotter.XY{X: 100 * c.Predicted, Y: 100 * c.Upper}
		}
		band = append(band, hi...)
		for i := len(lo) - 1; i >= 0; i-- {
			band = append(band, lo[i])
		}
		poly, err := plotter.NewPolygon(band)
		if err != nil {
			return Figure{}, err
		}
		poly.Color = skyBand
		poly.LineStyle.Width = 0
		l, err := line(xys, blue, 2)
		if err != nil {
			return Figure{}, err
		}
		p.Add(poly, l)
		if n := perf.Curves.AveragedOver; n > 0 {
			add(fmt.Sprintf("average of the %d imputations' LOWESS smooths of the outcomes on predicted risk", n), l)
			add("the average of their pointwise 95% bands", swatch(skyBand))
		} else {
			add("LOWESS smooth of the outcomes on predicted risk", l)
			add("its pointwise 95% band", swatch(skyBand))
		}
		series = append(series, Series{Name: "smooth", Points: xys}, Series{Name: "band lower", Points: lo}, Series{Name: "band upper", Points: hi})
	}
	if len(groups) > 0 {
		pts := make(plotter.XYs, len(groups))
		errs := make(plotter.YErrors, len(groups))
		for i, g := range groups {
			pts[i] = plotter.XY{X: 100 * g.MeanRisk, Y: 100 * g.Observed.Value}
			errs[i].Low = 100 * (g.Observed.Value - g.Observed.CI[0])
			errs[i].High = 100 * (g.Observed.CI[1] - g.Observed.Value)
		}
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYs
			plotter.YErrors
		}{pts, errs})
		if err != nil {
			return Figure{}, err
		}
		eb.LineStyle.Color, eb.LineStyle.Width, eb.CapWidth = ink, vg.Points(1.2), 0
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return Figure{}, err
		}
		sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.BoxGlyph{}, ink, vg.Points(3)
		p.Add(eb, sc)
		what := "risk groups"
		if len(groups) == 1 {
			what = "risk group"
		}
		first := ""
		if perf.Curves.AveragedOver > 0 {
			first = " (in the first imputation)"
		}
		add(fmt.Sprintf("%d %s: share with the event at the group's mean risk, 95%% CI%s", len(groups), what, first), sc)
		series = append(series, Series{Name: "groups", Points: pts})
	}
	q, nE, nN, err := distribution(perf.Curves.Histogram, top)
	if err != nil {
		return Figure{}, err
	}
	add(fmt.Sprintf("lower panel: predicted risk of the %d patients with the event", nE), swatch(vermillion))
	add(fmt.Sprintf("and of the %d without", nN), swatch(green))
	s := sheet{title: "Calibration", subtitle: subtitle(label), legend: leg, entries: n}
	w := 6 * vg.Inch
	inner := w - vg.Points(10) // margins
	// The main panel's height makes its data area square; the lower
	// panel is a fixed strip.
	lowerH := vg.Points(110)
	gap := vg.Points(8)
	layout := func(c draw.Canvas) []draw.Canvas {
		rest := s.frame(c)
		top := draw.Crop(rest, 0, 0, lowerH+gap, 0)
		bottom := draw.Crop(rest, 0, 0, 0, -(rest.Max.Y - rest.Min.Y - lowerH))
		cs := []draw.Canvas{top, bottom}
		alignX([]*plot.Plot{p, q}, cs)
		return cs
	}
	// Lay the figure out once at a trial height, then make the main
	// panel's data area square by the height of the canvas.
	h0 := s.headHeight(inner) + s.footHeight() + w + gap + lowerH
	td := p.DataCanvas(layout(margins(draw.New(vgsvg.New(w, h0))))[0])
	h := h0 - ((td.Max.Y - td.Min.Y) - (td.Max.X - td.Min.X))
	svg, png, err := paint(w, h, func(c draw.Canvas) error {
		cs := layout(c)
		drawPlot(p, cs[0])
		drawPlot(q, cs[1])
		s.foot(c)
		return nil
	})
	if err != nil {
		return Figure{}, err
	}
	return Figure{SVG: svg, PNG: png, Series: series}, nil
}

// distribution is the calibration figure's lower panel: the predicted
// risks of the patients with the event (upper row) and without (lower
// row) as bars of their share of the group, both rows on one scale.
func distribution(h metrics.Histogram, top float64) (*plot.Plot, int, int, error) {
	q := newPlot("", "Predicted risk (%)", "")
	q.X.Min, q.X.Max = 0, top
	q.X.Tick.Marker = percentTicks{}
	nE, nN := 0, 0
	for i := range h.Events {
		nE += h.Events[i]
		nN += h.NonEvents[i]
	}
	q.Y.Min, q.Y.Max = 0, 2
	q.Y.Tick.Length = 0
	q.Y.Tick.Marker = labelledRows{{1.45, "with the event"}, {0.45, "without"}}
	peak := 0.0
	for i := range h.Events {
		peak = math.Max(peak, math.Max(share(h.Events[i], nE), share(h.NonEvents[i], nN)))
	}
	for _, base := range []float64{0, 1} {
		b, err := line(plotter.XYs{{X: 0, Y: base + 0.02}, {X: top, Y: base + 0.02}}, grey, 0.5)
		if err != nil {
			return nil, 0, 0, err
		}
		q.Add(b)
	}
	if peak == 0 {
		return q, nE, nN, nil
	}
	scale := 0.85 / peak
	for i := range h.Events {
		lo, hi := 100*h.Edges[i], math.Min(100*h.Edges[i+1], top)
		if lo >= top {
			break
		}
		for _, bar := range []struct {
			base, v float64
			c       color.Color
		}{{1.02, share(h.Events[i], nE), vermillion}, {0.02, share(h.NonEvents[i], nN), green}} {
			if bar.v == 0 {
				continue
			}
			t := bar.base + bar.v*scale
			poly, err := plotter.NewPolygon(plotter.XYs{{X: lo, Y: bar.base}, {X: hi, Y: bar.base}, {X: hi, Y: t}, {X: lo, Y: t}})
			if err != nil {
				return nil, 0, 0, err
			}
			poly.Color = bar.c
			poly.LineStyle.Color, poly.LineStyle.Width = color.White, vg.Points(0.3)
			q.Add(poly)
		}
	}
	return q, nE, nN, nil
}

// labelledRows labels rows of a chart at given heights.
type labelledRows []struct {
	at    float64
	label string
}

func (r labelledRows) Ticks(_, _ float64) []plot.Tick {
	ts := make([]plot.Tick, len(r))
	for i, l := range r {
		ts[i] = plot.Tick{Value: l.at, Label: l.label}
	}
	return ts
}

func share(k, n int) float64 {
	if n == 0 {
		return 0
	}
	return 100 * float64(k) / float64(n)
}

// Calibration draws the calibration figure as SVG.
func Calibration(perf *validate.Performance, label string) ([]byte, error) {
	f, err := calibration(perf, label)
	return f.SVG, err
}

// ROC draws the ROC curve as SVG.
func ROC(perf *validate.Performance, label string) ([]byte, error) {
	f, err := roc(perf, label)
	return f.SVG, err
}

// DecisionCurve draws the decision curve as SVG.
func DecisionCurve(perf *validate.Performance, label string) ([]byte, error) {
	f, err := decisionCurve(perf, label)
	return f.SVG, err
}

// RiskHistogram draws the histogram of predicted risk as SVG.
func RiskHistogram(perf *validate.Performance, label string) ([]byte, error) {
	f, err := riskHistogram(perf, label)
	return f.SVG, err
}

// roc draws the ROC curve with the diagonal of no discrimination.
func roc(perf *validate.Performance, label string) (Figure, error) {
	d := perf.Discrimination
	p := newPlot("", "1 − specificity (false-positive rate, %)", "Sensitivity (true-positive rate, %)")
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, 100, 0, 100
	p.X.Tick.Marker, p.Y.Tick.Marker = percentTicks{}, percentTicks{}
	diag, err := line(plotter.XYs{{X: 0, Y: 0}, {X: 100, Y: 100}}, grey, 1, vg.Points(4), vg.Points(3))
	if err != nil {
		return Figure{}, err
	}
	xys := make(plotter.XYs, len(perf.Curves.ROC))
	for i, r := range perf.Curves.ROC {
		xys[i] = plotter.XY{X: 100 * r.FPR, Y: 100 * r.TPR}
	}
	l, err := line(xys, blue, 2)
	if err != nil {
		return Figure{}, err
	}
	p.Add(diag, l)
	leg := newLegend()
	leg.Add("model: AUC "+aucLabel(d.AUC, d.CI), l)
	leg.Add("diagonal: no discrimination (AUC 0.5)", diag)
	svg, png, err := single(p, sheet{title: "ROC curve", subtitle: subtitle(label), legend: leg, entries: 2}, 5.5*vg.Inch, 5.3*vg.Inch)
	return Figure{SVG: svg, PNG: png, Series: []Series{{Name: "model", Points: xys}}}, err
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

// clipBelow keeps a line's points on or above ymin; where the line
// crosses ymin it ends (or starts again) exactly on it, at the crossing
// found by linear interpolation, so a falling line reaches the panel's
// lower edge instead of stopping above it.
func clipBelow(xys plotter.XYs, ymin float64) plotter.XYs {
	var out plotter.XYs
	for i, v := range xys {
		if i > 0 {
			u := xys[i-1]
			if (u.Y < ymin) != (v.Y < ymin) {
				t := (ymin - u.Y) / (v.Y - u.Y)
				out = append(out, plotter.XY{X: u.X + t*(v.X-u.X), Y: ymin})
			}
		}
		if v.Y >= ymin {
			out = append(out, v)
		}
	}
	return out
}

// netBenefitAxes sets a decision curve's ranges and ticks: x from the
// first threshold to the last, y from a little below zero (a quarter of
// the highest net benefit) to a little above the highest, at round ticks
// that include 0.
func netBenefitAxes(p *plot.Plot, first, last, hi float64) {
	hi = math.Max(hi, 0.01)
	p.Y.Min, p.Y.Max = -hi*0.25, hi*1.1
	p.X.Min, p.X.Max = 100*first, 100*last
	if p.X.Max <= p.X.Min {
		p.X.Min, p.X.Max = p.X.Min-1, p.X.Max+1
	}
	p.X.Tick.Marker = percentTicks{}
	p.Y.Tick.Marker = roundTicks{}
}

// decisionCurve draws net benefit against the risk threshold for the
// model, treating everyone and treating no one.
func decisionCurve(perf *validate.Performance, label string) (Figure, error) {
	nb := perf.NetBenefit
	p := newPlot("", "Risk threshold for treatment (%)", "Net benefit (true positives per patient)")
	leg := newLegend()
	s := sheet{title: "Decision curve", subtitle: subtitle(label), legend: leg}
	if len(nb) == 0 {
		svg, png, err := single(p, s, 6*vg.Inch, 4.2*vg.Inch)
		return Figure{SVG: svg, PNG: png}, err
	}
	model := make(plotter.XYs, len(nb))
	all := make(plotter.XYs, len(nb))
	hi := 0.0
	for i, v := range nb {
		model[i] = plotter.XY{X: 100 * v.Threshold, Y: v.Model}
		all[i] = plotter.XY{X: 100 * v.Threshold, Y: v.TreatAll}
		hi = math.Max(hi, math.Max(v.Model, v.TreatAll))
	}
	netBenefitAxes(p, nb[0].Threshold, nb[len(nb)-1].Threshold, hi)
	none, err := line(plotter.XYs{{X: p.X.Min, Y: 0}, {X: p.X.Max, Y: 0}}, ink, 1)
	if err != nil {
		return Figure{}, err
	}
	p.Add(none)
	var series []Series
	if a := clipBelow(all, p.Y.Min); len(a) > 1 {
		la, err := line(a, orange, 1.8, vg.Points(5), vg.Points(2))
		if err != nil {
			return Figure{}, err
		}
		p.Add(la)
		leg.Add("treat all", la)
		series = append(series, Series{Name: "treat all", Points: a})
	}
	m := clipBelow(model, p.Y.Min)
	lm, err := line(m, blue, 2)
	if err != nil {
		return Figure{}, err
	}
	p.Add(lm)
	leg.Add("model: treat if predicted risk ≥ threshold", lm)
	leg.Add("treat none (net benefit 0)", none)
	series = append(series, Series{Name: "model", Points: m})
	s.entries = len(series) + 1
	svg, png, err := single(p, s, 6*vg.Inch, 4.2*vg.Inch)
	return Figure{SVG: svg, PNG: png, Series: series}, err
}

// riskHistogram draws the distribution of predicted risk for patients
// with and without the event, each as a share of its group.
func riskHistogram(perf *validate.Performance, label string) (Figure, error) {
	h := perf.Curves.Histogram
	p := newPlot("", "Predicted risk (%)", "Share of patients in the group (%)")
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
	se, sn := step(h.Events, nE), step(h.NonEvents, nN)
	le, err := line(se, vermillion, 1.8)
	if err != nil {
		return Figure{}, err
	}
	ln, err := line(sn, green, 1.8, vg.Points(5), vg.Points(2))
	if err != nil {
		return Figure{}, err
	}
	p.Add(le, ln)
	p.X.Min, p.X.Max = 0, 100*h.Edges[len(h.Edges)-1]
	p.Y.Min = 0
	peak := 0.0
	for i := range h.Events {
		peak = math.Max(peak, math.Max(share(h.Events[i], nE), share(h.NonEvents[i], nN)))
	}
	p.Y.Max = 1.08 * math.Max(peak, 1)
	p.X.Tick.Marker = percentTicks{}
	p.Y.Tick.Marker = roundTicks{}
	leg := newLegend()
	leg.Add(fmt.Sprintf("patients with the event (n = %d)", nE), le)
	leg.Add(fmt.Sprintf("patients without (n = %d)", nN), ln)
	svg, png, err := single(p, sheet{title: "Predicted risk by outcome", subtitle: subtitle(label), legend: leg, entries: 2}, 6*vg.Inch, 3.8*vg.Inch)
	return Figure{SVG: svg, PNG: png, Series: []Series{{Name: "with the event", Points: se}, {Name: "without", Points: sn}}}, err
}
