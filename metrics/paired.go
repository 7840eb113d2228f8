package metrics

import (
	"fmt"
	"math"
)

// PairedDeLong compares the AUCs of two risks on the same rows by the
// test of DeLong, DeLong & Clarke-Pearson (1988): with the structural
// components of each model for every event (V10) and non-event (V01),
//
//	Var(AUC_a − AUC_b) = (S10_aa + S10_bb − 2 S10_ab)/m + (S01_aa + S01_bb − 2 S01_ab)/n,
//
// where S10 and S01 are the sample covariance matrices (divisors m − 1
// and n − 1) of the components over the m events and n non-events.
type PairedDeLong struct {
	AUCA         float64    `json:"auc_a"`
	AUCB         float64    `json:"auc_b"`
	Difference   float64    `json:"difference"`
	DifferenceSE float64    `json:"difference_se"`
	DifferenceCI [2]float64 `json:"difference_ci"`
	Z            float64    `json:"z"`
	P            float64    `json:"p"`
	// Correlation is the correlation of the two AUC estimates.
	Correlation float64 `json:"correlation"`
}

// DeLongPaired tests AUC(pa) − AUC(pb) for outcomes y, the two risks
// measured on the same rows (in any order: it sorts the rows by each risk
// itself, stably, as SortByRisk does). The difference's interval is
// Wald's, Difference ± 1.96·DifferenceSE, and P is two-sided. Every
// value is NaN when there are no events or no non-events, and all but
// the two AUCs and their difference when there is only one; Z and P are
// NaN when the two risks rank the rows alike (Difference and
// DifferenceSE 0).
//
// DeLongPaired panics if y, pa and pb differ in length, if an outcome is
// neither 0 nor 1, or if a risk is NaN.
func DeLongPaired(y, pa, pb []float64) PairedDeLong {
	if len(y) != len(pa) || len(y) != len(pb) {
		panic(fmt.Sprintf("metrics: DeLongPaired: %d outcomes but %d and %d risks", len(y), len(pa), len(pb)))
	}
	checkOutcomes("DeLongPaired", y)
	for _, q := range [][]float64{pa, pb} {
		for i, v := range q {
			if v != v {
				panic(fmt.Sprintf("metrics: DeLongPaired: risk of row %d is NaN", i))
			}
		}
	}
	va, vb := componentsByRow(y, pa), componentsByRow(y, pb)
	var ea, eb, na, nb []float64
	for i, v := range y {
		if v == 1 {
			ea, eb = append(ea, va[i]), append(eb, vb[i])
		} else {
			na, nb = append(na, va[i]), append(nb, vb[i])
		}
	}
	m, n := float64(len(ea)), float64(len(na))
	r := PairedDeLong{AUCA: mean(ea), AUCB: mean(eb)}
	r.Difference = r.AUCA - r.AUCB
	s10aa, s10bb, s10ab := covariance(ea, ea), covariance(eb, eb), covariance(ea, eb)
	s01aa, s01bb, s01ab := covariance(na, na), covariance(nb, nb), covariance(na, nb)
	varA := s10aa/m + s01aa/n
	varB := s10bb/m + s01bb/n
	cov := s10ab/m + s01ab/n
	v := varA + varB - 2*cov
	r.DifferenceSE = math.Sqrt(math.Max(v, 0))
	r.DifferenceCI = [2]float64{r.Difference - z975*r.DifferenceSE, r.Difference + z975*r.DifferenceSE}
	r.Z = r.Difference / r.DifferenceSE
	r.P = math.Erfc(math.Abs(r.Z) / math.Sqrt2)
	r.Correlation = cov / math.Sqrt(varA*varB)
	return r
}

// componentsByRow returns each row's DeLong component: V10 (the share of
// non-events ranked below it, ties ½) for an event and V01 (the share of
// events ranked above it, ties ½) for a non-event.
func componentsByRow(y, p []float64) []float64 {
	order := SortedOrder(p)
	m, n := 0.0, 0.0
	for _, v := range y {
		if v == 1 {
			m++
		} else {
			n++
		}
	}
	out := make([]float64, len(y))
	belowX, belowY := 0.0, 0.0
	for s := 0; s < len(order); {
		e, x := s, 0.0
		for e < len(order) && p[order[e]] == p[order[s]] {
			x += y[order[e]]
			e++
		}
		yy := float64(e-s) - x
		v10 := (belowY + yy/2) / n
		v01 := 1 - (belowX+x/2)/m
		for _, i := range order[s:e] {
			if y[i] == 1 {
				out[i] = v10
			} else {
				out[i] = v01
			}
		}
		belowX += x
		belowY += yy
		s = e
	}
	return out
}
