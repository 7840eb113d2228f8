package plots

import (
	"math/rand/v2"
	"testing"
	"time"

	"github.com/riskaudit/riskaudit/monitor"
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
	r := &monitor.Result{N: n, Dates: dates, Per: monitor.Periods{Kind: "month"}}
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
	if r.Periods, err = monitor.ByPeriod(y, p, dates, r.Per); err != nil {
		tb.Fatal(err)
	}
	return r, r.Summarise("admitted")
}

// BenchmarkMonitorFigures1M draws the four figures of a 1M-patient
// extract in date order, SVG and PNG.
func BenchmarkMonitorFigures1M(b *testing.B) {
	r, s := monitorResult(b, 1_000_000)
	b.ResetTimer()
	for range b.N {
		if _, err := Monitor(r, s, nil); err != nil {
			b.Fatal(err)
		}
	}
}
