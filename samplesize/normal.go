package samplesize

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// NormalLP is a normal distribution of the linear predictor, which
// Compute integrates over (rather than over a sample of it).
type NormalLP struct {
	// Mean and SD are the linear predictor's mean and standard
	// deviation (SD > 0).
	Mean, SD float64
}

// moments are the expectations over a normal linear predictor X =
// μ + σT (T standard normal) that the criteria need, with true risks
// p = expit(a + bX) and treatment when X ≥ cut.
type moments struct {
	// phi and q are E[p] and E[1 − p] (each integrated, so that neither
	// is found by subtraction); pred is E[expit(X)], the mean predicted
	// risk.
	phi, q, pred float64
	// w0, w1 and w2 are E[w], E[wT] and E[wT²] with w = p(1 − p): the
	// Fisher information of the calibration model, in units of T.
	w0, w1, w2 float64
	// pPhi and qPhi are E[p Φ(T)] and E[(1 − p) Φ(T)], from which the
	// C-statistic follows (cStatistic).
	pPhi, qPhi float64
	// tp, fp and fn are the shares of true positives, false positives
	// and false negatives at the cut; treated is P(X ≥ cut).
	tp, fp, fn, treated float64
	// ok is false when an integral did not reach its tolerance.
	ok bool
}

// momentsOf integrates over Normal(nd.Mean, nd.SD) with true risks
// expit(a + b·X). With nb false the net-benefit cells are not computed
// (and are 0).
func momentsOf(q *integrator, nd NormalLP, a, b, cut float64, nb bool) moments {
	mu, sd := nd.Mean, nd.SD
	tc := math.Inf(1)
	if nb {
		tc = (cut - mu) / sd
	}
	calibrated := a == 0 && b == 1
	f := func(t float64, out []float64) {
		x := mu + sd*t
		eta := a + b*x
		p, r := expit2(eta)
		d := math.Exp(-t*t/2) / math.Sqrt(2*math.Pi)
		pd, rd := p*d, r*d
		w := p * r * d
		cdf := math.Erfc(-t/math.Sqrt2) / 2
		out[0], out[1] = pd, rd
		if calibrated {
			out[2] = pd
		} else {
			out[2] = expit(x) * d
		}
		out[3], out[4], out[5] = w, w*t, w*t*t
		out[6], out[7] = pd*cdf, rd*cdf
		if t >= tc {
			out[8], out[9], out[10] = pd, rd, 0
		} else {
			out[8], out[9], out[10] = 0, 0, pd
		}
	}
	v, ok := q.integrate(f, 11, breaksFor(nd, a, b, tc))
	m := moments{phi: v[0], q: v[1], pred: v[2], w0: v[3], w1: v[4], w2: v[5], pPhi: v[6], qPhi: v[7], ok: ok}
	if calibrated {
		m.pred = m.phi
	}
	if nb {
		m.tp, m.fp, m.fn = v[8], v[9], v[10]
		m.treated = math.Erfc(tc/math.Sqrt2) / 2
	}
	return m
}

// expit2 returns expit(x) and expit(−x) = 1 − expit(x), each to full
// relative precision, from one exponential.
func expit2(x float64) (p, r float64) {
	e := math.Exp(-math.Abs(x))
	if x >= 0 {
		return 1 / (1 + e), e / (1 + e)
	}
	return e / (1 + e), 1 / (1 + e)
}

// eventMoments returns E[p], E[1 − p] and E[p(1 − p)] over
// Normal(nd.Mean, nd.SD) with p = expit(X), the integrals meanFor needs
// (the same as momentsOf's, without the others' cost).
func eventMoments(q *integrator, nd NormalLP) (phi, r, w float64, ok bool) {
	mu, sd := nd.Mean, nd.SD
	f := func(t float64, out []float64) {
		x := mu + sd*t
		p, r := expit2(x)
		d := math.Exp(-t*t/2) / math.Sqrt(2*math.Pi)
		out[0], out[1], out[2] = p*d, r*d, p*r*d
	}
	v, ok := q.integrate(f, 3, breaksFor(nd, 0, 1, math.Inf(1)))
	return v[0], v[1], v[2], ok
}

// breaksFor places the panels' ends for an integral over Normal(μ, σ)
// in units of T: a grid over the bulk of the normal density, the point
// tp where a + bX = 0 with points at 1, 4 and 16 times the width
// 1/|bσ| of the risk's rise on either side (for a large |bσ| the risks
// change from near 0 to near 1 within a small stretch of T), the peak
// bσ of exp(bσT)·φ(T), where a rare event's integrand has its mass, and
// the cut tc of the net benefit, where the integrand jumps.
func breaksFor(nd NormalLP, a, b, tc float64) []float64 {
	br := []float64{-tailT, -12, -8, -6, -4, -3, -2, -1, 0, 1, 2, 3, 4, 6, 8, 12, tailT}
	add := func(t float64) {
		if t > -tailT && t < tailT {
			br = append(br, t)
		}
	}
	if s := math.Abs(b * nd.SD); s > 0 {
		tp := -(a + b*nd.Mean) / (b * nd.SD)
		add(tp)
		for _, k := range []float64{1, 4, 16} {
			add(tp - k/s)
			add(tp + k/s)
		}
		for _, k := range []float64{-3, -1, 0, 1, 3} {
			add(b*nd.SD + k)
			add(-b*nd.SD + k)
		}
	}
	add(tc)
	sort.Float64s(br)
	return br
}

// cStatistic is the C-statistic of the moments: the probability that an
// event's linear predictor exceeds a non-event's, P(X₁ > X₀) with X₁ and
// X₀ distributed as p·f/φ and (1 − p)·f/(1 − φ). With F₀(x), the
// non-events' share below x, equal to Φ(T) − G₁(x), where G₁ is the
// events' share below x, ∫ p f F₀ = E[pΦ(T)] − φ²/2; so
// C = (E[pΦ(T)] − φ²/2)/(φ(1 − φ)), and by the same argument for the
// non-events 1 − C = (E[(1 − p)Φ(T)] − (1 − φ)²/2)/(φ(1 − φ)). The
// first is used when φ ≤ ½ and the second otherwise, so that the
// subtracted term is at most about as large as the result (no digits
// lost to cancellation beyond a factor of 2 or 3).
func (m moments) cStatistic() float64 {
	den := m.phi * m.q
	if m.phi <= 0.5 {
		return (m.pPhi - m.phi*m.phi/2) / den
	}
	return 1 - (m.qPhi-m.q*m.q/2)/den
}

// solver finds the normal linear predictor of a calibrated model.
type solver struct {
	q *integrator
}

// meanFor returns the mean μ for which E[expit(μ + σT)] = phi, by
// Newton's method on logit E[expit(μ + σT)] − logit(phi), whose slope
// E[w]/(φ(1 − φ)) lies in (0, 1], safeguarded by bisection within the
// bracket the iterations establish. It stops when a step changes μ by
// less than 1e-14 of max(1, |μ|), where the integrals' own error (about
// quadTol) dominates.
func (s solver) meanFor(phi, sd float64) (float64, error) {
	target := math.Log(phi) - math.Log1p(-phi)
	// The probit approximation E[expit(μ + σT)] ≈ expit(μ/√(1 + πσ²/8))
	// (common practice) starts within a few tenths.
	mu := target * math.Sqrt(1+math.Pi*sd*sd/8)
	lo, hi := math.Inf(-1), math.Inf(1)
	for it := 0; it < 200; it++ {
		e, r, w, ok := eventMoments(s.q, NormalLP{mu, sd})
		if !ok || !(e > 0 && r > 0 && w > 0) {
			return 0, fmt.Errorf("samplesize: an event proportion of %g cannot be reached with an LP SD of %g", phi, sd)
		}
		g := math.Log(e) - math.Log(r) - target
		if g < 0 {
			lo = mu
		} else {
			hi = mu
		}
		if g == 0 {
			return mu, nil
		}
		next := mu - g*e*r/w
		switch {
		case next > lo && next < hi:
		case math.IsInf(lo, 0) || math.IsInf(hi, 0):
			next = mu - math.Copysign(math.Max(1, math.Abs(g)), g)
		default:
			next = (lo + hi) / 2
		}
		if math.Abs(next-mu) <= 1e-14*math.Max(1, math.Abs(mu)) {
			return next, nil
		}
		mu = next
	}
	return 0, fmt.Errorf("samplesize: the mean of the linear predictor for an event proportion of %g was not found", phi)
}

// cFor returns the C-statistic of the calibrated model with event
// proportion phi and LP SD sd, and the mean.
func (s solver) cFor(phi, sd float64) (c, mu float64, err error) {
	if sd == 0 {
		return 0.5, math.Log(phi) - math.Log1p(-phi), nil
	}
	if mu, err = s.meanFor(phi, sd); err != nil {
		return 0, 0, err
	}
	return momentsOf(s.q, NormalLP{mu, sd}, 0, 1, 0, false).cStatistic(), mu, nil
}

// MaxLPSD is the largest linear-predictor SD NormalFor considers: a
// calibrated model with that spread has a C-statistic above 0.999 at
// any event proportion from 0.001 to 0.999, so a C-statistic beyond
// it is out of reach.
const MaxLPSD = 50

// NormalFor finds the normal distribution of the linear predictor of a
// calibrated model with event proportion phi and C-statistic c: for each
// SD σ the mean μ(σ) giving the event proportion (meanFor), and σ giving
// the C-statistic by Brent's method on C(μ(σ), σ) − c, which increases
// from ½ at σ = 0. Both targets are met to about 1e-13 relative (the
// integrals' tolerance), far within the 1e-10 promised.
func NormalFor(phi, c float64) (mu, sd float64, err error) {
	if !(phi > 0 && phi < 1) || !(c > 0.5 && c < 1) {
		return 0, 0, errors.New("samplesize: give an event proportion in (0, 1) and a C-statistic in (0.5, 1)")
	}
	s := solver{q: newIntegrator()}
	g := func(sd float64) (float64, error) {
		cs, _, err := s.cFor(phi, sd)
		return cs - c, err
	}
	lo, glo := 0.0, 0.5-c
	hi := 1.0
	ghi, err := g(hi)
	if err != nil {
		return 0, 0, err
	}
	for ghi < 0 {
		if hi >= MaxLPSD {
			return 0, 0, fmt.Errorf("samplesize: a C-statistic of %g is out of reach at an event proportion of %g (an LP SD of %d gives %.6f)", c, phi, MaxLPSD, ghi+c)
		}
		lo, glo = hi, ghi
		hi = math.Min(2*hi, MaxLPSD)
		if ghi, err = g(hi); err != nil {
			return 0, 0, err
		}
	}
	if sd, err = brent(g, lo, hi, glo, ghi); err != nil {
		return 0, 0, err
	}
	if mu, err = s.meanFor(phi, sd); err != nil {
		return 0, 0, err
	}
	return mu, sd, nil
}

// brent finds a root of g in [a, b], where g(a) = fa and g(b) = fb have
// opposite signs, by Brent's method (Brent 1973, Algorithms for
// Minimization without Derivatives, ch. 4: inverse quadratic
// interpolation, secant steps and bisection), to 2ε|x| + 1e-300.
func brent(g func(float64) (float64, error), a, b, fa, fb float64) (float64, error) {
	const eps = 0x1p-52
	c, fc := a, fa
	d := b - a
	e := d
	for it := 0; it < 200; it++ {
		if (fb > 0) == (fc > 0) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol := 2*eps*math.Abs(b) + 1e-300
		m := (c - b) / 2
		if math.Abs(m) <= tol || fb == 0 {
			return b, nil
		}
		if math.Abs(e) >= tol && math.Abs(fa) > math.Abs(fb) {
			var p, q float64
			s := fb / fa
			if a == c {
				p, q = 2*m*s, 1-s
			} else {
				qq, r := fa/fc, fb/fc
				p = s * (2*m*qq*(qq-r) - (b-a)*(r-1))
				q = (qq - 1) * (r - 1) * (s - 1)
			}
			if p > 0 {
				q = -q
			} else {
				p = -p
			}
			if 2*p < math.Min(3*m*q-math.Abs(tol*q), math.Abs(e*q)) {
				e, d = d, p/q
			} else {
				d, e = m, m
			}
		} else {
			d, e = m, m
		}
		a, fa = b, fb
		if math.Abs(d) > tol {
			b += d
		} else {
			b += math.Copysign(tol, m)
		}
		var err error
		if fb, err = g(b); err != nil {
			return 0, err
		}
	}
	return b, nil
}
