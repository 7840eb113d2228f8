package plots

import (
	"bytes"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"
	"time"

	"github.com/riskaudit/riskaudit/monitor"
	"gonum.org/v1/plot/plotter"
)

// monitorResult is a made-up in-control extract of n patients over 2026
// with every chart computed (limits fixed at h = 5, not simulated), for
// the figure benchmarks and tests.
func monitorResult(tb testing.TB, n int) (*monitor.Result, *monitor.Summary) {
	tb.Helper()
	rng := rand.New(rand.NewPCG(18, 1))
	y, p := make([]float64, n), make([]float64, n)
	dates := make([]time.Time, n)
	day := time.Date(2026, 1, 1, 0, 0, 0, 0, time.UTC)
	for i := range p {
		p[i] = 0.02 + 0.3*rng.Float64()*rng.Float64()
		if rng.Float64() < p[i] {
			y[i] = 1
		}
		dates[i] = day.AddDate(0, 0, i*365/n)
	}
	r := &monitor.Result{N: n, Dates: monitor.DatesOf(dates), Per: monitor.Periods{Kind: "month"}}
	var err error
	if r.VLAD, err = monitor.VLAD(y, p); err != nil {
		tb.Fatal(err)
	}
	for k, or := range []float64{2, 0.5} {
		c := monitor.Chart{Name: []string{"deterioration", "improvement"}[k], Limit: monitor.Limit{R: or, H: 5, TargetARL: 10000}}
		if c.Path, err = monitor.CUSUMPath(y, p, or); err != nil {
			tb.Fatal(err)
		}
		if c.Restarted, c.Signals, err = monitor.RestartedPath(y, p, or, 5); err != nil {
			tb.Fatal(err)
		}
		r.Charts = append(r.Charts, c)
	}
	if r.EWMA, err = monitor.ComputeEWMA(y, p, 0.01, 3); err != nil {
		tb.Fatal(err)
	}
	if r.Periods, err = monitor.ByPeriod(y, p, r.Dates, r.Per); err != nil {
		tb.Fatal(err)
	}
	return r, r.Summarise("admitted")
}

// TestMonitorFiguresInParallel: the four figures painted at once come
// out in their order, each the same bytes as when painted one at a time
// (GOMAXPROCS 1), SVG and PNG. Run with -race it also checks that the
// painting shares nothing unlocked.
func TestMonitorFiguresInParallel(t *testing.T) {
	r, s := monitorResult(t, 20000)
	par, err := Monitor(r, s, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(1))
	seq, err := Monitor(r, s, nil)
	if err != nil {
		t.Fatal(err)
	}
	names := []string{"over_time_periods.svg", "over_time_vlad.svg", "over_time_cusum.svg", "over_time_ewma.svg"}
	if len(par) != len(names) || len(seq) != len(names) {
		t.Fatalf("%d and %d figures, want %d", len(par), len(seq), len(names))
	}
	for k, f := range par {
		if f.Name != names[k] || seq[k].Name != names[k] {
			t.Errorf("figure %d is %s / %s, want %s", k, f.Name, seq[k].Name, names[k])
		}
		if len(f.PNG) == 0 || !bytes.Equal(f.SVG, seq[k].SVG) || !bytes.Equal(f.PNG, seq[k].PNG) {
			t.Errorf("%s painted in parallel differs from the one painted alone", f.Name)
		}
	}
}

// TestThinKeepsEachRunsExtremes: a path longer than maxPathPoints is
// drawn by the first lowest and the first highest point of each of its
// runs of patients, in patient order, as slices.Min, slices.Max and
// slices.Index find them (ties, from values rounded to tenths, decide
// which of equal points is kept).
func TestThinKeepsEachRunsExtremes(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 9))
	for _, n := range []int{maxPathPoints + 1, 100_003} {
		v := make([]float64, n)
		for i := range v {
			v[i] = math.Round(10*rng.NormFloat64()) / 10
		}
		got := thin(v, -2)
		buckets := maxPathPoints / 2
		if len(got) != 2*buckets {
			t.Fatalf("n %d: %d points, want %d", n, len(got), 2*buckets)
		}
		for b := range buckets {
			lo, hi := b*n/buckets, (b+1)*n/buckets
			run := v[lo:hi]
			imin, imax := slices.Index(run, slices.Min(run)), slices.Index(run, slices.Max(run))
			a, c := lo+min(imin, imax), lo+max(imin, imax)
			for k, i := range []int{a, c} {
				if want := (plotter.XY{X: float64(i + 1), Y: -2 * v[i]}); got[2*b+k] != want {
					t.Fatalf("n %d, run %d, point %d: %+v, want %+v", n, b, k, got[2*b+k], want)
				}
			}
		}
	}
}
