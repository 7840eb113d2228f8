package samplesize

import (
	"math"

	"gonum.org/v1/gonum/integrate/quad"
)

// Integrals over the normal linear predictor are computed by adaptive
// Gauss–Legendre quadrature with bisection (Davis & Rabinowitz 1984,
// Methods of Numerical Integration): each panel's integral is the
// 15-point rule on its two halves, and its error is estimated by the
// difference from the rule on the whole panel; the panel with the largest
// error (relative to its component's size) is halved until every
// component's estimated error is within quadTol of the sum of the absolute
// panel integrals of that component. The difference of the two estimates
// bounds the error of the finer one generously: for an integrand
// analytic near the panel, the 15-point rule's error falls like ρ^−30,
// ρ growing in proportion to the distance of the nearest singularity
// over the panel's half-width (Trefethen 2008, SIAM Review 50:67–87), so
// halving a panel makes the rule up to 2³⁰ times more accurate. See
// DEVELOPERS.md ("Sample size to machine precision").

const (
	// gaussPoints is the order of the Gauss–Legendre rule on each half
	// panel, exact for polynomials of degree 29.
	gaussPoints = 15
	// quadTol is the relative error aimed at in every integral; the
	// criteria promise 1e-10 relative and quadTol leaves room for the
	// arithmetic after the integrals.
	quadTol = 1e-13
	// maxPanels stops the bisection if the target cannot be reached
	// (rounding noise in an integral that is nearly zero); the estimate
	// of the finest panels is returned.
	maxPanels = 4000
	// tailT is the half-width of the window in standard normal units:
	// the normal density is below 1e-314 beyond it, so the integrand
	// (a risk, at most 1, times the density) contributes nothing a
	// float64 can hold.
	tailT = 38
)

// rule is the Gauss–Legendre rule on [−1, 1].
type rule struct {
	x, w []float64
}

func newRule() rule {
	r := rule{x: make([]float64, gaussPoints), w: make([]float64, gaussPoints)}
	quad.Legendre{}.FixedLocations(r.x, r.w, -1, 1)
	return r
}

// integrand writes the dim components of the function at t into out.
type integrand func(t float64, out []float64)

// panel is a stretch [lo, hi] with its two half-panel estimates and
// their sum's estimated error, per component.
type panel struct {
	lo, hi      float64
	left, right []float64
	err         []float64
}

// integrator holds the rule and the working space of one integration;
// it is not safe for concurrent use.
type integrator struct {
	r   rule
	buf []float64
}

func newIntegrator() *integrator { return &integrator{r: newRule()} }

// apply adds the rule's estimate of ∫_lo^hi f over the stretch to sum.
func (q *integrator) apply(f integrand, lo, hi float64, sum []float64) {
	c, h := (lo+hi)/2, (hi-lo)/2
	for k := range sum {
		sum[k] = 0
	}
	for i, x := range q.r.x {
		f(c+h*x, q.buf)
		w := q.r.w[i] * h
		for k, v := range q.buf {
			sum[k] += w * v
		}
	}
}

// split returns the panel [lo, hi] whose whole-panel estimate is whole
// (nil: computed here).
func (q *integrator) split(f integrand, lo, hi float64, whole []float64, dim int) panel {
	if whole == nil {
		whole = make([]float64, dim)
		q.apply(f, lo, hi, whole)
	}
	mid := (lo + hi) / 2
	p := panel{lo: lo, hi: hi, left: make([]float64, dim), right: make([]float64, dim), err: make([]float64, dim)}
	q.apply(f, lo, mid, p.left)
	q.apply(f, mid, hi, p.right)
	for k := range p.err {
		p.err[k] = math.Abs(p.left[k] + p.right[k] - whole[k])
	}
	return p
}

// integrate returns the integral of each of the dim components of f over
// [breaks[0], breaks[len−1]], starting from the panels between
// consecutive breaks (sorted; the integrand should be smooth inside each
// panel, so discontinuities and sharp features belong at breaks). It
// reports whether every component reached quadTol.
func (q *integrator) integrate(f integrand, dim int, breaks []float64) ([]float64, bool) {
	q.buf = make([]float64, dim)
	var panels []panel
	for i := 1; i < len(breaks); i++ {
		if breaks[i] > breaks[i-1] {
			panels = append(panels, q.split(f, breaks[i-1], breaks[i], nil, dim))
		}
	}
	scale, errs := make([]float64, dim), make([]float64, dim)
	for {
		for k := range scale {
			scale[k], errs[k] = 0, 0
		}
		for _, p := range panels {
			for k := range scale {
				scale[k] += math.Abs(p.left[k]) + math.Abs(p.right[k])
				errs[k] += p.err[k]
			}
		}
		// worst is the panel with the largest error relative to its
		// component's scale, among components not yet within tolerance.
		worst, worstRel, done := -1, 0.0, true
		for k := range scale {
			if errs[k] > quadTol*scale[k] && scale[k] > 0 {
				done = false
			}
		}
		if done || len(panels) >= maxPanels {
			out := make([]float64, dim)
			for _, p := range panels {
				for k := range out {
					out[k] += p.left[k] + p.right[k]
				}
			}
			return out, done
		}
		for i, p := range panels {
			for k := range scale {
				if scale[k] > 0 && errs[k] > quadTol*scale[k] {
					if rel := p.err[k] / scale[k]; rel > worstRel {
						worst, worstRel = i, rel
					}
				}
			}
		}
		p := panels[worst]
		mid := (p.lo + p.hi) / 2
		if !(mid > p.lo && mid < p.hi) { // the panel cannot be halved further
			p.err = make([]float64, dim)
			panels[worst] = p
			continue
		}
		panels[worst] = q.split(f, p.lo, mid, p.left, dim)
		panels = append(panels, q.split(f, mid, p.hi, p.right, dim))
	}
}
