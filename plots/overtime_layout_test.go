package plots

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/riskaudit/riskaudit/history"
	"github.com/riskaudit/riskaudit/internal/figcheck"
	"github.com/riskaudit/riskaudit/monitor"
	"github.com/riskaudit/riskaudit/trend"
	"github.com/riskaudit/riskaudit/validate"
)

// overTimeRun is an invented extract in date order: n patients over
// days days from 2024-01-01, risks from p (patient i of n), outcomes
// drawn from each risk times drift.
func overTimeRun(t *testing.T, n, days int, p func(i int) float64, drift float64, per monitor.Periods) (*monitor.Result, *monitor.Summary) {
	t.Helper()
	r := rand.New(rand.NewPCG(3, 5))
	y, ps := make([]float64, n), make([]float64, n)
	dates := make([]time.Time, n)
	start := time.Date(2024, 1, 1, 0, 0, 0, 0, time.UTC)
	for i := range n {
		ps[i] = p(i)
		if r.Float64() < math.Min(1, ps[i]*drift) {
			y[i] = 1
		}
		dates[i] = start.AddDate(0, 0, i*days/n)
	}
	res, err := monitor.Run(context.Background(), y, ps, monitor.DatesOf(dates), monitor.Options{
		Limits: monitor.LimitOptions{ARL: 500, Runs: 200, Seed: 1}, Periods: per})
	if err != nil {
		t.Fatal(err)
	}
	return res, res.Summarise("date_of_admission_to_the_surgical_ward")
}

// TestOverTimeFigureLayout draws the four charts in date order for an
// ordinary extract and for stress extracts (risks piled up near 0 and 1,
// three years of months, blocks of patients, a long date column) and
// checks each with checkLayout (no NaN, texts inside the canvas and
// apart, the PNG's size); it also checks what the issue asks of every
// figure: the legend below the chart (every legend text lower on the
// canvas than the x-axis tick labels) and round, labelled ticks.
func TestOverTimeFigureLayout(t *testing.T) {
	crit := []validate.Criterion{}
	lo, hi := 0.7, 0.2
	crit = append(crit, validate.Criterion{Measure: "auc_ci.lower", AtLeast: &lo}, validate.Criterion{Measure: "citl", AtMost: &hi})
	for _, tc := range []struct {
		name     string
		n, days  int
		p        func(i int) float64
		drift    float64
		per      monitor.Periods
		legendAt string // a legend text the figure must carry
	}{
		{"ordinary", 3000, 365, func(i int) float64 { return 0.05 + 0.2*float64(i%10)/10 }, 1.3, monitor.Periods{Kind: "month"}, "expected − observed events, summed in date order"},
		{"extreme risks, three years", 9000, 3 * 365, func(i int) float64 {
			switch i % 3 {
			case 0:
				return 1e-6
			case 1:
				return 1 - 1e-6
			}
			return float64(i%100)/100 + 0.005
		}, 1, monitor.Periods{Kind: "month"}, "0: as many events as the model predicted"},
		{"blocks", 2500, 90, func(i int) float64 { return 0.1 }, 0.7, monitor.Periods{Kind: "block", Block: 200}, "0: where both charts start and restart"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			r, s := overTimeRun(t, tc.n, tc.days, tc.p, tc.drift, tc.per)
			figs, err := Monitor(r, s, crit)
			if err != nil {
				t.Fatal(err)
			}
			if len(figs) != 4 {
				t.Fatalf("%d figures, want 4", len(figs))
			}
			all := ""
			for _, f := range figs {
				checkLayout(t, f)
				checkLegendBelow(t, f)
				all += string(f.SVG)
			}
			if !strings.Contains(all, tc.legendAt) {
				t.Errorf("no figure says %q", tc.legendAt)
			}
		})
	}
}

var (
	numberText = regexp.MustCompile(`^-?[0-9][0-9,]*(\.[0-9]+)?$`)
	modelMark  = regexp.MustCompile(`^model [0-9]+$`)
)

// checkLegendBelow checks that a figure drawn in a sheet keeps its legend
// off the data: every text that is not a number, a period label or an
// axis label and lies below the top of the lowest tick label is a legend
// entry, and no legend entry (the texts after the last tick label in the
// SVG) is above the lowest tick label. It also checks that the numeric
// tick labels of each axis are evenly spaced round numbers.
func checkLegendBelow(t *testing.T, f Figure) {
	t.Helper()
	_, _, boxes, err := figcheck.Texts(f.SVG)
	if err != nil {
		t.Fatal(err)
	}
	lowestTick := -1.0
	lastTick := -1
	for i, b := range boxes {
		if numberText.MatchString(b.Text) && !b.Rotated {
			lowestTick = math.Max(lowestTick, b.MaxY)
			lastTick = i
		}
	}
	if lastTick < 0 {
		t.Errorf("%s: no numeric tick label", f.Name)
		return
	}
	for _, b := range boxes[lastTick+1:] {
		// Axis labels, and the trend charts' marks of a new model (drawn
		// on the chart by design, at its first audit).
		if b.Rotated || b.Text == "" || strings.HasPrefix(b.Text, "patients in date order") || strings.Contains(b.Text, "(date_of") ||
			b.Text == "Audit date" || modelMark.MatchString(b.Text) {
			continue
		}
		if b.MinY < lowestTick {
			t.Errorf("%s: legend text %q at y %.1f is above the lowest tick label (y %.1f): on the data", f.Name, b.Text, b.MinY, lowestTick)
		}
	}
	// Round ticks: the numeric labels of each run share one step of
	// 1, 2 or 5 × 10^k.
	var run []float64
	flush := func() {
		if len(run) >= 3 {
			step := run[1] - run[0]
			for k := 2; k < len(run); k++ {
				if math.Abs(run[k]-run[k-1]-step) > 1e-6*math.Abs(step) {
					t.Errorf("%s: ticks %v are not evenly spaced", f.Name, run)
					break
				}
			}
			m := math.Abs(step) / math.Pow(10, math.Floor(math.Log10(math.Abs(step))))
			if math.Abs(m-1) > 1e-6 && math.Abs(m-2) > 1e-6 && math.Abs(m-5) > 1e-6 {
				t.Errorf("%s: tick step %g is not 1, 2 or 5 × 10^k (%v)", f.Name, step, run)
			}
		}
		run = run[:0]
	}
	if f.Name == "over_time_cusum.svg" {
		return // its lower half is labelled by distance from 0 (mirroredTicks)
	}
	for _, b := range boxes {
		if !numberText.MatchString(b.Text) {
			flush()
			continue
		}
		var v float64
		fmt.Sscanf(strings.ReplaceAll(b.Text, ",", ""), "%g", &v)
		run = append(run, v)
	}
	flush()
}

// TestClusterForestLayout draws the cluster forest plots of 30 invented
// clusters with long names, one left out of every pooling with an
// interval far beyond the others, and checks each with checkLayout and
// that the legend names the pooled interval's method and the reference
// line.
func TestClusterForestLayout(t *testing.T) {
	var per []validate.ClusterMeasures
	for i := range 30 {
		d := float64(i%9) / 20
		g := validate.ClusterMeasures{Cluster: fmt.Sprintf("Regional hospital number %d of the northern network, main site", i), N: 300 + 11*i, Events: 30 + i,
			AUC: 0.62 + d/2, AUCSE: 0.03, OE: 0.7 + d, OECI: [2]float64{0.5 + d, 0.95 + d}, CITL: -0.3 + d, CITLSE: 0.12, Slope: 0.8 + d, SlopeSE: 0.15}
		if i == 7 {
			g.AUC, g.AUCSE, g.OE, g.OECI, g.CITL, g.CITLSE, g.Slope, g.SlopeSE = 0.99, 0.2, 6, [2]float64{0.5, 40}, 2.5, 3, 9, 8
			for _, m := range []string{"auc", "oe", "citl", "slope"} {
				g.Excluded = append(g.Excluded, validate.ClusterExclusion{Measure: m, Reason: "fewer than 10 events"})
			}
		}
		per = append(per, g)
	}
	pooled := func(v, lo, hi, plo, phi float64) validate.PooledMeasure {
		return validate.PooledMeasure{Estimate: v, CI: [2]float64{lo, hi}, PredictionInterval: [2]float64{plo, phi}, K: 29}
	}
	c := &validate.Clusters{Column: "admitting_hospital_of_the_regional_network", CIMethod: "hksj", PerCluster: per, Bounds: validate.DefaultAcceptBounds(),
		Pooled: validate.PooledMeasures{AUC: pooled(0.72, 0.7, 0.74, 0.6, 0.83), OE: pooled(0.9, 0.85, 0.95, 0.6, 1.3),
			CITL: pooled(-0.1, -0.15, -0.05, -0.5, 0.3), Slope: pooled(1, 0.95, 1.05, 0.7, 1.3)}}
	figs, err := ClusterForests(c)
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range figs {
		checkLayout(t, f)
		for _, s := range []string{"Hartung–Knapp–Sidik–Jonkman", "dashed line: reference value, named at its top", "left out of the pooling", "95% prediction interval for a new cluster"} {
			if !strings.Contains(string(f.SVG), s) {
				t.Errorf("%s: the legend lacks %q", f.Name, s)
			}
		}
	}
}

// TestTrendFigureLayout draws the trend charts of the invented history
// (two models, shared dates, criteria that change) and of one with a
// model whose name is long, and checks each with checkLayout, the legend
// below the chart (checkLegendBelow) and the ideal line named in the
// legend.
func TestTrendFigureLayout(t *testing.T) {
	long := trendRecords()
	for i := range long {
		long[i].Model = longName
	}
	for name, recs := range map[string][]history.Record{"ordinary": trendRecords(), "long model name": long} {
		t.Run(name, func(t *testing.T) {
			tr, err := trend.Build(recs)
			if err != nil {
				t.Fatal(err)
			}
			figs, err := Trend(tr)
			if err != nil {
				t.Fatal(err)
			}
			for _, f := range figs {
				checkLayout(t, f)
				checkLegendBelow(t, f)
			}
			for i, want := range []string{"", "O/E = 1: as many events as predicted", "slope = 1:", "0: risks right on average"} {
				if want != "" && !strings.Contains(string(figs[i].SVG), want) {
					t.Errorf("%s: the legend does not name the ideal line (%q)", figs[i].Name, want)
				}
			}
		})
	}
}
