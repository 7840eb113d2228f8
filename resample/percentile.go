package resample

import (
	"context"
	"errors"
	"math"
	"runtime"
	"sort"
	"sync"

	"github.com/riskaudit/riskaudit/metrics"
)

// CIOptions control PercentileIntervals.
type CIOptions struct {
	// B is the number of replicates.
	B int
	// Seed makes the draws reproducible.
	Seed uint64
	// Workers bounds the goroutines (default GOMAXPROCS).
	Workers int
	// ICIDelta is the LOWESS δ share of the ICI, E50 and E90 in every
	// replicate (default 0.1, as in Optimism).
	ICIDelta float64
	// Thresholds are the net-benefit thresholds.
	Thresholds []float64
}

// CIResult holds 95% percentile intervals.
type CIResult struct {
	ICI, E50, E90, ScaledBrier [2]float64
	// NetBenefit holds one interval per threshold.
	NetBenefit [][2]float64
	// NetBenefitGain holds, per threshold, the interval of the model's
	// gain over the better default strategy, Model − max(TreatAll, 0),
	// both taken on the same replicate.
	NetBenefitGain [][2]float64
}

// PercentileIntervals gives bootstrap percentile intervals (Efron &
// Tibshirani 1993, An Introduction to the Bootstrap, ch. 13) for the ICI,
// E50, E90 (of the smooth clipped to [0, 1]), the scaled Brier score, the
// net benefit and its gain over the better default strategy of fixed risks p
// for outcomes y: the rows are drawn with replacement B times, each
// measure is computed on every sample, and the interval runs from the
// 2.5th to the 97.5th percentile (Hyndman & Fan definition 7) of the
// replicate values. The model is not refitted. A cancelled ctx stops the
// replicates and returns context.Cause(ctx).
func PercentileIntervals(ctx context.Context, y, p []float64, opt CIOptions) (*CIResult, error) {
	n := len(y)
	if n == 0 || len(p) != n || opt.B < 2 {
		return nil, errors.New("resample: percentile intervals need rows and at least 2 replicates")
	}
	if opt.Workers <= 0 {
		opt.Workers = runtime.GOMAXPROCS(0)
	}
	if opt.ICIDelta <= 0 {
		opt.ICIDelta = 0.1
	}
	order := metrics.SortedOrder(p)
	type rep struct {
		ici, e50, e90, sb float64
		nb, gain          []float64
	}
	reps := make([]rep, opt.B)
	next := feed(ctx, opt.B)
	var wg sync.WaitGroup
	for w := 0; w < opt.Workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			counts := make([]int32, n)
			ps, ys := make([]float64, n), make([]float64, n)
			for b := range next {
				r := Stream(opt.Seed, b)
				for i := range counts {
					counts[i] = 0
				}
				for k := 0; k < n; k++ {
					counts[r.IntN(n)]++
				}
				k := 0
				for _, i := range order {
					for c := counts[i]; c > 0; c-- {
						ps[k], ys[k] = p[i], y[i]
						k++
					}
				}
				d := opt.ICIDelta * (ps[n-1] - ps[0])
				c := metrics.Lowess(ps, ys, metrics.LowessOptions{Span: 0.75, Delta: d, Workers: 1})
				metrics.ClipRisks(c.Fit)
				diff := make([]float64, n)
				s := 0.0
				for i, v := range ps {
					diff[i] = math.Abs(v - c.Fit[i])
					s += diff[i]
				}
				e50, e90 := metrics.Quantiles(diff, 0.5, 0.9)
				_, sb := metrics.Brier(ys, ps)
				nb := make([]float64, len(opt.Thresholds))
				gain := make([]float64, len(opt.Thresholds))
				for j, v := range metrics.NetBenefits(metrics.AsSorted(ys, ps), opt.Thresholds) {
					nb[j], gain[j] = v.Model, v.Gain()
				}
				reps[b] = rep{ici: s / float64(n), e50: e50, e90: e90, sb: sb, nb: nb, gain: gain}
			}
		}()
	}
	wg.Wait()
	if ctx.Err() != nil {
		return nil, context.Cause(ctx)
	}
	interval := func(get func(rep) float64) [2]float64 {
		v := make([]float64, 0, len(reps))
		for _, r := range reps {
			if x := get(r); !math.IsNaN(x) {
				v = append(v, x)
			}
		}
		sort.Float64s(v)
		if len(v) == 0 {
			return [2]float64{math.NaN(), math.NaN()}
		}
		return [2]float64{metrics.Quantile7(v, 0.025), metrics.Quantile7(v, 0.975)}
	}
	res := &CIResult{
		ICI:         interval(func(r rep) float64 { return r.ici }),
		E50:         interval(func(r rep) float64 { return r.e50 }),
		E90:         interval(func(r rep) float64 { return r.e90 }),
		ScaledBrier: interval(func(r rep) float64 { return r.sb }),
	}
	for j := range opt.Thresholds {
		res.NetBenefit = append(res.NetBenefit, interval(func(r rep) float64 { return r.nb[j] }))
		res.NetBenefitGain = append(res.NetBenefitGain, interval(func(r rep) float64 { return r.gain[j] }))
	}
	return res, nil
}

// BrierDifferenceCI is the 95% bootstrap percentile interval of
// Brier(pa) − Brier(pb) on the same rows: each replicate draws the rows
// with replacement (one stream per replicate, as in Optimism) and takes
// the difference of the two weighted Brier scores. A cancelled ctx stops
// the replicates and returns context.Cause(ctx).
func BrierDifferenceCI(ctx context.Context, y, pa, pb []float64, b int, seed uint64) ([2]float64, error) {
	n := len(y)
	d := make([]float64, b)
	w := make([]float64, n)
	for k := 0; k < b; k++ {
		if ctx.Err() != nil {
			return [2]float64{}, context.Cause(ctx)
		}
		r := Stream(seed, k)
		for i := range w {
			w[i] = 0
		}
		for j := 0; j < n; j++ {
			w[r.IntN(n)]++
		}
		ba, _ := metrics.BrierWeighted(y, pa, w)
		bb, _ := metrics.BrierWeighted(y, pb, w)
		d[k] = ba - bb
	}
	sort.Float64s(d)
	return [2]float64{metrics.Quantile7(d, 0.025), metrics.Quantile7(d, 0.975)}, nil
}
