package validate

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// MaxThresholds is the most risk thresholds ParseThresholds gives: a
// step of 0.001 across (0, 1) gives 999, finer than any decision a
// threshold stands for; more only costs memory and time.
const MaxThresholds = 1000

// ParseThresholds reads risk thresholds written FROM:TO:STEP (such as
// 0.05:0.50:0.05, TO included, each rounded to 9 decimals) or as a
// comma-separated list; each number may be a proportion (0.2) or a
// percentage (20%), see ParseRisk. Every threshold must lie strictly
// between 0 and 1. An error quotes s and says what is wrong.
func ParseThresholds(s string) ([]float64, error) {
	var out []float64
	if strings.Contains(s, ":") {
		parts := strings.Split(s, ":")
		if len(parts) != 3 {
			return nil, fmt.Errorf("%q: give FROM:TO:STEP, such as 0.05:0.50:0.05", s)
		}
		var v [3]float64
		for i, p := range parts {
			f, err := ParseRisk(p)
			if err != nil {
				return nil, fmt.Errorf("%q: %q is not a number", s, p)
			}
			v[i] = f
		}
		for _, f := range v {
			if math.IsNaN(f) || math.IsInf(f, 0) {
				return nil, fmt.Errorf("%q: %g is not a finite number", s, f)
			}
		}
		if v[2] <= 0 || v[1] < v[0] {
			return nil, fmt.Errorf("%q: the step must be positive and TO at least FROM", s)
		}
		if n := math.Floor((v[1]-v[0])/v[2]+1e-9) + 1; n > MaxThresholds {
			return nil, fmt.Errorf("%q: %.0f thresholds, more than the %d a decision curve can use (a step of 0.001 across (0, 1) gives 999)", s, n, MaxThresholds)
		}
		for k := 0; ; k++ {
			t := v[0] + float64(k)*v[2]
			if t > v[1]+1e-9 {
				break
			}
			out = append(out, math.Round(t*1e9)/1e9)
		}
	} else {
		for _, p := range strings.Split(s, ",") {
			f, err := ParseRisk(p)
			if err != nil {
				return nil, fmt.Errorf("%q: %q is not a number", s, p)
			}
			out = append(out, f)
		}
		if len(out) > MaxThresholds {
			return nil, fmt.Errorf("%d thresholds, more than the %d a decision curve can use", len(out), MaxThresholds)
		}
	}
	for _, t := range out {
		if !(t > 0 && t < 1) {
			return nil, fmt.Errorf("%q: %g is not strictly between 0 and 1%s", s, t, PercentHint(t))
		}
	}
	return out, nil
}

// PercentHint is the hint for a risk r outside (0, 1) that reads as a
// percentage typed without its sign (1 < r < 100): " (a percentage is
// written with %, as 10%)"; for any other r it is empty.
func PercentHint(r float64) string {
	if r > 1 && r < 100 {
		return fmt.Sprintf(" (a percentage is written with %%, as %g%%)", r)
	}
	return ""
}

// ParseRisk reads one risk written as a proportion (0.2) or as a
// percentage (20%, divided by 100 and rounded to 12 decimals, so that
// 20% is exactly 0.2), with spaces around it ignored.
func ParseRisk(s string) (float64, error) {
	s = strings.TrimSpace(s)
	if num, ok := strings.CutSuffix(s, "%"); ok {
		f, err := strconv.ParseFloat(strings.TrimSpace(num), 64)
		if err != nil {
			return 0, err
		}
		return math.Round(f/100*1e12) / 1e12, nil
	}
	return strconv.ParseFloat(s, 64)
}
