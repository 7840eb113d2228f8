package meta

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Combined is one estimate combined across m multiply imputed datasets by
// Rubin's rules (Rubin 1987, Multiple Imputation for Nonresponse in
// Surveys, Wiley, chapter 3). With q_j and u_j the estimate and its
// (within-imputation) variance in imputation j = 1…m:
//
//	Q̄ = Σ q_j / m                      (the pooled estimate)
//	Ū = Σ u_j / m                      (within-imputation variance)
//	B = Σ (q_j − Q̄)² / (m − 1)         (between-imputation variance)
//	T = Ū + (1 + 1/m) B                (total variance)
//	λ = (1 + 1/m) B / T                (share of T due to the missing data)
//	r = (1 + 1/m) B / Ū                (relative increase in variance)
//
// The degrees of freedom are Barnard & Rubin's (1999, Biometrika
// 86:948–955) small-sample ones: with ν_com the complete-data degrees of
// freedom,
//
//	ν_old = (m − 1) / λ²
//	ν_obs = (ν_com + 1)/(ν_com + 3) · ν_com · (1 − λ)
//	ν     = ν_old · ν_obs / (ν_old + ν_obs),
//
// which is ν_old when ν_com is infinite and ν_obs when B = 0 (ν_old
// infinite). The fraction of missing information is
//
//	γ = (ν + 1)/(ν + 3) · λ + 2/(ν + 3)
//
// (van Buuren 2018, Flexible Imputation of Missing Data, 2nd ed.,
// section 2.3.5; with ν = ν_old it is Rubin's (1987) r + 2/(ν+3) over
// r + 1). The interval is Q̄ ± t_{ν,1−α/2} √T.
type Combined struct {
	M int
	// Estimate is Q̄; Within Ū, Between B, Total T.
	Estimate, Within, Between, Total float64
	// Lambda is λ, RIV the relative increase in variance r.
	Lambda, RIV float64
	// DF is Barnard and Rubin's ν (+Inf when both ν_old and ν_com are
	// infinite); FMI is γ.
	DF, FMI float64
	// Level is the interval's level and CI the interval on the scale of
	// the estimates.
	Level float64
	CI    [2]float64
}

// ErrTooFewImputations is returned by Rubin with fewer than 2
// imputations: the between-imputation variance needs at least two.
var ErrTooFewImputations = errors.New("Rubin's rules need at least 2 imputations")

// Rubin combines the estimates q and their variances u of m ≥ 2
// imputations. dfComplete is ν_com, the degrees of freedom the estimate
// would have without missing data (math.Inf(1) for a large-sample
// estimate); level is the interval's level (0: 0.95). A NaN or infinite
// estimate, or a variance that is negative, NaN or infinite, is an error.
// When every u_j and B are 0 the interval is the point itself and DF is
// NaN.
func Rubin(q, u []float64, dfComplete, level float64) (Combined, error) {
	if level == 0 {
		level = 0.95
	}
	m := len(q)
	switch {
	case len(u) != m:
		return Combined{}, fmt.Errorf("meta: %d estimates but %d variances", m, len(u))
	case m < 2:
		return Combined{}, ErrTooFewImputations
	case !(level > 0 && level < 1):
		return Combined{}, fmt.Errorf("meta: level %v is not between 0 and 1", level)
	case !(dfComplete > 0):
		return Combined{}, fmt.Errorf("meta: complete-data degrees of freedom %v are not positive", dfComplete)
	}
	for j := range q {
		if math.IsNaN(q[j]) || math.IsInf(q[j], 0) {
			return Combined{}, fmt.Errorf("meta: estimate of imputation %d is %v", j+1, q[j])
		}
		if !(u[j] >= 0) || math.IsInf(u[j], 0) {
			return Combined{}, fmt.Errorf("meta: variance of imputation %d is %v (want a finite number ≥ 0)", j+1, u[j])
		}
	}
	c := Combined{M: m, Level: level}
	fm := float64(m)
	for j := range q {
		c.Estimate += q[j]
		c.Within += u[j]
	}
	c.Estimate /= fm
	c.Within /= fm
	for _, x := range q {
		d := x - c.Estimate
		c.Between += d * d
	}
	c.Between /= fm - 1
	inflated := (1 + 1/fm) * c.Between
	c.Total = c.Within + inflated
	if !(c.Total > 0) {
		c.Lambda, c.RIV, c.DF, c.FMI = 0, 0, math.NaN(), 0
		c.CI = [2]float64{c.Estimate, c.Estimate}
		return c, nil
	}
	c.Lambda = inflated / c.Total
	c.RIV = math.Inf(1)
	if c.Within > 0 {
		c.RIV = inflated / c.Within
	}
	c.DF = barnardRubin(fm, c.Lambda, dfComplete)
	if math.IsInf(c.DF, 1) {
		c.FMI = c.Lambda
	} else {
		c.FMI = (c.DF+1)/(c.DF+3)*c.Lambda + 2/(c.DF+3)
	}
	h := tQuantile(1-(1-level)/2, c.DF) * math.Sqrt(c.Total)
	c.CI = [2]float64{c.Estimate - h, c.Estimate + h}
	return c, nil
}

// barnardRubin is ν of Barnard & Rubin (1999) for m imputations, the
// share λ of the variance due to missingness and ν_com.
func barnardRubin(m, lambda, dfCom float64) float64 {
	old := math.Inf(1)
	if lambda > 0 {
		old = (m - 1) / (lambda * lambda)
	}
	if math.IsInf(dfCom, 1) {
		return old
	}
	obs := (dfCom + 1) / (dfCom + 3) * dfCom * (1 - lambda)
	if math.IsInf(old, 1) {
		return obs
	}
	return old * obs / (old + obs)
}

// tQuantile is the p quantile of Student's t on df degrees of freedom,
// the normal's when df is infinite.
func tQuantile(p, df float64) float64 {
	if math.IsInf(df, 1) {
		return distuv.UnitNormal.Quantile(p)
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: df}.Quantile(p)
}
