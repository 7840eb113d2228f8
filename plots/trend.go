package plots

import (
	"fmt"
	"image/color"
	"math"
	"strings"
	"time"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/trend"
)

// The trend charts' x-axis is time: an audit's x is its audit date in
// days since 1970-01-01 (Day), so audits are placed by their dates, not
// evenly by order. Audits that share a date are spread symmetrically
// around it by DodgeShare of the axis each (in record order, by series
// first), so that none hides another; the date is their centre.
const (
	// DodgeShare is the horizontal distance between audits that share a
	// date, as a share of the x-axis.
	DodgeShare = 0.018
	// limitShare is the half-width of an audit's control-limit bar, as a
	// share of the x-axis.
	limitShare = 0.008
	// criterionReach is how far a criterion's bound reaches beyond the
	// first and last audit judged by it, as a share of the x-axis.
	criterionReach = 0.025
)

// Day is t's position on a trend chart's x-axis: days since 1970-01-01.
func Day(t time.Time) float64 { return float64(t.Unix()) / 86400 }

// TrendRange is the x-axis of a trend chart of audits from first to last
// (in days, as Day): the span padded by 6% on each side, and at least
// 15 days on each side.
func TrendRange(first, last float64) (min, max float64) {
	pad := math.Max(15, 0.06*(last-first))
	return first - pad, last + pad
}

// TrendX is the x of every audit of the trend on its charts: its date
// (Day), moved by the dodge when audits share the date.
func TrendX(tr *trend.Trend) []float64 {
	xs := make([]float64, len(tr.Points))
	if len(xs) == 0 {
		return xs
	}
	lo, hi := TrendRange(Day(tr.Points[0].Time), Day(tr.Points[len(xs)-1].Time))
	step := DodgeShare * (hi - lo)
	byDate := map[string][]int{}
	for i, p := range tr.Points {
		byDate[p.Date] = append(byDate[p.Date], i)
	}
	for _, idx := range byDate {
		// In series order, then record order (the points' order).
		var order []int
		for s := range tr.Series {
			for _, i := range idx {
				if tr.Points[i].Series == s {
					order = append(order, i)
				}
			}
		}
		for k, i := range order {
			xs[i] = Day(tr.Points[i].Time) + (float64(k)-float64(len(order)-1)/2)*step
		}
	}
	return xs
}

// timeTicks marks calendar dates on an axis in days since 1970-01-01:
// days, weeks (Mondays), months, quarters, half-years or years, the
// finest unit that gives at most seven labels, with unlabelled ticks at
// the next finer unit.
type timeTicks struct{}

// tickUnit is a calendar step: a number of days, months or years.
type tickUnit struct {
	days, months, years int
	format              string
}

var tickUnits = []tickUnit{
	{days: 1, format: "2006-01-02"}, {days: 2, format: "2006-01-02"}, {days: 7, format: "2006-01-02"}, {days: 14, format: "2006-01-02"},
	{months: 1, format: "Jan 2006"}, {months: 2, format: "Jan 2006"}, {months: 3, format: "Jan 2006"}, {months: 6, format: "Jan 2006"},
	{years: 1, format: "2006"}, {years: 2, format: "2006"}, {years: 5, format: "2006"}, {years: 10, format: "2006"},
	{years: 25, format: "2006"}, {years: 50, format: "2006"}, {years: 100, format: "2006"},
}

// approxDays is the unit's length in days, about.
func (u tickUnit) approxDays() float64 {
	return float64(u.days) + 30.44*float64(u.months) + 365.25*float64(u.years)
}

// dates lists the unit's calendar dates within [min, max] days.
func (u tickUnit) dates(min, max float64) []time.Time {
	start := time.Unix(int64(math.Floor(min))*86400, 0).UTC()
	var t time.Time
	switch {
	case u.days == 7 || u.days == 14:
		// From the Monday on or before the start (1970-01-05 was one),
		// every week or fortnight counted from that Monday.
		d := int64(math.Floor(min)) - 4
		d -= ((d % int64(u.days)) + int64(u.days)) % int64(u.days)
		t = time.Unix((d+4)*86400, 0).UTC()
	case u.days > 0:
		t = start
	case u.months > 0:
		m := (int(start.Month()) - 1) / u.months * u.months
		t = time.Date(start.Year(), time.Month(m+1), 1, 0, 0, 0, 0, time.UTC)
	default:
		t = time.Date(start.Year()/u.years*u.years, 1, 1, 0, 0, 0, 0, time.UTC)
	}
	var out []time.Time
	for n := 0; n < 10000; n++ {
		if d := Day(t); d > max+1e-9 {
			break
		} else if d >= min-1e-9 {
			out = append(out, t)
		}
		t = t.AddDate(u.years, u.months, u.days)
	}
	return out
}

// Ticks returns the ticks between min and max (days).
func (timeTicks) Ticks(min, max float64) []plot.Tick {
	k := len(tickUnits) - 1
	for i, u := range tickUnits {
		if (max-min)/u.approxDays() <= 7 {
			k = i
			break
		}
	}
	u := tickUnits[k]
	var ts []plot.Tick
	major := map[float64]bool{}
	for _, t := range u.dates(min, max) {
		major[Day(t)] = true
		ts = append(ts, plot.Tick{Value: Day(t), Label: t.Format(u.format)})
	}
	if k > 0 {
		if minor := tickUnits[k-1].dates(min, max); len(minor) <= 60 {
			for _, t := range minor {
				if !major[Day(t)] {
					ts = append(ts, plot.Tick{Value: Day(t)})
				}
			}
		}
	}
	return ts
}

// seriesColours and seriesGlyphs tell the models of a trend apart
// (Okabe & Ito 2008 colours, and a shape for readers who cannot tell the
// colours apart); they repeat from the sixth model on.
var (
	seriesColours = []color.Color{blue, color.RGBA{0x00, 0x9E, 0x73, 0xff}, color.RGBA{0xCC, 0x79, 0xA7, 0xff},
		color.RGBA{0x56, 0xB4, 0xE9, 0xff}, ink}
	seriesGlyphs = []draw.GlyphDrawer{draw.CircleGlyph{}, draw.BoxGlyph{}, draw.PyramidGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{}}
)

// SeriesColour is the colour of series i on the trend charts.
func SeriesColour(i int) color.Color { return seriesColours[i%len(seriesColours)] }

// chart is one of the four trend charts.
type chart struct {
	name, title, ylab string
	get               func(history.Record) [3]float64
	ideal             float64
	// idealText names the ideal line in the legend.
	idealText string
	// measures are the criterion measures drawn on the chart (the
	// measure, its 95% interval's ends, the interval for contains).
	measures []string
}

var trendCharts = []chart{
	{"trend_auc.svg", "AUC by audit date", "AUC", func(r history.Record) [3]float64 { return r.AUC }, math.NaN(), "",
		[]string{"auc", "auc_ci", "auc_ci.lower", "auc_ci.upper"}},
	{"trend_oe.svg", "Observed / expected events by audit date", "O/E", func(r history.Record) [3]float64 { return r.OE }, 1, "O/E = 1: as many events as predicted",
		[]string{"oe", "oe_ci", "oe_ci.lower", "oe_ci.upper"}},
	{"trend_slope.svg", "Calibration slope by audit date", "calibration slope", func(r history.Record) [3]float64 { return r.Slope }, 1, "slope = 1: risks neither too extreme nor too moderate",
		[]string{"slope", "slope_ci", "slope_ci.lower", "slope_ci.upper"}},
	{"trend_citl.svg", "Calibration-in-the-large by audit date", "calibration-in-the-large (log-odds)", func(r history.Record) [3]float64 { return r.CITL }, 0, "0: risks right on average",
		[]string{"citl", "citl_ci", "citl_ci.lower", "citl_ci.upper"}},
}

// SeriesName is how the charts' legends name series i: numbered when
// the trend holds several models, the model's name (whole: a legend
// entry wider than the figure wraps onto the lines below it), then the
// short hash of its file and, when it updates another model, which.
func SeriesName(tr *trend.Trend, i int) string {
	s := tr.Series[i]
	var tags []string
	if s.Model.SHA256 != "" {
		tags = append(tags, "sha256 "+trend.ShortSHA(s.Model.SHA256))
	}
	switch {
	case s.Parent >= 0:
		tags = append(tags, fmt.Sprintf("update of model %d", s.Parent+1))
	case s.ParentSHA != "":
		tags = append(tags, "update of sha256 "+trend.ShortSHA(s.ParentSHA))
	}
	head, tail := "", ""
	if len(tr.Series) > 1 {
		head = fmt.Sprintf("model %d: ", i+1)
	}
	if len(tags) > 0 {
		tail = " (" + strings.Join(tags, ", ") + ")"
	}
	return head + s.Model.Name + tail
}

// seriesLegend is SeriesName with a preferred break before the
// parenthesis of hashes, for a legend entry that does not fit one line.
func seriesLegend(tr *trend.Trend, i int) string {
	name := SeriesName(tr, i)
	if k := strings.LastIndex(name, " (sha256 "); k > 0 {
		return name[:k] + "\n" + name[k+1:]
	}
	return name
}

// Trend draws the four trend charts of an audit history: AUC, O/E (with
// its funnel-type control limits), calibration slope and
// calibration-in-the-large, each audit with its 95% interval, on a time
// axis; one series per model, a dashed vertical mark where a new model
// entered, and the criteria the audits were judged by as bounds.
func Trend(tr *trend.Trend) ([]Figure, error) {
	var out []Figure
	if len(tr.Points) == 0 {
		return nil, fmt.Errorf("a trend without audits")
	}
	xs := TrendX(tr)
	lo, hi := TrendRange(Day(tr.Points[0].Time), Day(tr.Points[len(xs)-1].Time))
	for _, ch := range trendCharts {
		p := newPlot("", "Audit date", ch.ylab)
		p.X.Tick.Marker = timeTicks{}
		p.Y.Tick.Marker = roundTicks{}
		p.X.Min, p.X.Max = lo, hi
		leg := plot.NewLegend()
		styleLegend(&leg)
		n := 0 // legend entries
		// An entry wider than the strip wraps: its first line beside the
		// thumbnail, the rest as lines of their own below it.
		room := trendWidth - vg.Points(10) - leg.XOffs - leg.ThumbnailWidth - vg.Points(12)
		// A "\n" in an entry is where it breaks first when it does not
		// fit on one line.
		add := func(text string, th ...plot.Thumbnailer) {
			one := strings.ReplaceAll(text, "\n", " ")
			var ls []string
			if textStyle(leg.TextStyle.Font, ink).Width(one) <= room {
				ls = []string{one}
			} else {
				for _, part := range strings.Split(text, "\n") {
					ls = append(ls, lines(part, leg.TextStyle.Font, room)...)
				}
			}
			for k, l := range ls {
				if k == 0 {
					leg.Add(l, th...)
				} else {
					leg.Add(l)
				}
				n++
			}
		}
		if !math.IsNaN(ch.ideal) {
			ideal, err := line(plotter.XYs{{X: lo, Y: ch.ideal}, {X: hi, Y: ch.ideal}}, grey, 1, vg.Points(4), vg.Points(3))
			if err != nil {
				return nil, err
			}
			p.Add(ideal)
			add(ch.idealText, ideal)
		}
		if ch.name == "trend_oe.svg" {
			if err := addLimits(p, tr, xs, limitShare*(hi-lo), add); err != nil {
				return nil, err
			}
		}
		if err := addCriteria(p, tr, xs, criterionReach*(hi-lo), ch.measures, add); err != nil {
			return nil, err
		}
		// The marks go under the audits, so that a label never hides a
		// point or an interval.
		for k, c := range tr.Changes {
			p.Add(&changeMark{x: Day(tr.Points[c.Point].Time), label: fmt.Sprintf("model %d", c.Series+1), row: k})
		}
		missing, noBar := 0, 0
		var series []Series
		for si := range tr.Series {
			d, m, nb, err := addSeries(p, tr, si, xs, ch, add)
			if err != nil {
				return nil, err
			}
			series = append(series, d...)
			missing, noBar = missing+m, noBar+nb
		}
		if len(tr.Changes) > 0 {
			add(fmt.Sprintf("first audit of a new model (%s)", changeDates(tr)), &changeMark{})
		}
		add("bars: each audit's 95% confidence interval")
		if missing > 0 {
			add(fmt.Sprintf("%d %s not estimable: no point", missing, audits(missing)))
		}
		if noBar > 0 {
			add(fmt.Sprintf("%d %s with an interval not estimable: no bar", noBar, audits(noBar)))
		}
		if unknown := withoutCriteria(tr); unknown > 0 {
			add(fmt.Sprintf("%d %s recorded without their criteria: no bounds drawn for them", unknown, audits(unknown)))
		}
		// A little room above and below the data, so that a bound on the
		// edge of the range is not drawn on the axis.
		pad := 0.04 * (p.Y.Max - p.Y.Min)
		p.Y.Min, p.Y.Max = p.Y.Min-pad, p.Y.Max+pad
		b, png, err := single(p, sheet{title: ch.title, legend: &leg, entries: n}, trendWidth, 3.6*vg.Inch)
		if err != nil {
			return nil, err
		}
		out = append(out, Figure{Name: ch.name, Title: ch.title, SVG: b, PNG: png, Series: series})
	}
	return out, nil
}

// trendWidth is the width of a trend chart.
const trendWidth = 6.5 * vg.Inch

// styleLegend gives a legend below a chart the look of the others.
func styleLegend(l *plot.Legend) {
	l.Top, l.Left = true, true
	l.TextStyle.Font = sans(9)
	l.TextStyle.Color = ink
	l.ThumbnailWidth = vg.Points(22)
	l.Padding = vg.Points(4)
	l.XOffs = vg.Points(30)
}

// legendRow is the height of one legend entry below a chart.
const legendRow = 12.5

// addSeries draws one model's audits: points with their 95% intervals,
// joined in date order (broken where an audit has no point), and a ring
// on the series' first audit outside the O/E 99.8% limits. It returns
// how many audits have no point and how many no bar.
func addSeries(p *plot.Plot, tr *trend.Trend, si int, xs []float64, ch chart, add func(string, ...plot.Thumbnailer)) (drawnData []Series, missing, noBar int, err error) {
	s := tr.Series[si]
	col, glyph := SeriesColour(si), seriesGlyphs[si%len(seriesGlyphs)]
	var pts, barPts, run plotter.XYs
	var errs plotter.YErrors
	var lines []plot.Plotter
	flush := func() error {
		if len(run) > 1 {
			l, err := line(run, col, 1.2)
			if err != nil {
				return err
			}
			lines = append(lines, l)
		}
		run = nil
		return nil
	}
	for _, i := range s.Points {
		v := ch.get(tr.Points[i].Record)
		if !finite(v[0]) {
			missing++
			if err := flush(); err != nil {
				return nil, 0, 0, err
			}
			continue
		}
		xy := plotter.XY{X: xs[i], Y: v[0]}
		pts, run = append(pts, xy), append(run, xy)
		if finite(v[1]) && finite(v[2]) {
			barPts = append(barPts, xy)
			errs = append(errs, struct{ Low, High float64 }{v[0] - v[1], v[2] - v[0]})
		} else {
			noBar++
		}
	}
	if err := flush(); err != nil {
		return nil, 0, 0, err
	}
	p.Add(lines...)
	if len(barPts) > 0 {
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYs
			plotter.YErrors
		}{barPts, errs})
		if err != nil {
			return nil, 0, 0, err
		}
		eb.LineStyle.Color = col
		p.Add(eb)
	}
	if len(pts) > 0 {
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, 0, 0, err
		}
		sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = glyph, col, vg.Points(3)
		p.Add(sc)
		add(seriesLegend(tr, si), sc)
	} else {
		add(SeriesName(tr, si) + ": no audit with this measure")
	}
	if ch.name == "trend_oe.svg" && s.FirstOutside >= 0 && finite(tr.Points[s.FirstOutside].Record.OE[0]) {
		i := s.FirstOutside
		fl, err := plotter.NewScatter(plotter.XYs{{X: xs[i], Y: tr.Points[i].Record.OE[0]}})
		if err != nil {
			return nil, 0, 0, err
		}
		fl.GlyphStyle.Shape, fl.GlyphStyle.Color, fl.GlyphStyle.Radius = draw.RingGlyph{}, vermillion, vg.Points(7)
		p.Add(fl)
		who := ""
		if len(tr.Series) > 1 {
			who = fmt.Sprintf("model %d's ", si+1)
		}
		add(fmt.Sprintf("%sfirst audit outside the 99.8%% limits (%s)", who, tr.Points[i].Date), fl)
	}
	var ends plotter.XYs
	for k, b := range barPts {
		ends = append(ends, plotter.XY{X: b.X, Y: b.Y - errs[k].Low}, plotter.XY{X: b.X, Y: b.Y + errs[k].High})
	}
	name := fmt.Sprintf("model %d", si+1)
	return []Series{{Name: name, Points: pts}, {Name: name + " interval", Points: ends}}, missing, noBar, nil
}

// addLimits draws the 95% and 99.8% control limits of every audit as
// short bars at its position: the limits are the audit's own (they
// depend on its expected events), so they are not joined across audits.
func addLimits(p *plot.Plot, tr *trend.Trend, xs []float64, half float64, add func(string, ...plot.Thumbnailer)) error {
	for k, lim := range []struct {
		get   func(trend.Point) [2]float64
		label string
	}{
		{func(pt trend.Point) [2]float64 { return pt.Limit95 }, "95% control limits of each audit (1 ± 1.96/√E)"},
		{func(pt trend.Point) [2]float64 { return pt.Limit998 }, "99.8% control limits of each audit (1 ± 3.09/√E)"},
	} {
		col := orange
		if k == 1 {
			col = vermillion
		}
		var first *plotter.Line
		for i, pt := range tr.Points {
			l := lim.get(pt)
			if !finite(l[0]) || !finite(l[1]) {
				continue
			}
			for _, y := range l {
				b, err := line(plotter.XYs{{X: xs[i] - half, Y: y}, {X: xs[i] + half, Y: y}}, col, 1.4)
				if err != nil {
					return err
				}
				p.Add(b)
				if first == nil {
					first = b
				}
			}
		}
		if first != nil {
			add(lim.label, first)
		}
	}
	return nil
}

// criterionKey is a criterion as the charts draw it.
type criterionKey struct {
	measure, bound, severity string
}

// Bounds is where a criterion puts its bound lines: the values, for
// "contains" the value the interval must contain.
func Bounds(c history.Criterion) []float64 {
	switch {
	case c.AtLeast != nil:
		return []float64{*c.AtLeast}
	case c.AtMost != nil:
		return []float64{*c.AtMost}
	case c.Between != nil:
		return []float64{c.Between[0], c.Between[1]}
	case c.Contains != nil:
		return []float64{*c.Contains}
	}
	return nil
}

// addCriteria draws the criteria on the chart's measures that the
// audits were judged by: each as horizontal lines at its bounds, over
// every run of consecutive audits (in date order, of any model) judged
// by it, so that a bound changed between audits shows where it changed.
// Fail criteria are dark, review criteria grey.
func addCriteria(p *plot.Plot, tr *trend.Trend, xs []float64, reach float64, measures []string, add func(string, ...plot.Thumbnailer)) error {
	on := map[string]bool{}
	for _, m := range measures {
		on[m] = true
	}
	var keys []criterionKey
	crit := map[criterionKey]history.Criterion{}
	has := map[criterionKey][]bool{}
	for i, pt := range tr.Points {
		for _, c := range pt.Record.Criteria {
			if !on[c.Measure] || len(Bounds(c)) == 0 {
				continue
			}
			k := criterionKey{c.Measure, c.Bound(), c.Severity}
			if _, ok := crit[k]; !ok {
				keys = append(keys, k)
				crit[k] = c
				has[k] = make([]bool, len(tr.Points))
			}
			has[k][i] = true
		}
	}
	for n, k := range keys {
		col := ink
		if k.severity == "review" {
			col = grey
		}
		dashes := criterionDashes[n%len(criterionDashes)]
		var first *plotter.Line
		for i := 0; i < len(tr.Points); {
			if !has[k][i] {
				i++
				continue
			}
			j := i
			for j+1 < len(tr.Points) && has[k][j+1] {
				j++
			}
			x0, x1 := math.Min(xs[i], xs[j])-reach, math.Max(xs[i], xs[j])+reach
			for _, b := range Bounds(crit[k]) {
				l, err := line(plotter.XYs{{X: x0, Y: b}, {X: x1, Y: b}}, col, 1.1, dashes...)
				if err != nil {
					return err
				}
				p.Add(l)
				if first == nil {
					first = l
				}
			}
			i = j + 1
		}
		add(fmt.Sprintf("%s criterion: %s %s", k.severity, k.measure, k.bound), first)
	}
	return nil
}

// criterionDashes tell the criteria of one chart apart (all dash-dotted,
// unlike the dashed ideal line and control limits).
var criterionDashes = [][]vg.Length{
	{vg.Points(6), vg.Points(2), vg.Points(1.5), vg.Points(2)},
	{vg.Points(10), vg.Points(2), vg.Points(1.5), vg.Points(2), vg.Points(1.5), vg.Points(2)},
	{vg.Points(3), vg.Points(2), vg.Points(1.5), vg.Points(2)},
}

// withoutCriteria counts the audits recorded without their criteria.
func withoutCriteria(tr *trend.Trend) int {
	n := 0
	for _, p := range tr.Points {
		if p.Record.Criteria == nil {
			n++
		}
	}
	return n
}

// changeDates lists the dates where a new model entered.
func changeDates(tr *trend.Trend) string {
	s := ""
	for k, c := range tr.Changes {
		if k > 0 {
			s += ", "
		}
		s += fmt.Sprintf("model %d from %s", c.Series+1, tr.Points[c.Point].Date)
	}
	return s
}

// changeMark is the dashed vertical line at the date a new model entered,
// across the chart's whole height, labelled with the model's number at
// the top (row moves the label down when marks share a date); it adds
// nothing to the chart's data range. As a legend thumbnail it is a short
// vertical dash.
type changeMark struct {
	x     float64
	label string
	row   int
}

var changeStyle = draw.LineStyle{Color: ink, Width: vg.Points(1), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}}

// Plot draws the mark.
func (m *changeMark) Plot(c draw.Canvas, p *plot.Plot) {
	trX, _ := p.Transforms(&c)
	x := trX(m.x)
	c.StrokeLine2(changeStyle, x, c.Min.Y, x, c.Max.Y)
	sty := draw.TextStyle{Color: ink, Font: p.Legend.TextStyle.Font, Handler: p.Legend.TextStyle.Handler}
	sty.Font.Size = vg.Points(8)
	at := vg.Point{X: x + vg.Points(3), Y: c.Max.Y - vg.Points(10+10*float64(m.row))}
	// On a white patch, so that a bound or a line behind it does not
	// strike the label through.
	box := sty.Rectangle(m.label)
	var patch vg.Path
	patch.Move(vg.Point{X: at.X - 1, Y: at.Y + box.Min.Y - 1})
	patch.Line(vg.Point{X: at.X + box.Max.X + 2, Y: at.Y + box.Min.Y - 1})
	patch.Line(vg.Point{X: at.X + box.Max.X + 2, Y: at.Y + box.Max.Y + 1})
	patch.Line(vg.Point{X: at.X - 1, Y: at.Y + box.Max.Y + 1})
	patch.Close()
	c.SetColor(color.White)
	c.Fill(patch)
	c.FillText(sty, at, m.label)
}

// Thumbnail draws the mark in a legend.
func (m *changeMark) Thumbnail(c *draw.Canvas) {
	x := (c.Min.X + c.Max.X) / 2
	c.StrokeLine2(changeStyle, x, c.Min.Y, x, c.Max.Y)
}

// audits is "audit" or "audits" for n of them.
func audits(n int) string {
	if n == 1 {
		return "audit"
	}
	return "audits"
}
