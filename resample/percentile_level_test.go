package resample

import (
	"context"
	"math"
	"sort"
	"testing"
)

// TestPercentileIntervalLevel: with B = 41 replicates the 2.5th and
// 97.5th percentiles of type 7 (Hyndman & Fan 1996: h = (B − 1)·q) are
// exactly the 2nd and 40th order statistics, no interpolation, so the
// interval is checked without any quantile code of the package. The
// replicates are redrawn here from Stream (B draws of IntN(n) per
// replicate, as PercentileIntervals documents) and their scaled Brier
// score, 1 − Brier/(ȳ(1 − ȳ)) (Steyerberg et al. 2010), and net benefit,
// TP/n − FP/n·t/(1 − t) treating risk ≥ t (Vickers & Elkin 2006), are
// transcribed here. A 90% interval would be the 3rd and 39th.
func TestPercentileIntervalLevel(t *testing.T) {
	const n, B = 300, 41
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = 0.05 + 0.9*float64((i*37)%n)/n
		if (i*7919)%100 < int(100*p[i]) {
			y[i] = 1
		}
	}
	const thr = 0.3
	res, err := PercentileIntervals(context.Background(), y, p, CIOptions{B: B, Seed: 7, Thresholds: []float64{thr}})
	if err != nil {
		t.Fatal(err)
	}
	var sb, nb, gain []float64
	for b := 0; b < B; b++ {
		r := Stream(7, b)
		var sy, sq, tp, fp float64
		for k := 0; k < n; k++ {
			i := r.IntN(n)
			sy += y[i]
			sq += (p[i] - y[i]) * (p[i] - y[i])
			if p[i] >= thr {
				if y[i] == 1 {
					tp++
				} else {
					fp++
				}
			}
		}
		ybar := sy / n
		sb = append(sb, 1-(sq/n)/(ybar*(1-ybar)))
		odds := thr / (1 - thr)
		m := tp/n - fp/n*odds
		all := ybar - (1-ybar)*odds
		nb = append(nb, m)
		gain = append(gain, m-math.Max(all, 0))
	}
	for _, c := range []struct {
		what string
		got  [2]float64
		reps []float64
	}{
		{"scaled Brier", res.ScaledBrier, sb},
		{"net benefit at 0.3", res.NetBenefit[0], nb},
		{"net-benefit gain at 0.3", res.NetBenefitGain[0], gain},
	} {
		sort.Float64s(c.reps)
		want := [2]float64{c.reps[1], c.reps[B-2]}
		for k := range want {
			if math.Abs(c.got[k]-want[k]) > 1e-12 {
				t.Errorf("%s interval %v, order statistics 2 and 40 of the replicates %v", c.what, c.got, want)
				break
			}
		}
	}
}
