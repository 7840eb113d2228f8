package plots

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/riskaudit/riskaudit/validate"
)

// rowTicks labels the rows of a forest chart, top to bottom.
type rowTicks []string

func (r rowTicks) Ticks(_, _ float64) []plot.Tick {
	ts := make([]plot.Tick, len(r))
	for i, l := range r {
		ts[i] = plot.Tick{Value: float64(len(r) - 1 - i), Label: l}
	}
	return ts
}

type noTicks struct{}

func (noTicks) Ticks(_, _ float64) []plot.Tick { return nil }

// forestMeasure is one panel of the subgroup chart.
type forestMeasure struct {
	title, xlab string
	// ref is the reference line's value and label.
	ref      float64
	refLabel string
	get      func(validate.Subgroup) (*float64, *[2]float64)
}

// Forest draws the subgroup chart: AUC, O/E, calibration-in-the-large
// and calibration slope with their 95% intervals, one row per subgroup,
// each panel with a labelled reference line (the whole cohort's AUC, O/E
// = 1, calibration-in-the-large = 0, slope = 1). A subgroup too small to
// measure keeps its row, marked as such; a subgroup that misses a
// criterion is drawn in vermillion; a point whose interval is not
// estimable is drawn hollow. The legend is below the panels.
func Forest(groups []validate.Subgroup, overall *validate.Performance) (Figure, error) {
	labels := make(rowTicks, len(groups))
	noCI, small, failed := 0, 0, 0
	for i, g := range groups {
		// The counts and "too small" are never cut; a long column
		// name is cut before the level, which tells the rows apart.
		suffix := fmt.Sprintf(" (n %d, events %d)", g.N, g.Events)
		if g.TooSmall {
			suffix += ": too small"
			small++
		}
		if len(g.Failed) > 0 {
			failed++
		}
		for _, ci := range []*[2]float64{g.AUCCI, g.OECI, g.CITLCI, g.SlopeCI} {
			if ci != nil && (!finite(ci[0]) || !finite(ci[1])) {
				noCI++
				break
			}
		}
		labels[i] = shorten(g.Column, 20) + " = " + shorten(g.Level, 30) + suffix
	}
	auc := overall.Discrimination.AUC
	measures := []forestMeasure{
		{"AUC", "AUC (95% CI)", auc, fmt.Sprintf("cohort %.3f", auc), func(g validate.Subgroup) (*float64, *[2]float64) { return g.AUC, g.AUCCI }},
		{"O/E", "observed / expected", 1, "O/E = 1", func(g validate.Subgroup) (*float64, *[2]float64) { return g.OE, g.OECI }},
		{"Calibration-in-the-large", "log-odds (95% CI)", 0, "CITL = 0", func(g validate.Subgroup) (*float64, *[2]float64) { return g.CITL, g.CITLCI }},
		{"Calibration slope", "slope (95% CI)", 1, "slope = 1", func(g validate.Subgroup) (*float64, *[2]float64) { return g.Slope, g.SlopeCI }},
	}
	if !finite(auc) {
		measures[0].ref, measures[0].refLabel = 0.5, "AUC = 0.5"
	}
	var ps []*plot.Plot
	var series []Series
	for k, m := range measures {
		var lab rowTicks
		if k == 0 {
			lab = labels
		}
		p, pts, err := forestPanel(m, groups, lab)
		if err != nil {
			return Figure{}, err
		}
		ps = append(ps, p)
		series = append(series, Series{Name: m.title, Points: pts})
	}
	leg := newLegend()
	entries := 0
	// The thumbnails are the marks as drawn: a square on its interval.
	mark := func(c color.Color) []plot.Thumbnailer { return intervalMark(c, draw.BoxGlyph{}) }
	if failed < len(groups)-small {
		leg.Add("estimate and 95% CI, meets the criteria", mark(blue)...)
		entries++
	}
	if failed > 0 {
		leg.Add("estimate and 95% CI, misses a criterion", mark(vermillion)...)
		entries++
	}
	if noCI > 0 {
		leg.Add("hollow square: interval not estimable", &plotter.Scatter{GlyphStyle: draw.GlyphStyle{Shape: draw.SquareGlyph{}, Color: blue, Radius: vg.Points(3.5)}})
		entries++
	}
	leg.Add("dashed line: reference value, named at its top", &plotter.Line{LineStyle: draw.LineStyle{Color: grey, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(4), vg.Points(3)}}})
	entries++
	if small > 0 {
		leg.Add(fmt.Sprintf("too small: %d subgroup(s) below the minimum of events, not drawn", small))
		entries++
	}
	s := sheet{title: "Performance by subgroup", legend: leg, entries: entries}
	w := 11 * vg.Inch
	h := vg.Length(1.3+0.3*float64(len(groups)))*vg.Inch + s.headHeight(w-vg.Points(10)) + s.footHeight()
	svg, png, err := paint(w, h, func(c draw.Canvas) error {
		rest := s.frame(c)
		// The first panel also holds the row labels.
		lw := textStyle(sans(9), ink)
		labelW := vg.Length(0)
		for _, l := range labels {
			labelW = max(labelW, lw.Width(l))
		}
		width := rest.Max.X - rest.Min.X
		each := (width - labelW - vg.Points(30)) / 4
		cs := make([]draw.Canvas, 4)
		x := rest.Min.X
		for k := range cs {
			wk := each
			if k == 0 {
				wk += labelW + vg.Points(30)
			}
			cs[k] = draw.Crop(rest, x-rest.Min.X, -(rest.Max.X - x - wk), 0, 0)
			x += wk
		}
		// A panel title wider than its panel would run under the next
		// panel, hidden there (long row labels leave the panels narrow):
		// it is set smaller to fit, down to 7 points.
		for k, p := range ps {
			avail := each - vg.Points(6)
			if k == 0 {
				avail += labelW + vg.Points(30)
			}
			if w := p.Title.TextStyle.Width(p.Title.Text); w > avail {
				p.Title.TextStyle.Font.Size = max(vg.Points(7), p.Title.TextStyle.Font.Size*avail/w)
			}
		}
		alignY(ps, cs)
		for k, p := range ps {
			drawPlot(p, cs[k])
		}
		s.foot(c)
		return nil
	})
	return Figure{Name: "subgroups.svg", Title: "Performance by subgroup", SVG: svg, PNG: png, Series: series}, err
}

// forestPanel draws one measure's panel; it returns the drawn points
// (x the estimate, y the row from the top, 0 first).
func forestPanel(m forestMeasure, groups []validate.Subgroup, labels rowTicks) (*plot.Plot, plotter.XYs, error) {
	p := newPlot(m.title, m.xlab, "")
	n := len(groups)
	// A row above the subgroups holds the reference line's label.
	p.Y.Min, p.Y.Max = -0.7, float64(n)+0.5
	if labels != nil {
		p.Y.Tick.Marker = labels
	} else {
		p.Y.Tick.Marker = noTicks{}
	}
	p.Y.Tick.Length = 0
	p.Y.Padding = vg.Points(4)
	p.X.Tick.Marker = panelTicks{}
	var pts plotter.XYs
	lo, hi := m.ref, m.ref
	for i, g := range groups {
		vp, cip := m.get(g)
		if vp == nil || !finite(*vp) {
			continue
		}
		v := *vp
		var ci [2]float64
		if cip != nil {
			ci = *cip
		} else {
			ci = [2]float64{math.NaN(), math.NaN()}
		}
		y := float64(n - 1 - i)
		col := blue
		if len(g.Failed) > 0 {
			col = vermillion
		}
		shape := draw.GlyphDrawer(draw.BoxGlyph{})
		if finite(ci[0]) && finite(ci[1]) {
			seg, err := line(plotter.XYs{{X: ci[0], Y: y}, {X: ci[1], Y: y}}, col, 1.5)
			if err != nil {
				return nil, nil, err
			}
			p.Add(seg)
			lo, hi = math.Min(lo, ci[0]), math.Max(hi, ci[1])
		} else {
			shape = draw.SquareGlyph{}
		}
		pt, err := plotter.NewScatter(plotter.XYs{{X: v, Y: y}})
		if err != nil {
			return nil, nil, err
		}
		pt.GlyphStyle.Shape, pt.GlyphStyle.Color, pt.GlyphStyle.Radius = shape, col, vg.Points(3.5)
		p.Add(pt)
		pts = append(pts, plotter.XY{X: v, Y: float64(i)})
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	pad := 0.1 * math.Max(hi-lo, 0.05)
	p.X.Min, p.X.Max = lo-pad, hi+pad
	rl, err := line(plotter.XYs{{X: m.ref, Y: p.Y.Min}, {X: m.ref, Y: float64(n) - 0.3}}, grey, 1, vg.Points(4), vg.Points(3))
	if err != nil {
		return nil, nil, err
	}
	p.Add(rl, &refLabel{x: m.ref, y: float64(n) + 0.1, text: m.refLabel})
	return p, pts, nil
}

// refLabel names a reference line above the rows.
type refLabel struct {
	x, y float64
	text string
}

// Plot draws the label centred on the line, kept inside the panel.
func (r *refLabel) Plot(c draw.Canvas, p *plot.Plot) {
	x, y := p.Transforms(&c)
	sty := textStyle(sans(8.5), grey)
	sty.XAlign, sty.YAlign = draw.XCenter, draw.YCenter
	px := x(r.x)
	half := sty.Width(r.text) / 2
	px = max(px, c.Min.X+half)
	px = min(px, c.Max.X-half)
	c.FillText(sty, vg.Point{X: px, Y: y(r.y)}, r.text)
}

// panelTicks are roundTicks for a panel set beside others: a tick
// within 6% of the panel's edge keeps its mark but not its label, which
// would otherwise reach into the next panel and run into its first
// label.
type panelTicks struct{}

func (panelTicks) Ticks(min, max float64) []plot.Tick {
	ts := roundTicks{}.Ticks(min, max)
	edge := 0.06 * (max - min)
	for i := range ts {
		if ts[i].Value < min+edge || ts[i].Value > max-edge {
			ts[i].Label = ""
		}
	}
	return ts
}

// intervalMark is the legend thumbnail of an estimate drawn as a glyph
// on its interval, in colour c.
func intervalMark(c color.Color, shape draw.GlyphDrawer) []plot.Thumbnailer {
	return []plot.Thumbnailer{&plotter.Line{LineStyle: draw.LineStyle{Color: c, Width: vg.Points(1.5)}},
		&plotter.Scatter{GlyphStyle: draw.GlyphStyle{Shape: shape, Color: c, Radius: vg.Points(3.5)}}}
}
