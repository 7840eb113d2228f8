package monitor

import (
	"context"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"

	"github.com/riskaudit/riskaudit/metrics"
)

// LimitOptions set the simulation that chooses a CUSUM's alarm limit.
// Zero fields take the defaults.
type LimitOptions struct {
	// ARL is the in-control average run length to reach, in patients
	// (default DefaultARL).
	ARL float64
	// Runs is the number of simulated in-control sequences (default
	// 1,000), cut to fit MaxSteps.
	Runs int
	// MaxSteps bounds the work: Runs × the length of each run (default
	// DefaultMaxSteps).
	MaxSteps int64
	// Seed seeds the runs; run i draws from PCG(Seed, i), so the result
	// does not depend on Workers.
	Seed uint64
	// Workers is the number of goroutines (default GOMAXPROCS).
	Workers int
}

// DefaultMaxSteps is the default bound of the limit simulation's work,
// 2×10⁸ patient-steps: a few seconds on two cores.
const DefaultMaxSteps = 2e8

// MaxARL is the largest in-control ARL whose limits ChooseLimits can
// choose within DefaultMaxSteps: it needs at least 100 runs of Horizon ×
// the ARL.
const MaxARL = DefaultMaxSteps / (100 * Horizon)

// DefaultARL is the default in-control average run length, 10,000
// patients: a false alarm about once in 10,000 patients of a calibrated
// model, the order of the run lengths Steiner et al. (2000) chose for
// surgical mortality (from memory of the paper).
const DefaultARL = 10000

// MaxCaseMix is the most risks the limit simulation draws patients
// from: a larger extract is represented by MaxCaseMix quantiles of its
// risks (CaseMix), which keeps the draws in the processor's cache and
// changes the distribution by at most 1/MaxCaseMix in probability.
const MaxCaseMix = 10000

// CaseMix returns the risks the limit simulation draws from: p itself
// up to MaxCaseMix risks, otherwise the sorted risks at positions
// ⌊(k + ½)·n/MaxCaseMix⌋, k = 0 … MaxCaseMix − 1 (the (k + ½)/MaxCaseMix
// quantiles of the empirical distribution).
func CaseMix(p []float64) []float64 {
	if len(p) <= MaxCaseMix {
		return p
	}
	n := len(p)
	at := make([]int, MaxCaseMix) // the positions in sorted order
	for k := range at {
		at[k] = (2*k + 1) * n / (2 * MaxCaseMix)
	}
	if q, ok := selectSorted(p, at); ok {
		return q
	}
	// Zeros or NaN (which slices.Sort orders apart from their bits): the
	// order by the radix sort of the audit's measures; the quantiles are
	// the same values as from slices.Sort.
	var s metrics.Sorter
	idx := s.Order(p)
	out := make([]float64, MaxCaseMix)
	for k, i := range at {
		out[k] = p[idx[i]]
	}
	return out
}

// selectSorted returns the values at positions at (ascending) of p in
// ascending order without sorting p: the values fall into at most 2¹⁶
// buckets by their bits (in order: a nonzero float64's bits, the sign
// bit flipped or every bit for a negative, order it as its value), one
// pass counts them, and only the buckets that hold a wanted position
// are gathered and sorted, a few percent of the values for the case
// mix's 10,000 positions of a large extract. The values are those of
// slices.Sort at the same positions (a value's place does not depend
// on how ties are ordered). It reports false, and does nothing, when p
// holds a zero or NaN.
func selectSorted(p []float64, at []int) ([]float64, bool) {
	key := func(v float64) uint64 {
		b := math.Float64bits(v)
		if b>>63 == 1 {
			return ^b
		}
		return b | 1<<63
	}
	lo, hi := uint64(math.MaxUint64), uint64(0)
	for _, v := range p {
		if v == 0 || v != v {
			return nil, false
		}
		k := key(v)
		lo, hi = min(lo, k), max(hi, k)
	}
	shift := 0
	for (hi-lo)>>shift >= 1<<16 {
		shift++
	}
	bucket := func(v float64) int { return int((key(v) - lo) >> shift) }
	// start[b] is bucket b's first position in sorted order.
	start := make([]int, int((hi-lo)>>shift)+2)
	for _, v := range p {
		start[bucket(v)+1]++
	}
	for b := 1; b < len(start); b++ {
		start[b] += start[b-1]
	}
	// The wanted buckets' values side by side, each bucket at fill[b].
	fill := make([]int, len(start)-1)
	for b := range fill {
		fill[b] = -1
	}
	size := 0
	for i, b := 0, 0; i < len(at); i++ {
		for start[b+1] <= at[i] {
			b++
		}
		if fill[b] < 0 {
			fill[b], size = size, size+start[b+1]-start[b]
		}
	}
	vals := make([]float64, size)
	next := slices.Clone(fill)
	for _, v := range p {
		if b := bucket(v); next[b] >= 0 {
			vals[next[b]] = v
			next[b]++
		}
	}
	for b, f := range fill {
		if f >= 0 {
			slices.Sort(vals[f : f+start[b+1]-start[b]])
		}
	}
	out := make([]float64, len(at))
	for i, b := 0, 0; i < len(at); i++ {
		for start[b+1] <= at[i] {
			b++
		}
		out[i] = vals[fill[b]+at[i]-start[b]]
	}
	return out, true
}

// Horizon is the length of each simulated run as a multiple of the
// target ARL. Runs that have not crossed a limit by then count as
// crossing at the horizon; with run lengths close to geometric the share
// cut is about e^−8 ≈ 0.03%, and the ARL is biased down by about as
// much, a tenth of the Monte Carlo error of 1,000 runs.
const Horizon = 8

// gridStep and gridMax define the limits at which the simulation records
// first passages: h = 0.005, 0.010, …, 20.
const (
	gridStep = 0.005
	gridMax  = 20.0
)

// Limit is a CUSUM alarm limit chosen by simulation.
type Limit struct {
	R   float64 `json:"odds_ratio"`
	H   float64 `json:"h"`
	HSE float64 `json:"h_mc_se"`
	// ARL is the simulated in-control ARL at H, with its Monte Carlo
	// standard error; TargetARL the ARL asked for.
	ARL       float64 `json:"arl"`
	ARLSE     float64 `json:"arl_mc_se"`
	TargetARL float64 `json:"target_arl"`
	Runs      int     `json:"runs"`
	Horizon   int     `json:"horizon"`
	// Censored is the number of runs that had not crossed H by the
	// horizon.
	Censored int    `json:"censored"`
	Seed     uint64 `json:"seed"`
}

// ChooseLimits chooses the alarm limit h of a risk-adjusted CUSUM for
// each odds ratio in rs so that its in-control average run length is
// opt.ARL. Each simulated run is a sequence of patients drawn with
// replacement from the model's own risks p (the extract's case mix, as
// CaseMix gives it), one 64-bit draw a patient (PCG), with
// outcomes drawn from those risks (the model calibrated, "in control");
// all charts are run on the same sequences. For every h on a grid of step
// 0.005 the first passage S_t ≥ h is recorded, the ARL(h) curve averaged
// over runs (exact integer sums, so the result is the same for any number
// of workers), and h is the smallest grid point, linearly interpolated,
// at which ARL(h) reaches the target. The Monte Carlo standard error of
// the ARL there is sd(run length)/√runs, and that of h the ARL's divided
// by the slope dARL/dh over ±0.1 around h (delta method).
func ChooseLimits(ctx context.Context, p []float64, rs []float64, opt LimitOptions) ([]Limit, error) {
	if len(p) == 0 {
		return nil, fmt.Errorf("monitor: no risks to simulate from")
	}
	for i, v := range p {
		if !(v > 0 && v < 1) {
			return nil, fmt.Errorf("monitor: risk %d (%v) is not strictly between 0 and 1", i+1, v)
		}
	}
	for _, r := range rs {
		if !(r > 0) || r == 1 || math.IsInf(r, 0) {
			return nil, fmt.Errorf("monitor: CUSUM odds ratio %v must be positive, finite and not 1", r)
		}
	}
	if opt.ARL == 0 {
		opt.ARL = DefaultARL
	}
	if !(opt.ARL >= 10) || math.IsInf(opt.ARL, 0) {
		return nil, fmt.Errorf("monitor: in-control ARL %v must be at least 10 patients", opt.ARL)
	}
	if opt.Runs == 0 {
		opt.Runs = 1000
	}
	if opt.MaxSteps == 0 {
		opt.MaxSteps = DefaultMaxSteps
	}
	if opt.Workers <= 0 {
		opt.Workers = runtime.GOMAXPROCS(0)
	}
	length := int64(math.Ceil(Horizon * opt.ARL))
	runs := opt.Runs
	if int64(runs)*length > opt.MaxSteps {
		runs = int(opt.MaxSteps / length)
	}
	if runs < 100 {
		return nil, fmt.Errorf("monitor: an in-control ARL of %g needs %d patient-steps for 100 runs, more than the bound of %d", opt.ARL, 100*length, opt.MaxSteps)
	}
	// The case mix: every risk, or for a large extract its MaxCaseMix
	// quantiles; each drawn patient's event threshold (p·2³²) and weights
	// for every chart side by side, so a draw touches one cache line.
	mix := CaseMix(p)
	k := len(rs)
	thr := make([]uint32, len(mix))
	ws := make([]float64, 2*k*len(mix))
	for i, v := range mix {
		thr[i] = uint32(math.Min(v*(1<<32), math.MaxUint32))
		for c, r := range rs {
			ws[2*k*i+2*c], ws[2*k*i+2*c+1] = Weights(v, r)
		}
	}
	ng := int(math.Round(gridMax / gridStep))
	type acc struct {
		sum, sum2 [][]int64
		// top counts the runs by the grid points their path passed.
		top [][]int
	}
	newAcc := func() acc {
		a := acc{sum: make([][]int64, k), sum2: make([][]int64, k), top: make([][]int, k)}
		for c := range k {
			a.sum[c], a.sum2[c], a.top[c] = make([]int64, ng), make([]int64, ng), make([]int, ng+1)
		}
		return a
	}
	nm := uint64(len(mix))
	var pts []walkPoint // the case mix as the two-chart walks read it
	if k == 2 {
		pts = walkPoints(thr, ws)
	}
	// simulate runs count runs, streams PCG(Seed, base + run), each until
	// the horizon or until every chart c has passed grid point stop[c].
	simulate := func(base uint64, count int, length int64, stop []int) (acc, error) {
		accs := make([]acc, opt.Workers)
		next := make(chan int)
		var wg sync.WaitGroup
		for w := range opt.Workers {
			accs[w] = newAcc()
			wg.Add(1)
			go func(a acc) {
				defer wg.Done()
				if k == 2 {
					// Both charts of an audit: two runs at once, on
					// locals (walker.walkAll).
					two := walker{pts: pts, seed: opt.Seed, base: base, length: length, stop: stop, ng: ng}
					two.walkAll(next, a.sum, a.sum2, a.top)
					return
				}
				s := make([]float64, k)
				reached := make([]int, k) // grid points passed so far
				for run := range next {
					rng := rand.NewPCG(opt.Seed, base+uint64(run))
					clear(s)
					clear(reached)
					for t := int64(1); t <= length; t++ {
						// One draw: the high 32 bits pick the patient
						// (multiply-shift), the low 32 the outcome.
						u := rng.Uint64()
						i := int(((u >> 32) * nm) >> 32)
						off := 2 * k * i
						if uint32(u) < thr[i] {
							off++
						}
						done := true
						for c := range k {
							v := s[c] + ws[off+2*c]
							if v < 0 { // S = max(0, ·), without math.Max's NaN checks
								v = 0
							}
							s[c] = v
							// grid point g (0-based) is h = (g+1)·step.
							if top := min(int(v*(1/gridStep)), ng); top > reached[c] {
								for g := reached[c]; g < top; g++ {
									a.sum[c][g] += t
									a.sum2[c][g] += t * t
								}
								reached[c] = top
							}
							done = done && reached[c] >= stop[c]
						}
						if done {
							break
						}
					}
					// The grid points not passed count the run at the
					// horizon: added for all runs at once from top
					// (tails).
					for c := range k {
						a.top[c][reached[c]]++
					}
				}
			}(accs[w])
		}
		var err error
	feed:
		for run := range count {
			select {
			case next <- run:
			case <-ctx.Done():
				err = ctx.Err()
				break feed
			}
		}
		close(next)
		wg.Wait()
		if err != nil {
			return acc{}, fmt.Errorf("monitor: choosing CUSUM limits: %w", err)
		}
		total := newAcc()
		for _, a := range accs {
			for c := range k {
				for g := range ng {
					total.sum[c][g] += a.sum[c][g]
					total.sum2[c][g] += a.sum2[c][g]
				}
				for g := range ng + 1 {
					total.top[c][g] += a.top[c][g]
				}
			}
		}
		tails(total.sum, total.sum2, total.top, length)
		return total, nil
	}
	// first is the first grid point at which the mean run length reaches
	// the target (ng: none).
	first := func(total acc, c int, m float64) int {
		g := 0
		for g < ng && float64(total.sum[c][g])/m < opt.ARL {
			g++
		}
		return g
	}
	// A pilot of 100 short runs places h roughly; the runs
	// proper then stop once every chart has passed its pilot h + 0.5
	// (about 100 Monte Carlo standard errors of the pilot's h above it),
	// which leaves the ARL curve exact up to there and saves most of the
	// work. Should the answer come within 0.1 of that stop, the runs are
	// made again to the horizon.
	full := make([]int, k)
	for c := range full {
		full[c] = ng
	}
	pilotRuns := min(100, runs)
	// The pilot's runs are cut at 3 × the ARL: enough to place h within a
	// few tenths, a third of the work of full runs.
	pilot, err := simulate(1<<62, pilotRuns, int64(math.Ceil(3*opt.ARL)), full)
	if err != nil {
		return nil, err
	}
	stop := make([]int, k)
	for c := range k {
		stop[c] = min(ng, first(pilot, c, float64(pilotRuns))+100)
	}
	total, err := simulate(0, runs, length, stop)
	if err != nil {
		return nil, err
	}
	m := float64(runs)
	for c := range k {
		if g := first(total, c, m); stop[c] < ng && g+20 >= stop[c] {
			if total, err = simulate(0, runs, length, full); err != nil {
				return nil, err
			}
			break
		}
	}
	out := make([]Limit, k)
	for c, r := range rs {
		arl := func(g int) float64 { return float64(total.sum[c][g]) / m }
		g := first(total, c, m)
		if g == ng {
			return nil, fmt.Errorf("monitor: the CUSUM for odds ratio %g does not reach an in-control ARL of %g below h = %g", r, opt.ARL, gridMax)
		}
		lim := Limit{R: r, TargetARL: opt.ARL, Runs: runs, Horizon: Horizon, Seed: opt.Seed}
		h := float64(g+1) * gridStep
		a := arl(g)
		if g > 0 {
			lo := arl(g - 1)
			h = float64(g)*gridStep + gridStep*(opt.ARL-lo)/(a-lo)
			a = opt.ARL
		}
		// The slope dARL/dh over ±0.1 around h: one grid step is too
		// short a base for a curve estimated with Monte Carlo noise.
		g0, g1 := max(0, g-20), min(ng-1, g+20)
		slope := (arl(g1) - arl(g0)) / (float64(g1-g0) * gridStep)
		// Monte Carlo error at the grid point reached.
		mean := float64(total.sum[c][g]) / m
		v := (float64(total.sum2[c][g])/m - mean*mean) * m / (m - 1)
		lim.H, lim.ARL = h, a
		lim.ARLSE = math.Sqrt(v / m)
		lim.HSE = lim.ARLSE / slope
		// Runs cut at the horizon: those that never passed the grid
		// point at or above h.
		for t := 0; t <= g; t++ {
			lim.Censored += total.top[c][t]
		}
		out[c] = lim
	}
	return out, nil
}

// tails adds to sum and sum2 the runs that had not passed a grid point
// by the horizon, each at the horizon: grid point g was not passed by the
// runs whose last grid point passed (top) is at or below g. The sums are
// exact integers, so they equal adding length to every run's unpassed
// points one by one.
func tails(sum, sum2 [][]int64, top [][]int, length int64) {
	for c := range sum {
		below := int64(0) // runs that passed at most g grid points
		for g := range sum[c] {
			below += int64(top[c][g])
			sum[c][g] += below * length
			sum2[c][g] += below * length * length
		}
	}
}

// runStats are integer sums over simulated runs.
type runStats struct {
	sum, sum2 int64
	cut       int // runs that did not signal by the horizon
	early     int // runs that signalled before the change
	n         int // runs counted in sum (signalled at or after the change)
}

// replay runs the CUSUM with weights w0, w1 on runs streams PCG(seed,
// run) of patients drawn from p; from patient change + 1 on, the odds of
// the event are multiplied by exp(shift). A run counts its first t with
// S_t ≥ h, or length when it has none; with change > 0, a run that
// signals at or before change counts as early and not in the sums, and
// the others count t − change.
func replay(ctx context.Context, p, w0, w1 []float64, h float64, length int64, runs int, seed uint64, workers int, change int64, shift float64) runStats {
	var mu sync.Mutex
	var tot runStats
	next := make(chan int)
	var wg sync.WaitGroup
	eShift := math.Exp(shift)
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var st runStats
			for run := range next {
				rng := rand.New(rand.NewPCG(seed, uint64(run)))
				s, at := 0.0, int64(0)
				for t := int64(1); t <= length; t++ {
					i := rng.IntN(len(p))
					pi := p[i]
					if change > 0 && t > change {
						o := pi / (1 - pi) * eShift
						pi = o / (1 + o)
					}
					w := w0[i]
					if rng.Float64() < pi {
						w = w1[i]
					}
					if s = math.Max(0, s+w); s >= h {
						at = t
						break
					}
				}
				switch {
				case at == 0:
					st.cut++
					at = length
				case change > 0 && at <= change:
					st.early++
					continue
				}
				at -= change
				st.sum += at
				st.sum2 += at * at
				st.n++
			}
			mu.Lock()
			tot.sum, tot.sum2, tot.cut, tot.early, tot.n = tot.sum+st.sum, tot.sum2+st.sum2, tot.cut+st.cut, tot.early+st.early, tot.n+st.n
			mu.Unlock()
		}()
	}
	for run := range runs {
		if ctx.Err() != nil {
			break
		}
		next <- run
	}
	close(next)
	wg.Wait()
	return tot
}

// RunLength is a mean run length estimated by simulation.
type RunLength struct {
	// Mean and SE: the mean run length (or delay) in patients and its
	// Monte Carlo standard error, over N runs.
	Mean, SE float64
	N        int
	// Cut: runs without a signal by the horizon (counted at the
	// horizon); Early: runs that signalled before the change (left out
	// of Mean).
	Cut, Early int
}

func (st runStats) runLength() RunLength {
	rl := RunLength{N: st.n, Cut: st.cut, Early: st.early, Mean: math.NaN(), SE: math.NaN()}
	if st.n > 1 {
		m := float64(st.n)
		rl.Mean = float64(st.sum) / m
		v := (float64(st.sum2)/m - rl.Mean*rl.Mean) * m / (m - 1)
		rl.SE = math.Sqrt(v / m)
	}
	return rl
}

// SimulateARL estimates the in-control average run length of the CUSUM
// with odds ratio r and limit h on patients drawn from the risks p, by
// runs sequences seeded PCG(seed, run), each cut at length patients.
func SimulateARL(ctx context.Context, p []float64, r, h float64, runs int, length int64, seed uint64) (RunLength, error) {
	return Delay(ctx, p, r, h, 0, 0, runs, length, seed)
}

// Delay estimates the mean delay to the first signal of the CUSUM with
// odds ratio r and limit h after the odds of the event are multiplied by
// exp(shift) (an intercept shift on the logit scale) from patient
// change + 1 on, the patients before and after drawn from the risks p.
// The delay is the signalling patient minus change (a signal at patient
// change + 1 has delay 1); runs that signal at or before change are false
// alarms, counted in Early and left out of the mean, as is usual for
// conditional delays. With change 0 it is the run length itself.
func Delay(ctx context.Context, p []float64, r, h, shift float64, change int, runs int, length int64, seed uint64) (RunLength, error) {
	if len(p) == 0 || runs < 2 || length < 1 || change < 0 || !(h > 0) {
		return RunLength{}, fmt.Errorf("monitor: delay simulation needs risks, at least 2 runs, a positive length and limit (got %d risks, %d runs, length %d, h %v)", len(p), runs, length, h)
	}
	w0, w1 := make([]float64, len(p)), make([]float64, len(p))
	for i, v := range p {
		if !(v > 0 && v < 1) {
			return RunLength{}, fmt.Errorf("monitor: risk %d (%v) is not strictly between 0 and 1", i+1, v)
		}
		w0[i], w1[i] = Weights(v, r)
	}
	st := replay(ctx, p, w0, w1, h, length+int64(change), runs, seed, runtime.GOMAXPROCS(0), int64(change), shift)
	if err := ctx.Err(); err != nil {
		return RunLength{}, fmt.Errorf("monitor: delay simulation: %w", err)
	}
	return st.runLength(), nil
}
