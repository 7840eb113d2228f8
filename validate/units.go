package validate

import (
	"fmt"
	"math"
	"strings"
)

// MeasureFormat is the printf format in which riskaudit writes a measure
// of the audit, wherever it appears (the report, the stdout summary, the
// criteria table, the comparison): one unit and one precision per
// measure, so that a figure reads the same in every place.
//
//   - AUC, calibration-in-the-large, calibration slope, O/E, the scaled
//     Brier score and Nagelkerke's R²: three decimals;
//   - ICI, E50, E90 and Emax (distances on the risk scale), the Brier
//     score, net benefit and every standard error: four decimals, as
//     proportions (0.0465, not 4.6%);
//   - the Hosmer–Lemeshow statistic: two decimals;
//   - the event rate and every other share of patients: a percentage with
//     one decimal (PercentMeasure reports which measures these are).
//
// An interval takes the format of its measure; name may also be a
// criterion's measure name (auc_ci.lower, oe_ci, …).
func MeasureFormat(name string) string {
	base, _, _ := strings.Cut(name, ".")
	base = strings.TrimSuffix(strings.TrimSuffix(base, "_ci"), "_logit")
	switch base {
	case "ici", "e50", "e90", "emax", "brier", "net_benefit", "net_benefit_gain",
		"auc_se", "citl_se", "slope_se":
		return "%.4f"
	case "hosmer_lemeshow":
		if strings.HasSuffix(name, ".statistic") {
			return "%.2f"
		}
		return "%.4f"
	case "event_rate", "mean_risk":
		return "%.1f%%"
	}
	return "%.3f"
}

// PercentMeasure reports whether the measure is a share of patients
// written as a percentage (its value is multiplied by 100).
func PercentMeasure(name string) bool {
	base, _, _ := strings.Cut(name, ".")
	return base == "event_rate" || base == "mean_risk"
}

// FormatMeasure writes v in the measure's format (MeasureFormat), "not
// estimable" when v is NaN and ∞ or −∞ when it is infinite.
func FormatMeasure(name string, v float64) string {
	switch {
	case math.IsNaN(v):
		return "not estimable"
	case math.IsInf(v, 1):
		return "∞"
	case math.IsInf(v, -1):
		return "−∞"
	}
	if PercentMeasure(name) {
		v *= 100
	}
	return NoNegativeZero(fmt.Sprintf(MeasureFormat(name), v))
}

// NoNegativeZero drops the minus sign of a number written as zero
// ("-0.0000" is "0.0000", "-0.0%" is "0.0%"): a value that rounds to zero
// has no sign worth reading. Every number the reports write goes through
// it.
func NoNegativeZero(s string) string {
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.%") == "" {
		return s[1:]
	}
	return s
}

// formatBound writes a criterion's bound b in the measure's unit but with
// every digit it was given (%g), so that a bound is never shown rounded:
// 0.03 for an ICI, 10% for an event rate of 0.1.
func formatBound(name string, b float64) string {
	if PercentMeasure(name) {
		return fmt.Sprintf("%g%%", 100*b)
	}
	return fmt.Sprintf("%g", b)
}
