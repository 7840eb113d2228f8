package plots

import (
	"errors"
	"fmt"
	"image/color"
	"math"
	"runtime"
	"sync"

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
// chart (those on O/E, calibration-in-the-large and AUC).
func Monitor(r *monitor.Result, s *monitor.Summary, criteria []validate.Criterion) ([]Figure, error) {
	type maker struct {
		name, title string
		draw        func() (drawn, error)
	}
	makers := []maker{
		{"over_time_periods.svg", "Calibration and discrimination by period, in date order", func() (drawn, error) { return periodChart(s, criteria) }},
		{"over_time_vlad.svg", "Cumulative expected minus observed events, in date order", func() (drawn, error) { return vladChart(r) }},
		{"over_time_cusum.svg", "Risk-adjusted CUSUM charts for deterioration and improvement", func() (drawn, error) { return cusumChart(r) }},
		{"over_time_ewma.svg", "Risk-adjusted EWMA of observed minus expected events", func() (drawn, error) { return ewmaChart(r) }},
	}
	// The four figures are painted at once, as many at a time as there
	// are cores (each is its own plot and canvases; the shared font cache
	// locks), and returned in the order above.
	out := make([]Figure, len(makers))
	errs := make([]error, len(makers))
	next := make(chan int)
	var wg sync.WaitGroup
	for range min(len(makers), runtime.GOMAXPROCS(0)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for k := range next {
				m := makers[k]
				b, err := m.draw()
				if err != nil {
					errs[k] = fmt.Errorf("drawing %s: %w", m.name, err)
					continue
				}
				out[k] = Figure{Name: m.name, Title: m.title, SVG: b.svg, PNG: b.png}
			}
		}()
	}
	for k := range makers {
		next <- k
	}
	close(next)
	wg.Wait()
	if err := errors.Join(errs...); err != nil {
		return nil, err
	}
	return out, nil
}

// patientAxis labels the x-axis with patient numbers and, below, the
// first and last dates.
func patientAxis(p *plot.Plot, r *monitor.Result) {
	p.X.Label.Text = "patients in date order"
	if r.Dates != nil {
		p.X.Label.Text = fmt.Sprintf("patients in date order (%s to %s)", r.Dates[0].Format("2 Jan 2006"), r.Dates[r.N-1].Format("2 Jan 2006"))
	}
	p.X.Min, p.X.Max = 0, float64(r.N)
	p.X.Tick.Marker = patientTicks{}
}

// patientTicks are gonum's default tick places labelled as whole
// patient numbers with thousands separated (2,500).
type patientTicks struct{}

func (patientTicks) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = grouped(int(math.Round(ts[i].Value)))
		}
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

// headroom sets the y-axis to the values' range with a share of it free
// above for the legend.
func headroom(p *plot.Plot, lo, hi, share float64) {
	span := hi - lo
	if span <= 0 {
		span = 1
	}
	p.Y.Min, p.Y.Max = lo-0.05*span, hi+share*span
}

func hline(y, x0, x1 float64, c color.Color, width float64, dashes ...vg.Length) (pathLine, error) {
	return pathOf(plotter.XYs{{X: x0, Y: y}, {X: x1, Y: y}}, c, width, dashes...)
}

// marks draws the alarm patients as open diamonds on a path.
func marks(p *plot.Plot, at []int, v []float64, scale float64, c color.Color, legend string) error {
	if len(at) == 0 {
		return nil
	}
	xys := make(plotter.XYs, len(at))
	for k, i := range at {
		xys[k] = plotter.XY{X: float64(i + 1), Y: scale * v[i]}
	}
	sc, err := plotter.NewScatter(xys)
	if err != nil {
		return err
	}
	sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.PyramidGlyph{}, c, vg.Points(4)
	p.Add(sc)
	p.Legend.Add(legend, sc)
	return nil
}

func vladChart(r *monitor.Result) (drawn, error) {
	p := newPlot("Cumulative expected − observed events (above 0: fewer events than predicted)", "", "expected − observed events")
	patientAxis(p, r)
	zero, err := hline(0, 0, float64(r.N), grey, 1)
	if err != nil {
		return drawn{}, err
	}
	l, err := pathOf(thin(r.VLAD, 1), blue, 1.4)
	if err != nil {
		return drawn{}, err
	}
	p.Add(zero, l)
	p.Legend.Add("expected − observed, cumulative", l)
	if err := marks(p, r.Charts[0].Signals, r.VLAD, 1, vermillion, "deterioration chart signalled"); err != nil {
		return drawn{}, err
	}
	lo, hi := 0.0, 0.0
	for _, v := range r.VLAD {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	headroom(p, lo, hi, 0.3)
	return render(p, 7*vg.Inch, 4*vg.Inch)
}

func cusumChart(r *monitor.Result) (drawn, error) {
	p := newPlot("Risk-adjusted CUSUMs, restarted after each signal: deterioration up, improvement down", "", "CUSUM (log-likelihood ratio)")
	patientAxis(p, r)
	colours := []color.Color{vermillion, blue}
	for k, c := range r.Charts {
		sign := 1.0
		if k == 1 {
			sign = -1
		}
		l, err := pathOf(thin(c.Restarted, sign), colours[k], 1.2)
		if err != nil {
			return drawn{}, err
		}
		h, err := hline(sign*c.Limit.H, 0, float64(r.N), colours[k], 1, vg.Points(5), vg.Points(3))
		if err != nil {
			return drawn{}, err
		}
		p.Add(l, h)
		p.Legend.Add(fmt.Sprintf("%s, odds ratio %g", c.Name, c.Limit.R), l)
		p.Legend.Add(fmt.Sprintf("limit h = %.2f (in-control ARL %s patients)", c.Limit.H, grouped(int(c.Limit.TargetARL))), h)
		if err := marks(p, c.Signals, c.Restarted, sign, colours[k], "signal"); err != nil {
			return drawn{}, err
		}
	}
	zero, err := hline(0, 0, float64(r.N), grey, 1)
	if err != nil {
		return drawn{}, err
	}
	p.Add(zero)
	top := r.Charts[0].Limit.H
	bot := -r.Charts[1].Limit.H
	for _, v := range r.Charts[0].Restarted {
		top = math.Max(top, v)
	}
	for _, v := range r.Charts[1].Restarted {
		bot = math.Min(bot, -v)
	}
	headroom(p, bot, top, 0.9)
	return render(p, 7*vg.Inch, 4.5*vg.Inch)
}

func ewmaChart(r *monitor.Result) (drawn, error) {
	e := r.EWMA
	p := newPlot(fmt.Sprintf("EWMA of observed − expected (λ = %g), ±%g exact SD", e.Lambda, e.L), "", "observed − expected (events per patient)")
	patientAxis(p, r)
	up, lo := make([]float64, r.N), make([]float64, r.N)
	for i, sd := range e.SD {
		up[i], lo[i] = e.L*sd, -e.L*sd
	}
	lu, err := pathOf(thin(up, 1), grey, 1, vg.Points(5), vg.Points(3))
	if err != nil {
		return drawn{}, err
	}
	ll, err := pathOf(thin(lo, 1), grey, 1, vg.Points(5), vg.Points(3))
	if err != nil {
		return drawn{}, err
	}
	z, err := pathOf(thin(e.Z, 1), blue, 1.3)
	if err != nil {
		return drawn{}, err
	}
	zero, err := hline(0, 0, float64(r.N), gridGrey, 1)
	if err != nil {
		return drawn{}, err
	}
	p.Add(zero, lu, ll, z)
	p.Legend.Add("observed − expected, smoothed", z)
	p.Legend.Add("control limits", lu)
	var first []int
	if e.FirstAbove >= 0 {
		first = append(first, e.FirstAbove)
	}
	if err := marks(p, first, e.Z, 1, vermillion, "first above the upper limit"); err != nil {
		return drawn{}, err
	}
	first = first[:0]
	if e.FirstBelow >= 0 {
		first = append(first, e.FirstBelow)
	}
	if err := marks(p, first, e.Z, 1, orange, "first below the lower limit"); err != nil {
		return drawn{}, err
	}
	// Leave the first patients' near-zero limits out of the scale: the
	// axis spans the limits from patient 1/λ on.
	from := min(r.N-1, int(1/e.Lambda))
	top := 0.0
	for i := from; i < r.N; i++ {
		top = math.Max(top, math.Max(math.Abs(e.Z[i]), up[i]))
	}
	p.Y.Min, p.Y.Max = -1.3*top, 1.6*top
	return render(p, 7*vg.Inch, 4*vg.Inch)
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
// about a dozen labels.
type periodTicks []string

func (t periodTicks) Ticks(_, _ float64) []plot.Tick {
	step := max(1, (len(t)+11)/12)
	var ts []plot.Tick
	for k, l := range t {
		if k%step == 0 {
			ts = append(ts, plot.Tick{Value: float64(k + 1), Label: l})
		} else {
			ts = append(ts, plot.Tick{Value: float64(k + 1)})
		}
	}
	return ts
}

// periodChart stacks three panels over the periods: O/E, CITL and AUC,
// each with its 95% intervals, the whole cohort's value (dotted) and the
// criteria's bounds (dashed).
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
	labels := make(periodTicks, len(s.Periods))
	for k, q := range s.Periods {
		labels[k] = q.Label
	}
	w, h := 7*vg.Inch, 7.5*vg.Inch
	plots := make([][]*plot.Plot, len(panels))
	for k, pn := range panels {
		title := ""
		if k == 0 {
			title = fmt.Sprintf("By %s: O/E, calibration-in-the-large and AUC with 95%% intervals", s.Period)
		}
		p := newPlot(title, "", pn.name)
		p.X.Min, p.X.Max = 0.4, float64(len(s.Periods))+0.6
		p.X.Tick.Marker = labels
		if k == len(panels)-1 {
			p.X.Label.Text = s.Period + " (" + s.DateColumn + ")"
		}
		p.X.Tick.Label.Rotation = math.Pi / 5
		p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XRight, draw.YCenter
		var pts plotter.XYs
		var errs plotter.YErrors
		lo, hi := math.Inf(1), math.Inf(-1)
		legended := false
		for i, q := range s.Periods {
			v, ci := pn.v(q)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				continue
			}
			pts = append(pts, plotter.XY{X: float64(i + 1), Y: v})
			lo, hi = math.Min(lo, v), math.Max(hi, v)
			e := struct{ Low, High float64 }{0, 0}
			if !math.IsNaN(ci[0]) && !math.IsNaN(ci[1]) {
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
			if !legended {
				p.Legend.Add("plan criterion bound (on the value or an end of its interval)", bl)
				legended = true
			}
			lo, hi = math.Min(lo, b), math.Max(hi, b)
		}
		if finite(pn.all) {
			al, err := hline(pn.all, p.X.Min, p.X.Max, vermillion, 1.2, vg.Points(2), vg.Points(2))
			if err != nil {
				return drawn{}, err
			}
			p.Add(al)
			p.Legend.Add("all patients", al)
			lo, hi = math.Min(lo, pn.all), math.Max(hi, pn.all)
		}
		if !math.IsNaN(pn.ref) {
			rl, err := hline(pn.ref, p.X.Min, p.X.Max, grey, 1, vg.Points(1), vg.Points(2))
			if err != nil {
				return drawn{}, err
			}
			p.Add(rl)
			if k == 0 {
				p.Legend.Add("perfect calibration", rl)
			}
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
			sc, err := plotter.NewScatter(pts)
			if err != nil {
				return drawn{}, err
			}
			sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.CircleGlyph{}, blue, vg.Points(3)
			p.Add(eb, sc)
			if k == 0 {
				p.Legend.Add("period, with 95% interval", sc)
			}
			pad := 0.08 * (hi - lo)
			if pad == 0 {
				pad = 0.1
			}
			p.Y.Min, p.Y.Max = lo-pad, hi+pad*4
		}
		plots[k] = []*plot.Plot{p}
	}
	svg, png, err := paint(w, h, func(dc draw.Canvas) error {
		tiles := draw.Tiles{Rows: len(panels), Cols: 1, PadY: vg.Points(8)}
		canvases := plot.Align(plots, tiles, dc)
		for k := range panels {
			plots[k][0].Draw(canvases[k][0])
		}
		return nil
	})
	return drawn{svg, png}, err
}
