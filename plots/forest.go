package plots

import (
	"bytes"
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

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

// Forest draws the subgroup chart: AUC (left) and O/E (right) with their
// 95% intervals, one row per subgroup, beside lines at the whole cohort's
// AUC and at O/E = 1. A subgroup too small to measure keeps its row,
// marked as such; a subgroup that fails a criterion is drawn in
// vermillion.
func Forest(groups []validate.Subgroup, overall *validate.Performance) (Figure, error) {
	labels := make(rowTicks, len(groups))
	for i, g := range groups {
		lab := fmt.Sprintf("%s = %s (n %d, events %d)", g.Column, g.Level, g.N, g.Events)
		suffix := ""
		switch {
		case g.TooSmall:
			suffix = ": too small"
		case g.AUCCI != nil && (!finite(g.AUCCI[0]) || !finite(g.AUCCI[1])):
			suffix = ": AUC CI not estimable" // drawn as a hollow square
		}
		labels[i] = shorten(lab, 48-len([]rune(suffix))) + suffix
	}
	left, err := forestPanel("AUC by subgroup", "AUC (95% CI)", groups, labels, overall.Discrimination.AUC,
		func(g validate.Subgroup) (float64, [2]float64, bool) {
			if g.AUC == nil {
				return 0, [2]float64{}, false
			}
			return *g.AUC, *g.AUCCI, true
		})
	if err != nil {
		return Figure{}, err
	}
	right, err := forestPanel("O/E by subgroup", "observed / expected (95% CI)", groups, nil, 1,
		func(g validate.Subgroup) (float64, [2]float64, bool) {
			if g.OE == nil {
				return 0, [2]float64{}, false
			}
			return *g.OE, *g.OECI, true
		})
	if err != nil {
		return Figure{}, err
	}
	h := vg.Length(1.6+0.32*float64(len(groups))) * vg.Inch
	w := 9 * vg.Inch
	c := vgsvg.New(w, h)
	dc := margins(draw.New(c))
	split := dc.Min.X + (dc.Max.X-dc.Min.X)*0.62
	left.Draw(draw.Crop(dc, 0, split-dc.Max.X, 0, 0))
	right.Draw(draw.Crop(dc, split-dc.Min.X+vg.Points(8), 0, 0, 0))
	var b bytes.Buffer
	if _, err := c.WriteTo(&b); err != nil {
		return Figure{}, err
	}
	return Figure{Name: "subgroups.svg", Title: "Performance by subgroup", SVG: b.Bytes()}, nil
}

func forestPanel(title, xlab string, groups []validate.Subgroup, labels rowTicks, ref float64,
	get func(validate.Subgroup) (float64, [2]float64, bool)) (*plot.Plot, error) {
	p := newPlot(title, xlab, "")
	n := len(groups)
	p.Y.Min, p.Y.Max = -0.7, float64(n)-0.3
	if labels != nil {
		p.Y.Tick.Marker = labels
	} else {
		p.Y.Tick.Marker = noTicks{}
	}
	lo, hi := ref, ref
	for i, g := range groups {
		v, ci, ok := get(g)
		if !ok || !finite(v) {
			continue
		}
		y := float64(n - 1 - i)
		col := blue
		if len(g.Failed) > 0 {
			col = vermillion
		}
		// A subgroup whose interval is not estimable keeps its point,
		// drawn hollow, without an interval.
		shape := draw.GlyphDrawer(draw.BoxGlyph{})
		if finite(ci[0]) && finite(ci[1]) {
			seg, err := line(plotter.XYs{{X: ci[0], Y: y}, {X: ci[1], Y: y}}, col, 1.5)
			if err != nil {
				return nil, err
			}
			p.Add(seg)
			lo, hi = math.Min(lo, ci[0]), math.Max(hi, ci[1])
		} else {
			shape = draw.SquareGlyph{}
		}
		pt, err := plotter.NewScatter(plotter.XYs{{X: v, Y: y}})
		if err != nil {
			return nil, err
		}
		pt.GlyphStyle.Shape, pt.GlyphStyle.Color, pt.GlyphStyle.Radius = shape, col, vg.Points(3.5)
		p.Add(pt)
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	pad := 0.08 * math.Max(hi-lo, 0.05)
	p.X.Min, p.X.Max = lo-pad, hi+pad
	rl, err := line(plotter.XYs{{X: ref, Y: p.Y.Min}, {X: ref, Y: p.Y.Max}}, grey, 1, vg.Points(4), vg.Points(3))
	if err != nil {
		return nil, err
	}
	p.Add(rl)
	p.Legend.Top = false
	return p, nil
}
