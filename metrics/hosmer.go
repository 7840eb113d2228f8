package metrics

import (
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// HLGroup is one risk group of the Hosmer–Lemeshow test.
type HLGroup struct {
	N        int     `json:"n"`
	Observed float64 `json:"observed"`
	Expected float64 `json:"expected"`
	MinRisk  float64 `json:"min_risk"`
	MaxRisk  float64 `json:"max_risk"`
}

// HosmerLemeshowTest is the result of the Hosmer–Lemeshow test.
type HosmerLemeshowTest struct {
	Statistic float64   `json:"statistic"`
	DF        int       `json:"df"`
	P         float64   `json:"p"`
	Groups    int       `json:"groups"`
	Table     []HLGroup `json:"table,omitempty"`
}

// HosmerLemeshow computes the Hosmer–Lemeshow goodness-of-fit test
// (Hosmer & Lemeshow 1980, Communications in Statistics A10:1043–1069)
// of the rows of s, with g groups.
//
// Grouping is exact, so results are reproducible: group k (0-based)
// starts at sorted position ⌊k·n/g⌋ (s holds the rows in risk order, ties
// in row order), and a start that falls inside a run of tied risks moves
// forward past the run, so ties stay in one group; empty groups are
// dropped. The statistic is Σ (O_k − E_k)² / (E_k (1 − E_k/n_k)), with
// O_k the events, E_k the sum of risks and n_k the rows of group k. The
// degrees of freedom are groups − 2 when development is true (the model
// was fitted to these rows) and groups otherwise; P is the chi-squared
// upper tail, NaN when the degrees of freedom are below 1 (an empty s has
// no groups). A group whose risks are all 0, or all 1, has no binomial
// variance to divide by: the statistic and P are then NaN (undefined),
// not an infinite or arbitrary number.
//
// HosmerLemeshow panics if g < 1.
func HosmerLemeshow(s Sorted, g int, development bool) HosmerLemeshowTest {
	if g < 1 {
		panic("metrics: HosmerLemeshow: fewer than one group")
	}
	y, p := s.y, s.p
	n := len(p)
	starts := make([]int, 0, g+1)
	for k := 0; k < g; k++ {
		start := k * n / g
		for start > 0 && start < n && p[start] == p[start-1] {
			start++
		}
		if len(starts) > 0 && start <= starts[len(starts)-1] {
			continue
		}
		starts = append(starts, start)
	}
	starts = append(starts, n)
	var t HosmerLemeshowTest
	undefined := false
	for k := 0; k+1 < len(starts); k++ {
		lo, hi := starts[k], starts[k+1]
		if lo >= hi {
			continue
		}
		grp := HLGroup{N: hi - lo, MinRisk: p[lo], MaxRisk: p[hi-1]}
		for i := lo; i < hi; i++ {
			grp.Observed += y[i]
			grp.Expected += p[i]
		}
		t.Table = append(t.Table, grp)
		d := grp.Observed - grp.Expected
		v := grp.Expected * (1 - grp.Expected/float64(grp.N))
		if !(v > 0) {
			undefined = true
		}
		t.Statistic += d * d / v
	}
	if undefined {
		t.Statistic = math.NaN()
	}
	t.Groups = len(t.Table)
	t.DF = t.Groups
	if development {
		t.DF -= 2
	}
	t.P = math.NaN()
	if t.DF >= 1 && !undefined {
		t.P = distuv.ChiSquared{K: float64(t.DF)}.Survival(t.Statistic)
	}
	return t
}
