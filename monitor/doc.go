// Package monitor follows a risk model's performance through an extract
// in date order: the variable life-adjusted display (VLAD), the
// risk-adjusted Bernoulli CUSUM with its alarm limit chosen by
// simulation for an in-control average run length, the risk-adjusted
// EWMA of observed minus expected events with its exact variance, and
// calibration by period (month, quarter or blocks of patients).
//
// Every function takes the outcomes y (0 or 1) and predicted risks p of
// the patients already in date order; the package knows nothing of
// files, columns or reports. Dates, when given, only label periods and
// alarms.
package monitor
