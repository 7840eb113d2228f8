// Package metrics holds pure functions of observed outcomes and predicted
// risks: goodness of fit, discrimination, calibration, accuracy and
// clinical usefulness. Each function documents its exact definition and
// the paper it comes from; none reads files or keeps state.
//
// # Outcomes
//
// An outcome is an event when it is exactly 1 and a non-event when it is
// exactly 0 (−0 counts as 0). Every function that takes outcomes panics
// on any other value, NaN included, naming the row: outcomes reach this
// package already coded, so a stray value is a caller's mistake, not a
// measurement.
//
// # Rows in risk order
//
// The measures that walk the rows in order of risk — AUC and AUCValue,
// ROC, HosmerLemeshow, RiskGroups, FlexibleCalibration, ThresholdCounts,
// NetBenefits and Classify — take a Sorted: the outcomes and risks in
// ascending order of risk, ties kept in row order. SortByRisk makes one
// from rows in any order (one stable sort, one copy); AsSorted wraps rows
// that a caller has already put in that order (as a bootstrap does),
// checking them once, without copying. Sort a cohort once and pass the
// same Sorted to every measure: none of them sorts, copies or checks the
// rows again. The measures that do not depend on order — Brier,
// BrierWeighted, OE, the calibration fits, NullDeviance, RiskHistogram —
// take plain slices in any order, and DeLongPaired, which compares two
// orderings of the same rows, sorts each itself. SortedOrder gives the
// same stable order as indices, for callers that reorder other data by
// it.
//
// # Preconditions and missing values
//
// Slices that describe the same rows must have the same length: every
// function checks its inputs at the top and panics with a message that
// starts with "metrics:" and names the function. A measure that does not
// exist for the rows given (an AUC without events, a Brier score of no
// rows) is NaN, never a panic; the calibration fits return an error when
// their model cannot be fitted. Risks are used as given; clamping them
// for the logit is ClampedLogits' job.
package metrics
