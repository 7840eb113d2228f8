package metrics

import (
	"sort"
)

// LowessFit is the curve's Fit of Lowess(x, y, opt) alone, on the calling
// goroutine whatever opt.Workers, in w's buffers (overwritten by w's next
// call): for a caller that needs the smooth but not its standard errors,
// such as a bootstrap worker's ICI. Each local fit takes the same five
// weighted sums, in the same order, as Lowess, so the values are exactly
// Lowess's; the three sums that only the standard error needs are not
// taken.
//
// LowessFit panics as Lowess does.
func (w *LowessWorkspace) LowessFit(x, y []float64, opt LowessOptions) []float64 {
	if len(x) != len(y) {
		panic("metrics: Lowess: x and y differ in length")
	}
	if !sort.Float64sAreSorted(x) {
		panic("metrics: Lowess: x is not sorted")
	}
	n := len(x)
	if opt.Span <= 0 {
		opt.Span = 0.75
	}
	if cap(w.fit) < n {
		w.fit, w.se = make([]float64, n), make([]float64, n)
	}
	fit := w.fit[:n]
	if n == 0 {
		return fit
	}
	if n == 1 {
		fit[0] = y[0]
		return fit
	}
	k := int(opt.Span*float64(n) + 1e-10)
	k = max(2, min(k, n))
	w.plan = planFits(x, k, opt.Delta, w.plan)
	need := 3 * min(lowessBlock, k)
	if cap(w.buf) < need {
		w.buf = make([]float64, need)
	}
	buf := w.buf[:need]
	for _, fp := range w.plan.fits {
		fit[fp.i] = localLinearFit(x, y, fp, buf)
	}
	w.plan.fillOne(x, fit)
	return fit
}

// localLinearFit is localLinear's fit without its standard error.
func localLinearFit(x, y []float64, fp fitPoint, buf []float64) float64 {
	if fp.h == 0 {
		m := float64(fp.r - fp.l)
		return sum(y[fp.l:fp.r]) / m
	}
	t, nonzero := localSums(x, y, fp, buf, false)
	sw, swu, swu2, swy, swuy := t.w, t.wu, t.wu2, t.wy, t.wuy
	if nonzero < 2 {
		return y[fp.i]
	}
	ubar := swu / sw
	ybar := swy / sw
	s := swu2/sw - ubar*ubar
	if !(s > 1e-10*swu2/sw) {
		return ybar
	}
	cxy := swuy/sw - ubar*ybar
	return ybar - ubar*cxy/s
}
