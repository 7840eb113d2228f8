package model

import (
	"fmt"
	"math"
)

// Units says, for each term whose odds ratio is not simply "per one
// unit of the column", what the odds ratio is per, keyed by term label:
//
//   - a linear term of z = (x − c)/s with s ≠ 1: per s units of x (the
//     centre c moves only the intercept);
//   - a log term ln((x − c)/s): per e-fold increase of x − c, that is
//     x − c multiplied by e ≈ 2.718 (a doubling multiplies the odds by
//     OR^ln 2, OR^0.693); s moves only the intercept;
//   - spline and fractional-polynomial terms: none alone is per a unit
//     of x; the effect of x is the curve the terms make together.
//
// Categorical indicators (a level against the reference), products and
// plain linear terms are left out.
func (d *Design) Units() map[string]string {
	u := map[string]string{}
	for _, e := range d.entries {
		pr := e.pred
		if pr == nil {
			continue
		}
		x := pr.Column
		if pr.Center != 0 {
			x = fmt.Sprintf("%s − %s", pr.Column, fmtNum(pr.Center))
		}
		switch e.kind {
		case linear:
			if pr.Scale != 1 {
				u[e.labels[0]] = fmt.Sprintf("per %s units of %s", fmtNum(pr.Scale), pr.Column)
			}
		case logTerm:
			u[e.labels[0]] = fmt.Sprintf("per e-fold (×2.718) increase of %s; per doubling: the odds ratio to the power %.3f (ln 2)", x, math.Ln2)
		case spline, powers:
			kind := "restricted cubic spline"
			if e.kind == powers {
				kind = "fractional polynomial"
			}
			for _, l := range e.labels {
				u[l] = fmt.Sprintf("terms of one %s in %s; none alone is an odds ratio per unit of %s: the effect of %s is the curve they make together", kind, pr.Column, pr.Column, pr.Column)
			}
		}
	}
	return u
}
