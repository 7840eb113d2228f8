package plots

import (
	"fmt"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/riskaudit/riskaudit/trend"
)

// dateTicks labels audit positions 0, 1, … with their dates, thinned to
// about eight labels.
type dateTicks []string

func (d dateTicks) Ticks(_, _ float64) []plot.Tick {
	step := max(1, int(math.Ceil(float64(len(d))/8)))
	var ts []plot.Tick
	for i := range d {
		lab := ""
		if i%step == 0 {
			lab = d[i]
		}
		ts = append(ts, plot.Tick{Value: float64(i), Label: lab})
	}
	return ts
}

// Trend draws the four trend charts of an audit history: AUC, O/E (with
// its funnel-type control limits), calibration slope and
// calibration-in-the-large, each audit with its 95% interval.
func Trend(tr *trend.Trend) ([]Figure, error) {
	dates := make(dateTicks, len(tr.Points))
	for i, p := range tr.Points {
		dates[i] = p.Date
	}
	type series struct {
		name, title, ylab string
		get               func(trend.Point) [3]float64
		ideal             float64
	}
	all := []series{
		{"trend_auc.svg", "AUC by audit", "AUC", func(p trend.Point) [3]float64 { return p.Record.AUC }, math.NaN()},
		{"trend_oe.svg", "Observed / expected events by audit", "O/E", func(p trend.Point) [3]float64 { return p.Record.OE }, 1},
		{"trend_slope.svg", "Calibration slope by audit", "calibration slope", func(p trend.Point) [3]float64 { return p.Record.Slope }, 1},
		{"trend_citl.svg", "Calibration-in-the-large by audit", "calibration-in-the-large (log-odds)", func(p trend.Point) [3]float64 { return p.Record.CITL }, 0},
	}
	var out []Figure
	for _, s := range all {
		p := newPlot(s.title, "Audit date", s.ylab)
		p.X.Tick.Marker = dates
		p.X.Min, p.X.Max = -0.5, float64(len(dates))-0.5
		// An audit whose measure or interval is not estimable (null in
		// the history) has no point, or no bar.
		every := make(plotter.XYs, len(tr.Points))
		var pts, barPts plotter.XYs
		var errs plotter.YErrors
		for i, pt := range tr.Points {
			v := s.get(pt)
			every[i] = plotter.XY{X: float64(i), Y: v[0]}
			if !finite(v[0]) {
				continue
			}
			pts = append(pts, every[i])
			if finite(v[1]) && finite(v[2]) {
				barPts = append(barPts, every[i])
				errs = append(errs, struct{ Low, High float64 }{v[0] - v[1], v[2] - v[0]})
			}
		}
		if !math.IsNaN(s.ideal) {
			ideal, err := line(plotter.XYs{{X: p.X.Min, Y: s.ideal}, {X: p.X.Max, Y: s.ideal}}, grey, 1, vg.Points(4), vg.Points(3))
			if err != nil {
				return nil, err
			}
			p.Add(ideal)
		}
		if s.name == "trend_oe.svg" {
			if err := addLimits(p, tr); err != nil {
				return nil, err
			}
		}
		// The line joins consecutive audits only, broken where one has
		// no point.
		var run plotter.XYs
		for i := 0; i <= len(every); i++ {
			if i < len(every) && finite(every[i].Y) {
				run = append(run, every[i])
				continue
			}
			if len(run) > 1 {
				l, err := line(run, blue, 1.2)
				if err != nil {
					return nil, err
				}
				p.Add(l)
			}
			run = nil
		}
		if len(barPts) > 0 {
			eb, err := plotter.NewYErrorBars(struct {
				plotter.XYs
				plotter.YErrors
			}{barPts, errs})
			if err != nil {
				return nil, err
			}
			eb.LineStyle.Color = blue
			p.Add(eb)
		}
		if len(pts) > 0 {
			sc, err := plotter.NewScatter(pts)
			if err != nil {
				return nil, err
			}
			sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.CircleGlyph{}, blue, vg.Points(3)
			p.Add(sc)
			p.Legend.Add("audit, with 95% CI", sc)
		}
		if missing := len(tr.Points) - len(pts); missing > 0 {
			p.Legend.Add(fmt.Sprintf("%d %s not estimable: no point", missing, audits(missing)))
		}
		if noBar := len(pts) - len(barPts); noBar > 0 {
			p.Legend.Add(fmt.Sprintf("%d %s with an interval not estimable: no bar", noBar, audits(noBar)))
		}
		if s.name == "trend_oe.svg" && tr.FirstOutside >= 0 && finite(every[tr.FirstOutside].Y) {
			fl, err := plotter.NewScatter(plotter.XYs{every[tr.FirstOutside]})
			if err != nil {
				return nil, err
			}
			fl.GlyphStyle.Shape, fl.GlyphStyle.Color, fl.GlyphStyle.Radius = draw.RingGlyph{}, vermillion, vg.Points(7)
			p.Add(fl)
			p.Legend.Add(fmt.Sprintf("first audit outside the 99.8%% limits (%s)", tr.Points[tr.FirstOutside].Date), fl)
		}
		b, err := render(p, 6.5*vg.Inch, 4*vg.Inch)
		if err != nil {
			return nil, err
		}
		out = append(out, Figure{Name: s.name, Title: s.title, SVG: b})
	}
	return out, nil
}

// addLimits draws the 95% and 99.8% control limits of every audit as
// short bars at its position, joined into a band.
func addLimits(p *plot.Plot, tr *trend.Trend) error {
	for k, lim := range []struct {
		get   func(trend.Point) [2]float64
		label string
	}{
		{func(pt trend.Point) [2]float64 { return pt.Limit95 }, "95% control limits (1 ± 1.96/√E)"},
		{func(pt trend.Point) [2]float64 { return pt.Limit998 }, "99.8% control limits (1 ± 3.09/√E)"},
	} {
		var lo, hi plotter.XYs
		for i, pt := range tr.Points {
			l := lim.get(pt)
			lo = append(lo, plotter.XY{X: float64(i) - 0.4, Y: l[0]}, plotter.XY{X: float64(i) + 0.4, Y: l[0]})
			hi = append(hi, plotter.XY{X: float64(i) - 0.4, Y: l[1]}, plotter.XY{X: float64(i) + 0.4, Y: l[1]})
		}
		col := orange
		if k == 1 {
			col = vermillion
		}
		a, err := line(lo, col, 1, vg.Points(3), vg.Points(2))
		if err != nil {
			return err
		}
		b, err := line(hi, col, 1, vg.Points(3), vg.Points(2))
		if err != nil {
			return err
		}
		p.Add(a, b)
		p.Legend.Add(lim.label, a)
	}
	return nil
}

// audits is "audit" or "audits" for n of them.
func audits(n int) string {
	if n == 1 {
		return "audit"
	}
	return "audits"
}
