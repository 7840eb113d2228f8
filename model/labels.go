package model

import (
	"strconv"
	"strings"
)

// SplineTermLabel is the label of the j-th non-linear term (j ≥ 1) of a
// restricted cubic spline in the predictor name: "bmi [spline 1]",
// "bmi [spline 2]", …; the spline's linear term is labelled name alone.
// It is the one place that decides the form, which says in words what the
// term is.
func SplineTermLabel(name string, j int) string {
	return name + " [spline " + strconv.Itoa(j) + "]"
}

// upgradeTermLabel reads a term label in the form written by earlier
// versions of riskaudit, where a spline's j-th non-linear term was the
// name followed by j primes ("bmi”"), and returns it in the current form
// (SplineTermLabel). Every factor of a product ("bmi'*sex=M") is read so;
// a label without primes is returned as it is. Only frozen specs are read
// this way: riskaudit writes the current form alone.
func upgradeTermLabel(label string) string {
	if !strings.Contains(label, "'") {
		return label
	}
	parts := strings.Split(label, "*")
	for i, f := range parts {
		base := strings.TrimRight(f, "'")
		if j := len(f) - len(base); j > 0 && base != "" {
			parts[i] = SplineTermLabel(base, j)
		}
	}
	return strings.Join(parts, "*")
}
