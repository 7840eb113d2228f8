package metrics

import (
	"math"
	"runtime"
	"sort"
	"sync"

	"gonum.org/v1/gonum/floats"
)

// LowessOptions control Lowess. The zero value means span 0.75, a fit at
// every point (δ = 0) and all cores.
type LowessOptions struct {
	// Span is the fraction of the rows in each local regression
	// (default 0.75).
	Span float64
	// Delta is Cleveland's shortcut: after a local regression at x, the
	// points within Delta of x are not fitted but interpolated linearly
	// between the fitted points on either side. Zero fits every point.
	Delta float64
	// Workers bounds the goroutines (default GOMAXPROCS).
	Workers int
}

// LowessCurve is a LOWESS smooth evaluated at every input point.
type LowessCurve struct {
	// X holds the sorted inputs, Fit the smoothed values and SE their
	// pointwise standard errors (see Lowess).
	X, Fit, SE []float64
	// Span and Delta are the settings used; FitPoints counts the local
	// regressions run (the rest were interpolated or tied).
	Span, Delta float64
	FitPoints   int
}

// Lowess smooths y against x by LOWESS (Cleveland 1979, Journal of the
// American Statistical Association 74:829–836) without robustness
// iterations: at each point x₀ a straight line is fitted by weighted
// least squares to the k = ⌊span·n⌋ nearest points (at least 2), with
// tricube weights (1 − (|x − x₀|/h)³)³, h the distance from x₀ to the
// farthest of them. x must be sorted ascending; the neighbourhood is the
// window of k consecutive points that contains x₀ and is as centred as
// the data allow. A point whose window has fewer than two weights above
// 1e-12 keeps its own y.
//
// Where the line is not identified the local fit is the local weighted
// mean Σw·y/Σw instead, with smoother weights l_j = w_j/Σw:
//   - when the k nearest points all tie with x₀ (h = 0), the
//     neighbourhood is every point tied with x₀, each of weight 1, and
//     the fit is their mean (so it does not depend on which of the tied
//     rows a window of k would hold);
//   - when the weighted variance of x over the neighbourhood is zero or
//     negligible, at most 1e-10 of the weighted mean square of x − x₀
//     (as when every point of positive weight ties with x₀ and the
//     others lie at distance h). Since x₀ itself has weight 1, a true
//     variance is at least that mean square over Σw, so below 1e-10 it
//     is zero up to rounding for any neighbourhood of fewer than 10¹⁰
//     points.
//
// When every x is the same the curve is therefore the mean of y at every
// point.
//
// With Delta > 0, points are skipped as in Cleveland's algorithm: after a
// fit at x_i, the next fit is at the last point within Delta of x_i (at
// least the next point), points tied with a fitted x take its value, and
// the skipped points are interpolated linearly.
//
// SE is the pointwise standard error of the local linear estimate,
// √(ŝ(1 − ŝ) Σ_j l_j²), where l_j are the weights of the linear smoother
// at x₀ (ŝ = Σ l_j y_j; for the local mean l_j = w_j/Σw, so Σ l_j² =
// Σw²/(Σw)², 1/m for m tied points) and ŝ(1 − ŝ), clipped to [0, ¼], is the binomial
// variance at the fitted value, taken as constant over the window
// (Cleveland & Devlin 1988, Journal of the American Statistical
// Association 83:596–610, §3). It is interpolated like the fit.
//
// y may hold any values, not only outcomes. Lowess panics if x and y
// differ in length or x is not sorted ascending.
func Lowess(x, y []float64, opt LowessOptions) LowessCurve {
	if len(x) != len(y) {
		panic("metrics: Lowess: x and y differ in length")
	}
	if !sort.Float64sAreSorted(x) {
		panic("metrics: Lowess: x is not sorted")
	}
	return lowess(x, y, opt, nil)
}

// A LowessWorkspace holds the buffers of Lowess for a caller that
// smooths many times (a bootstrap worker smooths twice a replicate).
// The zero value is ready to use; a LowessWorkspace is not safe for
// concurrent use.
type LowessWorkspace struct {
	fit, se, buf []float64
	plan         fitPlan
}

// Lowess is the function Lowess computed in w's buffers: the curve's
// Fit and SE are w's own, overwritten by the next call.
func (w *LowessWorkspace) Lowess(x, y []float64, opt LowessOptions) LowessCurve {
	if len(x) != len(y) {
		panic("metrics: Lowess: x and y differ in length")
	}
	if !sort.Float64sAreSorted(x) {
		panic("metrics: Lowess: x is not sorted")
	}
	return lowess(x, y, opt, w)
}

// lowess is Lowess on inputs already checked, in ws's buffers (fresh
// ones when ws is nil).
func lowess(x, y []float64, opt LowessOptions, ws *LowessWorkspace) LowessCurve {
	n := len(x)
	if opt.Span <= 0 {
		opt.Span = 0.75
	}
	if opt.Workers <= 0 {
		opt.Workers = runtime.GOMAXPROCS(0)
	}
	if ws == nil {
		ws = &LowessWorkspace{}
	}
	if cap(ws.fit) < n {
		ws.fit, ws.se = make([]float64, n), make([]float64, n)
	}
	c := LowessCurve{X: x, Fit: ws.fit[:n], SE: ws.se[:n], Span: opt.Span, Delta: opt.Delta}
	if n == 0 {
		return c
	}
	k := int(opt.Span*float64(n) + 1e-10)
	k = max(2, min(k, n))
	if n == 1 {
		c.Fit[0], c.SE[0] = y[0], 0
		return c
	}
	ws.plan = planFits(x, k, opt.Delta, ws.plan)
	plan := ws.plan
	c.FitPoints = len(plan.fits)
	// The local regressions are independent: run them on all cores.
	var wg sync.WaitGroup
	w := min(opt.Workers, len(plan.fits))
	for g := 0; g < w; g++ {
		wg.Add(1)
		go func(g int) {
			defer wg.Done()
			// One scratch per worker: a window of h > 0 holds k points.
			need := 3 * min(lowessBlock, k)
			var buf []float64
			if g == 0 && cap(ws.buf) >= need {
				buf = ws.buf[:need]
			} else {
				buf = make([]float64, need)
				if g == 0 {
					ws.buf = buf
				}
			}
			for f := g; f < len(plan.fits); f += w {
				fp := plan.fits[f]
				c.Fit[fp.i], c.SE[fp.i] = localLinear(x, y, fp, buf)
			}
		}(g)
	}
	wg.Wait()
	plan.fill(x, c.Fit, c.SE)
	return c
}

// fitPoint is one local regression: at x[i], over the window [l, r) of
// radius h. When h is 0, [l, r) is every point tied with x[i].
type fitPoint struct {
	i, l, r int
	h       float64
}

// fitPlan lists the local regressions and how every other point gets its
// value: ties copy a fitted point, the rest are interpolated.
type fitPlan struct {
	fits []fitPoint
	// from[j] is the index whose value a tied point j copies, fitted
	// (−2) for a point fitted, or −1 for a point to interpolate; 32-bit,
	// as the row indices of the sort are, so that a 1M-row curve touches
	// 4 MB here, not 9.
	from []int32
}

// fitted marks a fitted point in fitPlan.from.
const fitted = -2

// planFits walks the sorted x as Cleveland's algorithm does, choosing
// where to fit and each fit's neighbourhood, in the storage of old.
func planFits(x []float64, k int, delta float64, old fitPlan) fitPlan {
	n := len(x)
	p := fitPlan{from: old.from[:0], fits: old.fits[:0]}
	if cap(p.from) < n {
		p.from = make([]int32, n)
	}
	p.from = p.from[:n]
	for j := range p.from {
		p.from[j] = -1
	}
	l, r := 0, k
	i := 0
	for {
		x0 := x[i]
		for r < n && x0 > (x[l]+x[r])/2 {
			l++
			r++
		}
		h := math.Max(x0-x[l], x[r-1]-x0)
		fp := fitPoint{i: i, l: l, r: r, h: h}
		if h == 0 {
			// The k nearest all tie with x0: take every point tied
			// with it.
			for fp.l > 0 && x[fp.l-1] == x0 {
				fp.l--
			}
			for fp.r < n && x[fp.r] == x0 {
				fp.r++
			}
		}
		p.fits = append(p.fits, fp)
		p.from[i] = fitted
		// The next fit is at the last point within delta (at least one
		// step on); points tied with the last fitted x copy its value.
		last := i
		cut := x[i] + delta
		next := i
		for j := i + 1; j < n; j++ {
			next = j
			if x[j] > cut {
				break
			}
			if x[j] == x[last] {
				p.from[j] = int32(i)
				last = j
			}
		}
		if last >= n-1 {
			return p
		}
		i = max(next-1, last+1)
	}
}

// fill completes the curve: ties copy, skipped points are interpolated
// between the fitted (or copied) points on either side, the fit and its
// standard error alike (fillOne of each).
func (p fitPlan) fill(x, fit, se []float64) {
	p.fillOne(x, fit)
	p.fillOne(x, se)
}

// fillOne completes one series of the curve v (the fit, or its standard
// error): ties copy, skipped points are interpolated between the fitted
// (or copied) points on either side.
func (p fitPlan) fillOne(x, v []float64) {
	for j, f := range p.from {
		if f >= 0 {
			v[j] = v[f]
		}
	}
	last := 0
	for j := 1; j < len(x); j++ {
		if p.from[j] == -1 {
			continue
		}
		if j > last+1 {
			d := x[j] - x[last]
			for m := last + 1; m < j; m++ {
				a := (x[m] - x[last]) / d
				v[m] = a*v[j] + (1-a)*v[last]
			}
		}
		last = j
	}
}

// lowessBlock is the number of window points whose weights are made
// before their sums are taken with vector dot products.
const lowessBlock = 1024

// localLinear is the weighted straight-line fit at x[fp.i] and its
// standard error. The weights of a block of the window are made first,
// in buf (room for three blocks of min(lowessBlock, r − l) values, the
// caller's, so that a fit allocates nothing); the eight weighted sums
// are then taken with gonum's vectorised dot products.
func localLinear(x, y []float64, fp fitPoint, buf []float64) (float64, float64) {
	if fp.h == 0 {
		// Every point of the neighbourhood ties with x0: their mean,
		// each of weight 1.
		m := float64(fp.r - fp.l)
		fit := sum(y[fp.l:fp.r]) / m
		return fit, localMeanSE(fit, 1/m)
	}
	t, nonzero := localSums(x, y, fp, buf, true)
	sw, swu, swu2, swy, swuy, sw2, sw2u, sw2u2 := t.w, t.wu, t.wu2, t.wy, t.wuy, t.w2, t.w2u, t.w2u2
	if nonzero < 2 {
		return y[fp.i], 0
	}
	ubar := swu / sw
	ybar := swy / sw
	s := swu2/sw - ubar*ubar
	if !(s > 1e-10*swu2/sw) {
		// No spread of x to fit a line to: the local weighted mean.
		return ybar, localMeanSE(ybar, sw2/(sw*sw))
	}
	cxy := swuy/sw - ubar*ybar
	fit := ybar - ubar*cxy/s
	// Σ l² with l_j = W_j (a − b u_j), a = 1 + ū²/S, b = ū/S, W = w/Σw.
	a, b := 1+ubar*ubar/s, ubar/s
	sl2 := (a*a*sw2 - 2*a*b*sw2u + b*b*sw2u2) / (sw * sw)
	v := math.Min(math.Max(fit*(1-fit), 0), 0.25)
	return fit, math.Sqrt(v * math.Max(sl2, 0))
}

// localSum holds the weighted sums of a local linear fit at x0 with
// tricube weights w and u = x − x0: Σw, Σwu, Σwu², Σwy, Σwuy, and for the
// standard error Σw², Σw²u, Σw²u².
type localSum struct {
	w, wu, wu2, wy, wuy, w2, w2u, w2u2 float64
}

// localSums takes the sums of the fit at x[fp.i] over its window, a
// block at a time (buf: see localLinear), the three of the standard
// error only when se is set; nonzero counts the weights above 1e-12.
func localSums(x, y []float64, fp fitPoint, buf []float64, se bool) (t localSum, nonzero int) {
	x0 := x[fp.i]
	inv := 1 / fp.h
	bl := len(buf) / 3
	wb, wub, ub := buf[:bl], buf[bl:2*bl], buf[2*bl:3*bl]
	for lo := fp.l; lo < fp.r; lo += lowessBlock {
		hi := min(lo+lowessBlock, fp.r)
		xs, ys := x[lo:hi], y[lo:hi]
		w, wu, u := wb[:len(xs)], wub[:len(xs)], ub[:len(xs)]
		for j, xj := range xs {
			d := xj - x0
			a := math.Abs(d) * inv
			c := 1 - a*a*a
			wj := c * c * c
			if wj > 1e-12 {
				nonzero++
			}
			u[j], w[j], wu[j] = d, wj, wj*d
		}
		t.w += floats.Sum(w)
		t.wu += floats.Sum(wu)
		t.wu2 += floats.Dot(wu, u)
		t.wy += floats.Dot(w, ys)
		t.wuy += floats.Dot(wu, ys)
		if se {
			t.w2 += floats.Dot(w, w)
			t.w2u += floats.Dot(w, wu)
			t.w2u2 += floats.Dot(wu, wu)
		}
	}
	return t, nonzero
}

// localMeanSE is the standard error √(ŝ(1 − ŝ)·Σl²) of a local mean ŝ
// whose smoother weights have squared sum sl2.
func localMeanSE(fit, sl2 float64) float64 {
	return math.Sqrt(math.Min(math.Max(fit*(1-fit), 0), 0.25) * sl2)
}

// CalibrationCurve is the flexible calibration curve of risks p against
// outcomes y, and the measures of Austin & Steyerberg (2019, Statistics in
// Medicine 38:4051–4065) derived from it.
type CalibrationCurve struct {
	// Curve is the LOWESS smooth of y on p, at every row sorted by p.
	Curve LowessCurve
	// ICI is the mean of |p − ŝ(p)| over the rows; E50, E90 and Emax are
	// its median, 90th percentile (Hyndman & Fan definition 7) and
	// maximum.
	ICI, E50, E90, Emax float64
	// Clipped counts the rows where the local linear fit fell outside
	// [0, 1] by more than ClipTolerance (all are clipped to it).
	Clipped int
}

// ClipTolerance is how far outside [0, 1] a local fit must fall for
// ClipRisks to count it: a fit of an exact 0 or 1 computed as −5e-17 is
// rounding, not a fit that left the range, and is clipped without being
// counted.
const ClipTolerance = 1e-9

// ClipRisks clips every value of fit to [0, 1] in place and returns how
// many lay outside it by more than ClipTolerance. The local linear fit of
// a 0/1 outcome is not bound to [0, 1] (it strays outside where the risks
// crowd at one end), but an observed risk is: the flexible calibration
// curve is the fit clipped to [0, 1], and its distances from the diagonal
// (ICI, E50, E90, Emax) are taken from the clipped curve. NaN values are
// left as they are.
func ClipRisks(fit []float64) int {
	n := 0
	for i, v := range fit {
		switch {
		case v < 0:
			if v < -ClipTolerance {
				n++
			}
			fit[i] = 0
		case v > 1:
			if v > 1+ClipTolerance {
				n++
			}
			fit[i] = 1
		}
	}
	return n
}

// FlexibleCalibration smooths the outcomes of s on their risks by Lowess
// with opt (at every row, in risk order; Curve.X is s.P() itself, not a
// copy) and summarises the distance |p − ŝ(p)| from the line of ideal
// calibration by its mean (ICI), median (E50), 90th percentile (E90) and
// maximum (Emax) over the rows (Austin & Steyerberg 2019). The smooth is
// clipped to [0, 1] first (see ClipRisks; Curve.SE is the local linear
// fit's own). Tied risks
// are smoothed in the order s keeps them, row order, so the result is
// reproducible. Where the local line is not identified the smooth is the
// local weighted mean (see Lowess): when every risk is the same, the
// curve is the event rate and ICI = E50 = E90 = Emax = |p − ȳ|. ICI,
// E50, E90 and Emax are NaN when s is empty.
func FlexibleCalibration(s Sorted, opt LowessOptions) CalibrationCurve {
	xs := s.p
	cc := CalibrationCurve{Curve: lowess(xs, s.y, opt, nil)}
	cc.Clipped = ClipRisks(cc.Curve.Fit)
	// Emax is taken as the distances are, rather than by a selection of
	// the largest afterwards (another pass over the rows).
	diff := make([]float64, len(xs))
	cc.Emax = math.NaN()
	for i, v := range xs {
		d := math.Abs(v - cc.Curve.Fit[i])
		diff[i] = d
		if i == 0 || d > cc.Emax {
			cc.Emax = d
		}
	}
	cc.ICI = mean(diff)
	cc.E50 = quantileSelect(diff, 0.5)
	cc.E90 = quantileSelect(diff, 0.9)
	return cc
}

// DefaultDelta is the δ used when none is given: 0 (a fit at every
// point) up to 10,000 rows; 1% of the range of x up to 100,000 rows, the
// choice commonly suggested with Cleveland's algorithm for large data;
// and 2% beyond, which bounds the cost at about 50 local fits, each over
// three quarters of the rows. A smooth of span 0.75 bends little over 2%
// of its range, so the interpolation between fits changes it little.
func DefaultDelta(xmin, xmax float64, n int) float64 {
	switch {
	case n <= 10000:
		return 0
	case n <= 100000:
		return 0.01 * (xmax - xmin)
	}
	return 0.02 * (xmax - xmin)
}
