package plots

import (
	"fmt"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/trend"
	"gonum.org/v1/plot/plotter"
)

// trendRecords is an invented history: model A audited on uneven dates
// (a gap of five months, then one of a week), then its update B, with
// A and B both audited on B's first date, and a criterion on the slope
// that is tightened from B's second audit on.
func trendRecords() []history.Record {
	f := func(v float64) *float64 { return &v }
	wide := []history.Criterion{{Measure: "slope", Between: &[2]float64{0.8, 1.2}, Severity: "fail"},
		{Measure: "auc_ci.lower", AtLeast: f(0.7), Severity: "fail"}, {Measure: "oe_ci", Contains: f(1), Severity: "fail"}}
	tight := []history.Criterion{{Measure: "slope", Between: &[2]float64{0.9, 1.1}, Severity: "review"}}
	rec := func(id int64, date, sha, parent string, oe, slope float64, c []history.Criterion) history.Record {
		return history.Record{ID: id, AuditDate: date, Model: "Ward model", ModelSHA: sha, ParentSHA: parent, Used: 900, Events: 100, Expected: 100 / oe,
			AUC: [3]float64{0.76, 0.72, 0.80}, OE: [3]float64{oe, oe - 0.1, oe + 0.1}, Slope: [3]float64{slope, slope - 0.1, slope + 0.1},
			CITL: [3]float64{0.05, -0.05, 0.15}, Criteria: c}
	}
	return []history.Record{
		rec(1, "2025-01-31", "aaaaaaaa11", "", 1.00, 1.00, wide),
		rec(2, "2025-02-28", "aaaaaaaa11", "", 1.05, 0.98, wide),
		rec(3, "2025-07-31", "aaaaaaaa11", "", 1.25, 0.95, wide),
		rec(4, "2025-08-07", "aaaaaaaa11", "", 1.30, 0.93, wide),
		rec(5, "2025-09-30", "aaaaaaaa11", "", 1.32, 0.92, wide),
		rec(6, "2025-09-30", "bbbbbbbb22", "aaaaaaaa11", 1.01, 1.00, wide),
		rec(7, "2025-12-31", "bbbbbbbb22", "aaaaaaaa11", 1.02, 1.02, tight),
	}
}

var (
	circleRe = regexp.MustCompile(`<path d="M([-0-9.]+),([-0-9.]+)A3,3 0 1 1 [^"]*" style="fill:#0072B2" />`)
	boxRe    = regexp.MustCompile(`<path d="M([-0-9.]+),([-0-9.]+)L([-0-9.]+),[-0-9.]+L[-0-9.]+,([-0-9.]+)L[-0-9.,]+Z" style="fill:#009E73" />`)
	gridRe   = regexp.MustCompile(`<path d="M([-0-9.]+),([-0-9.]+)L([-0-9.]+),([-0-9.]+)" style="fill:none;stroke:#D0D0D0;stroke-width:0.25;stroke-dasharray:1,2" />`)
	markRe   = regexp.MustCompile(`<path d="M([-0-9.]+),[-0-9.]+L([-0-9.]+),[-0-9.]+" style="fill:none;stroke:#202020;stroke-dasharray:2,2" />`)
	boundRe  = regexp.MustCompile(`<path d="M([-0-9.]+),([-0-9.]+)L([-0-9.]+),([-0-9.]+)" style="fill:none;stroke:#(202020|808080);stroke-width:1.1;stroke-dasharray:[0-9.,]+" />`)
)

func atof(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// xMap finds the map from days to SVG x on a chart from its vertical
// grid lines, which gonum draws at the major ticks: the ticks' dates
// (from timeTicks) against the lines' x. It checks that the lines lie on
// one straight line of the dates, so the axis is linear in time.
func xMap(t *testing.T, svg string, lo, hi float64) func(float64) float64 {
	t.Helper()
	var xs []float64
	for _, m := range gridRe.FindAllStringSubmatch(svg, -1) {
		if m[1] == m[3] { // vertical
			xs = append(xs, atof(t, m[1]))
		}
	}
	var days []float64
	for _, tk := range (timeTicks{}).Ticks(lo, hi) {
		if tk.Label != "" {
			days = append(days, tk.Value)
		}
	}
	slices.Sort(days)
	if len(xs) != len(days) || len(xs) < 3 {
		t.Fatalf("%d vertical grid lines for %d labelled ticks", len(xs), len(days))
	}
	a := (xs[len(xs)-1] - xs[0]) / (days[len(days)-1] - days[0])
	f := func(d float64) float64 { return xs[0] + a*(d-days[0]) }
	for i := range xs {
		if math.Abs(f(days[i])-xs[i]) > 0.02 {
			t.Errorf("grid line %d at x %.3f, the dates put it at %.3f: the axis is not linear in time", i, xs[i], f(days[i]))
		}
	}
	return f
}

// TestTrendTimeAxis checks the plotted coordinates of the trend charts
// against the records: every audit's point is at the x of its date (from
// the axis' own calendar ticks), audits sharing a date are spread by the
// documented step around it, series keep their own colours and shapes,
// the model change is marked at the date of the new model's first
// audit, and the criteria's bounds are drawn at their values over the
// audits judged by them.
func TestTrendTimeAxis(t *testing.T) {
	recs := trendRecords()
	tr, err := trend.Build(recs)
	if err != nil {
		t.Fatal(err)
	}
	figs, err := Trend(tr)
	if err != nil {
		t.Fatal(err)
	}
	day := func(s string) float64 {
		d, err := time.Parse(time.DateOnly, s)
		if err != nil {
			t.Fatal(err)
		}
		return Day(d)
	}
	lo, hi := TrendRange(day(recs[0].AuditDate), day(recs[len(recs)-1].AuditDate))
	step := DodgeShare * (hi - lo)
	for _, f := range figs {
		svg := string(f.SVG)
		checkSVG(t, f.Name, f.SVG)
		toX := xMap(t, svg, lo, hi)
		// The chart's bottom: points below it are the legend's.
		bottom := math.Inf(1)
		for _, m := range gridRe.FindAllStringSubmatch(svg, -1) {
			bottom = math.Min(bottom, atof(t, m[2]))
		}
		var a, b [][2]float64
		for _, m := range circleRe.FindAllStringSubmatch(svg, -1) {
			if y := atof(t, m[2]); y > bottom {
				a = append(a, [2]float64{atof(t, m[1]) - 3, y}) // the path starts at the right of the circle
			}
		}
		for _, m := range boxRe.FindAllStringSubmatch(svg, -1) {
			if y := atof(t, m[2]); y > bottom { // a box's corners: its centre is their middle
				b = append(b, [2]float64{(atof(t, m[1]) + atof(t, m[3])) / 2, (y + atof(t, m[4])) / 2})
			}
		}
		if len(a) != 5 || len(b) != 2 {
			t.Fatalf("%s: %d points of model 1 and %d of model 2, want 5 and 2", f.Name, len(a), len(b))
		}
		want := []float64{day("2025-01-31"), day("2025-02-28"), day("2025-07-31"), day("2025-08-07"), day("2025-09-30") - step/2}
		for i, p := range a {
			if math.Abs(p[0]-toX(want[i])) > 0.02 {
				t.Errorf("%s: model 1's audit of %s at x %.3f, its date puts it at %.3f", f.Name, recs[i].AuditDate, p[0], toX(want[i]))
			}
		}
		for i, d := range []float64{day("2025-09-30") + step/2, day("2025-12-31")} {
			if math.Abs(b[i][0]-toX(d)) > 0.02 {
				t.Errorf("%s: model 2's audit %d at x %.3f, want %.3f", f.Name, i+1, b[i][0], toX(d))
			}
		}
		// The week between the third and fourth audits is a week on the
		// axis, a fifth of the five months before it (not one step of
		// an evenly spaced axis).
		if r := (a[3][0] - a[2][0]) / (a[2][0] - a[1][0]); math.Abs(r-7.0/153) > 1e-3 {
			t.Errorf("%s: the week's gap is %.4f of the five months', want %.4f", f.Name, r, 7.0/153)
		}
		marks := markRe.FindAllStringSubmatch(svg, -1)
		var at []float64
		for _, m := range marks {
			if m[1] == m[2] {
				at = append(at, atof(t, m[1]))
			}
		}
		// One mark on the chart and one in the legend.
		if len(at) != 2 || math.Abs(at[0]-toX(day("2025-09-30"))) > 0.02 {
			t.Errorf("%s: model change marks at %v, want one at x %.3f (2025-09-30)", f.Name, at, toX(day("2025-09-30")))
		}
		if !strings.Contains(svg, "model 2: Ward model (sha256 bbbbbbbb, update of model 1)") {
			t.Errorf("%s: the legend does not name model 2 as the update of model 1", f.Name)
		}
		if f.Name != "trend_slope.svg" {
			continue
		}
		// y from the points of model 1 (slope 1.00 and 0.92).
		ay := func(v float64) float64 { return a[0][1] + (a[4][1]-a[0][1])*(v-1.00)/(0.92-1.00) }
		var bounds [][4]float64
		for _, m := range boundRe.FindAllStringSubmatch(svg, -1) {
			if y := atof(t, m[2]); y > bottom {
				bounds = append(bounds, [4]float64{atof(t, m[1]), atof(t, m[3]), y, atof(t, m[4])})
			}
		}
		reach := criterionReach * (hi - lo)
		wantB := []struct{ x0, x1, y float64 }{
			{day("2025-01-31") - reach, day("2025-09-30") + step/2 + reach, 0.8},
			{day("2025-01-31") - reach, day("2025-09-30") + step/2 + reach, 1.2},
			{day("2025-12-31") - reach, day("2025-12-31") + reach, 0.9},
			{day("2025-12-31") - reach, day("2025-12-31") + reach, 1.1},
		}
		if len(bounds) != len(wantB) {
			t.Fatalf("slope chart: %d bound lines, want %d: %v", len(bounds), len(wantB), bounds)
		}
		for i, w := range wantB {
			g := bounds[i]
			if math.Abs(g[0]-toX(w.x0)) > 0.02 || math.Abs(g[1]-toX(w.x1)) > 0.02 || math.Abs(g[2]-ay(w.y)) > 0.05 || g[2] != g[3] {
				t.Errorf("slope chart: bound %d drawn %v, want x %.3f to %.3f at y %.3f", i, g, toX(w.x0), toX(w.x1), ay(w.y))
			}
		}
		for _, s := range []string{"fail criterion: slope between 0.8 and 1.2", "review criterion: slope between 0.9 and 1.1"} {
			if !strings.Contains(svg, s) {
				t.Errorf("slope chart: no legend entry %q", s)
			}
		}
	}
}

// TestTimeTicks: the calendar ticks for spans from a fortnight to
// decades (the expected dates are calendar facts).
func TestTimeTicks(t *testing.T) {
	day := func(s string) float64 {
		d, _ := time.Parse(time.DateOnly, s)
		return Day(d)
	}
	for _, tc := range []struct {
		from, to string
		want     []string
	}{
		{"2026-03-01", "2026-03-05", []string{"2026-03-01", "2026-03-02", "2026-03-03", "2026-03-04", "2026-03-05"}},
		// Mondays: 2026-03-02 was one.
		{"2026-02-25", "2026-04-01", []string{"2026-03-02", "2026-03-09", "2026-03-16", "2026-03-23", "2026-03-30"}},
		{"2025-12-10", "2026-06-20", []string{"Jan 2026", "Feb 2026", "Mar 2026", "Apr 2026", "May 2026", "Jun 2026"}},
		{"2025-12-10", "2026-09-20", []string{"Jan 2026", "Mar 2026", "May 2026", "Jul 2026", "Sep 2026"}},
		{"2025-12-10", "2027-02-20", []string{"Jan 2026", "Apr 2026", "Jul 2026", "Oct 2026", "Jan 2027"}},
		{"2024-11-01", "2026-02-01", []string{"Jan 2025", "Apr 2025", "Jul 2025", "Oct 2025", "Jan 2026"}},
		{"2019-06-01", "2026-02-01", []string{"2020", "2021", "2022", "2023", "2024", "2025", "2026"}},
		{"1990-01-01", "2026-01-01", []string{"1990", "2000", "2010", "2020"}},
	} {
		var got []string
		minor := 0
		for _, tk := range (timeTicks{}).Ticks(day(tc.from), day(tc.to)) {
			if tk.Label == "" {
				minor++
				continue
			}
			got = append(got, tk.Label)
		}
		if !slices.Equal(got, tc.want) {
			t.Errorf("%s to %s: ticks %v, want %v", tc.from, tc.to, got, tc.want)
		}
		if len(got) > 7 {
			t.Errorf("%s to %s: %d labels", tc.from, tc.to, len(got))
		}
	}
}

// TestTrendOneAudit: a history of one audit gets an axis of a month
// around its date, with its criterion drawn across it.
func TestTrendOneAudit(t *testing.T) {
	tr, err := trend.Build(trendRecords()[:1])
	if err != nil {
		t.Fatal(err)
	}
	figs, err := Trend(tr)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range figs {
		checkSVG(t, f.Name, f.SVG)
		if strings.Contains(string(f.SVG), "model 1") || strings.Contains(string(f.SVG), "new model") {
			t.Errorf("%s numbers the only model or marks a change", f.Name)
		}
	}
	if !strings.Contains(string(figs[2].SVG), "fail criterion: slope between 0.8 and 1.2") {
		t.Error("the slope chart of one audit does not draw its criterion")
	}
}

// TestTrendSeries checks the data each trend chart draws against the
// history records it is given (those trend.json lists): for every model,
// each audit's estimate at its audit date and its 95% interval's ends.
func TestTrendSeries(t *testing.T) {
	recs := trendRecords()
	for i := range recs { // intervals not symmetric about the estimate, as O/E's and the AUC's are not
		recs[i].AUC[1] -= 0.02
		recs[i].OE[2] += 0.07
		recs[i].Slope[2] += 0.03
		recs[i].CITL[1] -= 0.04
	}
	recs[2].AUC = [3]float64{math.NaN(), math.NaN(), math.NaN()} // not estimable: no point
	recs[4].Slope[1] = math.NaN()                                // no interval: a point without a bar
	tr, err := trend.Build(recs)
	if err != nil {
		t.Fatal(err)
	}
	figs, err := Trend(tr)
	if err != nil {
		t.Fatal(err)
	}
	xs := TrendX(tr)
	for c, f := range figs {
		got := map[string]plotter.XYs{}
		for _, s := range f.Series {
			got[s.Name] = s.Points
		}
		for si, s := range tr.Series {
			var pts, ends plotter.XYs
			for _, i := range s.Points {
				v := trendCharts[c].get(tr.Points[i].Record)
				if math.IsNaN(v[0]) {
					continue
				}
				pts = append(pts, plotter.XY{X: xs[i], Y: v[0]})
				if !math.IsNaN(v[1]) && !math.IsNaN(v[2]) {
					ends = append(ends, plotter.XY{X: xs[i], Y: v[1]}, plotter.XY{X: xs[i], Y: v[2]})
				}
			}
			name := fmt.Sprintf("model %d", si+1)
			for _, w := range []struct {
				name string
				want plotter.XYs
			}{{name, pts}, {name + " interval", ends}} {
				g := got[w.name]
				if len(g) != len(w.want) {
					t.Errorf("%s %s: %d points drawn, the records give %d", f.Name, w.name, len(g), len(w.want))
					continue
				}
				for k := range g {
					if math.Abs(g[k].X-w.want[k].X) > 1e-9 || math.Abs(g[k].Y-w.want[k].Y) > 1e-12 {
						t.Errorf("%s %s point %d: drawn (%g, %g), record (%g, %g)", f.Name, w.name, k, g[k].X, g[k].Y, w.want[k].X, w.want[k].Y)
					}
				}
			}
		}
	}
}
