// Package metrics holds pure functions of observed outcomes and predicted
// risks: goodness of fit, discrimination, calibration, accuracy and
// clinical usefulness. Each function documents its exact definition and
// the paper it comes from; none reads files or keeps state.
package metrics
