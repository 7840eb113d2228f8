package plots

import (
	"fmt"
	"image/color"
	"math"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/riskaudit/riskaudit/monitor"
	"github.com/riskaudit/riskaudit/validate"
)

// maxPathPoints is the most points a path is drawn with: longer paths are
// thinned to the lowest and highest value of each of maxPathPoints/2
// runs of patients, so that no spike (and no alarm) disappears.
const maxPathPoints = 1500

// thin returns the path v against patient number 1…n, thinned as
// maxPathPoints says.
func thin(v []float64, scale float64) plotter.XYs {
	n := len(v)
	if n <= maxPathPoints {
		xys := make(plotter.XYs, n)
		for i, x := range v {
			xys[i] = plotter.XY{X: float64(i + 1), Y: scale * x}
		}
		return xys
	}
	buckets := maxPathPoints / 2
	xys := make(plotter.XYs, 0, maxPathPoints)
	for b := range buckets {
		lo, hi := b*n/buckets, (b+1)*n/buckets
		imin, imax := lo, lo
		for i := lo; i < hi; i++ {
			if v[i] < v[imin] {
				imin = i
			}
			if v[i] > v[imax] {
				imax = i
			}
		}
		a, c := min(imin, imax), max(imin, imax)
		xys = append(xys, plotter.XY{X: float64(a + 1), Y: scale * v[a]}, plotter.XY{X: float64(c + 1), Y: scale * v[c]})
	}
	return xys
}

// Monitor draws the four figures of the cohort in date order: the
// measures by period, the cumulative expected − observed curve, the
// CUSUM pair and the EWMA. criteria give the bounds drawn on the period
// chart (those on O/E, calibration-in-the-large and AUC). Like every
// other figure, each has its title (wrapped, never cut) and a subtitle
// above and its legend in a strip below the chart, off the data, with
// ticks at round values.
func Monitor(r *monitor.Result, s *monitor.Summary, criteria []validate.Criterion) ([]Figure, error) {
	return drawMonitor(monitorMakers(r, s, criteria))
}

// monitorMaker draws one figure in date order.
type monitorMaker struct {
	name, title string
	draw        func() (drawn, error)
}

// monitorMakers are Monitor's four figures in its order; the first
// reads the summary and criteria only, the other three the charts only
// (r), so either may be nil when only those are drawn.
func monitorMakers(r *monitor.Result, s *monitor.Summary, criteria []validate.Criterion) []monitorMaker {
	return []monitorMaker{
		{"over_time_periods.svg", "Calibration and discrimination by period, in date order", func() (drawn, error) { return periodChart(s, criteria) }},
		{"over_time_vlad.svg", "Cumulative expected minus observed events, in date order", func() (drawn, error) { return vladChart(r) }},
		{"over_time_cusum.svg", "Risk-adjusted CUSUM charts for deterioration and improvement", func() (drawn, error) { return cusumChart(r) }},
		{"over_time_ewma.svg", "Risk-adjusted EWMA of observed minus expected events", func() (drawn, error) { return ewmaChart(r) }},
	}
}

// drawMonitor draws the makers' figures on up to GOMAXPROCS goroutines,
// as All does, and returns the first error in their order.
func drawMonitor(makers []monitorMaker) ([]Figure, error) {
	out := make([]Figure, len(makers))
	errs := make([]error, len(makers))
	eachConcurrently(len(makers), func(i int) {
		m := makers[i]
		b, err := m.draw()
		if err != nil {
			errs[i] = fmt.Errorf("drawing %s: %w", m.name, err)
			return
		}
		out[i] = Figure{Name: m.name, Title: m.title, SVG: b.svg, PNG: b.png, Series: b.series}
	})
	for _, err := range errs {
		if err != nil {
			return nil, err
		}
	}
	return out, nil
}

// patientAxis labels the x-axis with patient numbers (the first and
// last dates are in the subtitle, overTimeSheet).
func patientAxis(p *plot.Plot, r *monitor.Result) {
	p.X.Label.Text = "patients in date order"
	p.X.Min, p.X.Max = 0, float64(r.N)
	p.X.Tick.Marker = patientTicks{}
}

// patientTicks mark whole patient numbers at a round step (1, 2 or 5 ×
// 10^k, at most seven steps, from 0), every tick labelled, thousands
// separated (2,500).
type patientTicks struct{}

func (patientTicks) Ticks(lo, hi float64) []plot.Tick {
	step := math.Max(1, roundStep(hi-lo))
	var ts []plot.Tick
	for k := math.Ceil(lo/step - 1e-9); k*step <= hi+1e-9*step; k++ {
		ts = append(ts, plot.Tick{Value: k * step, Label: grouped(int(math.Round(k * step)))})
	}
	return ts
}

// mirroredTicks are roundTicks labelled with their distance from 0: the
// CUSUM chart draws the improvement chart downwards, and its values are
// positive.
type mirroredTicks struct{}

func (mirroredTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := roundTicks{}.Ticks(lo, hi)
	for i := range ts {
		ts[i].Label = strings.TrimPrefix(ts[i].Label, "-")
	}
	return ts
}

// grouped writes n with its thousands separated by commas.
func grouped(n int) string {
	if n < 0 {
		return "-" + grouped(-n)
	}
	s := fmt.Sprint(n)
	for i := len(s) - 3; i > 0; i -= 3 {
		s = s[:i] + "," + s[i:]
	}
	return s
}

// span sets the y-axis to the values' range with 5% free on each side.
func span(p *plot.Plot, lo, hi float64) {
	d := hi - lo
	if !(d > 0) {
		d = 1
	}
	p.Y.Min, p.Y.Max = lo-0.05*d, hi+0.05*d
}

func hline(y, x0, x1 float64, c color.Color, width float64, dashes ...vg.Length) (pathLine, error) {
	return pathOf(plotter.XYs{{X: x0, Y: y}, {X: x1, Y: y}}, c, width, dashes...)
}

// marks draws the alarm patients as triangles on a path (a markSet); it
// returns the Scatter, for the legend and the series, or nil when there
// are none.
func marks(p *plot.Plot, at []int, v []float64, scale float64, c color.Color) (*plotter.Scatter, error) {
	if len(at) == 0 {
		return nil, nil
	}
	xys := make(plotter.XYs, len(at))
	for k, i := range at {
		xys[k] = plotter.XY{X: float64(i + 1), Y: scale * v[i]}
	}
	sc, err := plotter.NewScatter(xys)
	if err != nil {
		return nil, err
	}
	sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.PyramidGlyph{}, c, vg.Points(4)
	p.Add(markSet{sc})
	return sc, nil
}

// legendOf collects a legend's entries and counts them for the sheet.
type legendOf struct {
	l *plot.Legend
	n int
}

func (g *legendOf) add(text string, th ...plot.Thumbnailer) {
	g.l.Add(text, th...)
	g.n++
}

// overTimeSheet is the frame of a chart in date order: the title, the
// patients and dates as subtitle, the legend below.
func overTimeSheet(title string, r *monitor.Result, g *legendOf) sheet {
	sub := fmt.Sprintf("%s patients", grouped(r.N))
	if r.Dates != nil {
		sub = fmt.Sprintf("%s patients, %s to %s", grouped(r.N), r.Dates.At(0).Format("2 Jan 2006"), r.Dates.At(r.N-1).Format("2 Jan 2006"))
	}
	return sheet{title: title, subtitle: sub, legend: g.l, entries: g.n}
}

func vladChart(r *monitor.Result) (drawn, error) {
	p := newPlot("", "", "expected − observed events")
	patientAxis(p, r)
	p.Y.Tick.Marker = roundTicks{}
	g := &legendOf{l: newLegend()}
	zero, err := hline(0, 0, float64(r.N), grey, 1)
	if err != nil {
		return drawn{}, err
	}
	path := thin(r.VLAD, 1)
	l, err := pathOf(path, blue, 1.4)
	if err != nil {
		return drawn{}, err
	}
	p.Add(zero, l)
	series := []Series{{Name: "expected − observed", Points: path}}
	g.add("expected − observed events, summed in date order", l)
	g.add("0: as many events as the model predicted", zero)
	sc, err := marks(p, r.Charts[0].Signals, r.VLAD, 1, vermillion)
	if err != nil {
		return drawn{}, err
	}
	if sc != nil {
		g.add("where the deterioration CUSUM signalled", sc)
		series = append(series, Series{Name: "deterioration signals", Points: sc.XYs})
	}
	lo, hi := 0.0, 0.0
	// The builtin min and max here and below: math.Min's and math.Max's
	// values (NaN and signed zeros alike), without a call a patient.
	for _, v := range r.VLAD {
		lo, hi = min(lo, v), max(hi, v)
	}
	span(p, lo, hi)
	svg, png, err := single(p, overTimeSheet("Cumulative expected − observed events (above 0: fewer events than predicted)", r, g), 7*vg.Inch, 3.6*vg.Inch)
	return drawn{svg: svg, png: png, series: series}, err
}

func cusumChart(r *monitor.Result) (drawn, error) {
	p := newPlot("", "", "CUSUM (log-likelihood ratio)")
	patientAxis(p, r)
	p.Y.Tick.Marker = mirroredTicks{}
	g := &legendOf{l: newLegend()}
	colours := []color.Color{vermillion, blue}
	where := []string{"drawn up", "drawn down"}
	var series []Series
	for k, c := range r.Charts {
		sign := 1.0
		if k == 1 {
			sign = -1
		}
		path := thin(c.Restarted, sign)
		l, err := pathOf(path, colours[k], 1.2)
		if err != nil {
			return drawn{}, err
		}
		limit := plotter.XYs{{X: 0, Y: sign * c.Limit.H}, {X: float64(r.N), Y: sign * c.Limit.H}}
		h, err := pathOf(limit, colours[k], 1, vg.Points(5), vg.Points(3))
		if err != nil {
			return drawn{}, err
		}
		series = append(series, Series{Name: c.Name, Points: path}, Series{Name: c.Name + " limit", Points: limit})
		p.Add(l, h)
		g.add(fmt.Sprintf("%s, odds ratio %g, %s", c.Name, c.Limit.R, where[k]), l)
		g.add(fmt.Sprintf("its limit h = %.2f (in-control ARL %s patients)", c.Limit.H, grouped(int(c.Limit.TargetARL))), h)
		sc, err := marks(p, c.Signals, c.Restarted, sign, colours[k])
		if err != nil {
			return drawn{}, err
		}
		if sc != nil {
			g.add(fmt.Sprintf("%s signal (the chart restarts at 0)", c.Name), sc)
			series = append(series, Series{Name: c.Name + " signals", Points: sc.XYs})
		}
	}
	zero, err := hline(0, 0, float64(r.N), grey, 1)
	if err != nil {
		return drawn{}, err
	}
	p.Add(zero)
	g.add("0: where both charts start and restart", zero)
	top := r.Charts[0].Limit.H
	bot := -r.Charts[1].Limit.H
	for _, v := range r.Charts[0].Restarted {
		top = max(top, v)
	}
	for _, v := range r.Charts[1].Restarted {
		bot = min(bot, -v)
	}
	span(p, bot, top)
	svg, png, err := single(p, overTimeSheet("Risk-adjusted CUSUMs, restarted after each signal: deterioration up, improvement down", r, g), 7*vg.Inch, 3.8*vg.Inch)
	return drawn{svg: svg, png: png, series: series}, err
}

func ewmaChart(r *monitor.Result) (drawn, error) {
	e := r.EWMA
	p := newPlot("", "", "observed − expected (events per patient)")
	patientAxis(p, r)
	p.Y.Tick.Marker = roundTicks{}
	g := &legendOf{l: newLegend()}
	up, lo := make([]float64, r.N), make([]float64, r.N)
	for i, sd := range e.SD {
		up[i], lo[i] = e.L*sd, -e.L*sd
	}
	upPath, loPath, zPath := thin(up, 1), thin(lo, 1), thin(e.Z, 1)
	lu, err := pathOf(upPath, grey, 1, vg.Points(5), vg.Points(3))
	if err != nil {
		return drawn{}, err
	}
	ll, err := pathOf(loPath, grey, 1, vg.Points(5), vg.Points(3))
	if err != nil {
		return drawn{}, err
	}
	z, err := pathOf(zPath, blue, 1.3)
	if err != nil {
		return drawn{}, err
	}
	series := []Series{{Name: "EWMA", Points: zPath}, {Name: "upper limit", Points: upPath}, {Name: "lower limit", Points: loPath}}
	zero, err := hline(0, 0, float64(r.N), ink, 0.6)
	if err != nil {
		return drawn{}, err
	}
	p.Add(zero, lu, ll, z)
	g.add("observed − expected, smoothed", z)
	g.add(fmt.Sprintf("control limits, ±%g exact SD", e.L), lu)
	g.add("0: as many events as the model predicted", zero)
	for _, m := range []struct {
		at   int
		c    color.Color
		text string
	}{{e.FirstAbove, vermillion, "first above the upper limit"}, {e.FirstBelow, orange, "first below the lower limit"}} {
		if m.at < 0 {
			continue
		}
		sc, err := marks(p, []int{m.at}, e.Z, 1, m.c)
		if err != nil {
			return drawn{}, err
		}
		g.add(m.text, sc)
		series = append(series, Series{Name: m.text, Points: sc.XYs})
	}
	// Leave the first patients' near-zero limits out of the scale: the
	// axis spans the limits from patient 1/λ on.
	from := min(r.N-1, int(1/e.Lambda))
	top := 0.0
	for i := from; i < r.N; i++ {
		top = max(top, math.Abs(e.Z[i]), up[i])
	}
	for i := 0; i < from; i++ {
		top = max(top, math.Abs(e.Z[i]))
	}
	span(p, -top, top)
	svg, png, err := single(p, overTimeSheet(fmt.Sprintf("EWMA of observed − expected (λ = %g), ±%g exact SD", e.Lambda, e.L), r, g), 7*vg.Inch, 3.6*vg.Inch)
	return drawn{svg: svg, png: png, series: series}, err
}

// bounds are the criteria's bounds on a measure, or on an end of its
// 95% interval (such as auc_ci.lower ≥ 0.7), drawn at the same height.
func bounds(criteria []validate.Criterion, measure string) []float64 {
	var out []float64
	for _, c := range criteria {
		if c.Measure != measure && c.Measure != measure+"_ci.lower" && c.Measure != measure+"_ci.upper" {
			continue
		}
		if c.AtLeast != nil {
			out = append(out, *c.AtLeast)
		}
		if c.AtMost != nil {
			out = append(out, *c.AtMost)
		}
		if c.Between != nil {
			out = append(out, c.Between[0], c.Between[1])
		}
	}
	return out
}

// periodTicks labels period k at x = k+1 with its label, thinned to
// about a dozen labels; with no labels (the upper panels of the period
// chart) the ticks only place the grid.
type periodTicks struct {
	labels []string
	show   bool
}

func (t periodTicks) Ticks(_, _ float64) []plot.Tick {
	step := max(1, (len(t.labels)+11)/12)
	var ts []plot.Tick
	for k, l := range t.labels {
		if k%step == 0 && t.show {
			ts = append(ts, plot.Tick{Value: float64(k + 1), Label: l})
		} else {
			ts = append(ts, plot.Tick{Value: float64(k + 1)})
		}
	}
	return ts
}

// periodChart stacks three panels over the periods: O/E, CITL and AUC,
// each with its 95% intervals, the whole cohort's value (dash-dotted,
// black), the value of perfect calibration (dotted, grey) and the
// criteria's bounds (dashed, orange); the periods are named under the
// lowest panel only, without tick marks, and one legend below names
// every line.
func periodChart(s *monitor.Summary, criteria []validate.Criterion) (drawn, error) {
	type panel struct {
		name, measure string
		v             func(monitor.Period) (float64, [2]float64)
		ref           float64
		all           float64
	}
	panels := []panel{
		{"O/E", "oe", func(q monitor.Period) (float64, [2]float64) { return q.OE, q.OECI }, 1, s.Overall.OE},
		{"calibration-in-the-large", "citl", func(q monitor.Period) (float64, [2]float64) { return q.CITL, q.CITLCI }, 0, s.Overall.CITL},
		{"AUC", "auc", func(q monitor.Period) (float64, [2]float64) { return q.AUC, q.AUCCI }, math.NaN(), s.Overall.AUC},
	}
	labels := make([]string, len(s.Periods))
	for k, q := range s.Periods {
		labels[k] = q.Label
	}
	g := &legendOf{l: newLegend()}
	// The legend's thumbnails, the first of each kind drawn: the
	// periods' points first, then the lines.
	var pointEntry, boundEntry, allEntry, refEntry plot.Thumbnailer
	var series []Series
	plots := make([][]*plot.Plot, len(panels))
	for k, pn := range panels {
		p := newPlot("", "", pn.name)
		p.X.Min, p.X.Max = 0.4, float64(len(s.Periods))+0.6
		last := k == len(panels)-1
		p.X.Tick.Marker = periodTicks{labels: labels, show: last}
		p.X.Tick.Length = 0
		p.Y.Tick.Marker = roundTicks{}
		if last {
			p.X.Label.Text = s.Period + " (" + s.DateColumn + ")"
			p.X.Tick.Label.Rotation = math.Pi / 5
			p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XRight, draw.YTop
		}
		var pts plotter.XYs
		var errs plotter.YErrors
		lo, hi := math.Inf(1), math.Inf(-1)
		for i, q := range s.Periods {
			v, ci := pn.v(q)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			pts = append(pts, plotter.XY{X: float64(i + 1), Y: v})
			lo, hi = math.Min(lo, v), math.Max(hi, v)
			e := struct{ Low, High float64 }{0, 0}
			if finite(ci[0]) && finite(ci[1]) {
				e.Low, e.High = v-ci[0], ci[1]-v
				lo, hi = math.Min(lo, ci[0]), math.Max(hi, ci[1])
			}
			errs = append(errs, e)
		}
		for _, b := range bounds(criteria, pn.measure) {
			bl, err := hline(b, p.X.Min, p.X.Max, orange, 1.2, vg.Points(6), vg.Points(3))
			if err != nil {
				return drawn{}, err
			}
			p.Add(bl)
			if boundEntry == nil {
				boundEntry = bl
			}
			lo, hi = math.Min(lo, b), math.Max(hi, b)
		}
		if finite(pn.all) {
			al, err := hline(pn.all, p.X.Min, p.X.Max, ink, 1, vg.Points(5), vg.Points(2), vg.Points(1), vg.Points(2))
			if err != nil {
				return drawn{}, err
			}
			p.Add(al)
			if allEntry == nil {
				allEntry = al
			}
			lo, hi = math.Min(lo, pn.all), math.Max(hi, pn.all)
		}
		if !math.IsNaN(pn.ref) {
			rl, err := hline(pn.ref, p.X.Min, p.X.Max, grey, 1, vg.Points(1), vg.Points(2))
			if err != nil {
				return drawn{}, err
			}
			p.Add(rl)
			if refEntry == nil {
				refEntry = rl
			}
			lo, hi = math.Min(lo, pn.ref), math.Max(hi, pn.ref)
		}
		if len(pts) > 0 {
			type yerr struct {
				plotter.XYs
				plotter.YErrors
			}
			eb, err := plotter.NewYErrorBars(yerr{pts, errs})
			if err != nil {
				return drawn{}, err
			}
			eb.LineStyle.Color, eb.LineStyle.Width = blue, vg.Points(1.5)
			ends := make(plotter.XYs, 0, 2*len(pts))
			for j, pt := range pts {
				ends = append(ends, plotter.XY{X: pt.X, Y: pt.Y - errs[j].Low}, plotter.XY{X: pt.X, Y: pt.Y + errs[j].High})
			}
			series = append(series, Series{Name: pn.name, Points: pts}, Series{Name: pn.name + " interval", Points: ends})
			sc, err := plotter.NewScatter(pts)
			if err != nil {
				return drawn{}, err
			}
			sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.CircleGlyph{}, blue, vg.Points(3)
			p.Add(eb, sc)
			if pointEntry == nil {
				pointEntry = sc
			}
		}
		if finite(lo) && finite(hi) {
			span(p, lo, hi)
		}
		plots[k] = []*plot.Plot{p}
	}
	for _, e := range []struct {
		th   plot.Thumbnailer
		text string
	}{{pointEntry, "a period's value with its 95% interval (bar)"}, {allEntry, "all patients together"},
		{refEntry, "perfect calibration (O/E 1, calibration-in-the-large 0)"},
		{boundEntry, "plan criterion bound (on the value or an end of its interval)"}} {
		if e.th != nil {
			g.add(e.text, e.th)
		}
	}
	sh := sheet{title: fmt.Sprintf("By %s: O/E, calibration-in-the-large and AUC with 95%% intervals", s.Period), legend: g.l, entries: g.n}
	w := 7 * vg.Inch
	h := 6.9*vg.Inch + sh.headHeight(w-vg.Points(10)) + sh.footHeight()
	svg, png, err := paint(w, h, func(dc draw.Canvas) error {
		rest := sh.frame(dc)
		tiles := draw.Tiles{Rows: len(panels), Cols: 1, PadY: vg.Points(10)}
		canvases := plot.Align(plots, tiles, rest)
		for k := range panels {
			drawPlot(plots[k][0], canvases[k][0])
		}
		sh.foot(dc)
		return nil
	})
	return drawn{svg: svg, png: png, series: series}, err
}
