// Package trend turns a history of audits into series over audit dates
// with control limits for O/E, and flags the first audit outside them.
package trend

import (
	"math"

	"github.com/riskaudit/riskaudit/history"
)

// z values of the two-sided 95% and 99.8% limits.
const (
	z95  = 1.959963984540054
	z998 = 3.090232306167813
)

// Point is one audit on the trend.
type Point struct {
	Date     string
	Record   history.Record
	Limit95  [2]float64 // O/E limits at this audit's expected events
	Limit998 [2]float64
	Outside  bool // O/E outside the 99.8% limits
}

// Trend is the history prepared for the charts.
type Trend struct {
	Points []Point
	// FirstOutside is the index of the first audit whose O/E lies outside
	// its 99.8% limits, or −1.
	FirstOutside int
}

// Limits returns the funnel-type control limits for O/E of an audit with
// expected events E, for a two-sided normal quantile z: under a
// well-calibrated model the observed count is about Poisson with mean E,
// so O/E has mean 1 and variance 1/E, and the limits are 1 ± z/√E
// (Spiegelhalter 2005, Statistics in Medicine 24:1185–1202, with the
// normal approximation, adequate for E of about 20 or more; the lower
// limit is cut at 0).
func Limits(expected, z float64) [2]float64 {
	if expected <= 0 {
		return [2]float64{math.NaN(), math.NaN()}
	}
	h := z / math.Sqrt(expected)
	return [2]float64{math.Max(0, 1-h), 1 + h}
}

// Build makes the trend of records (in audit-date order).
func Build(records []history.Record) *Trend {
	t := &Trend{FirstOutside: -1}
	for i, r := range records {
		p := Point{Date: r.AuditDate, Record: r, Limit95: Limits(r.Expected, z95), Limit998: Limits(r.Expected, z998)}
		p.Outside = r.OE[0] < p.Limit998[0] || r.OE[0] > p.Limit998[1]
		if p.Outside && t.FirstOutside < 0 {
			t.FirstOutside = i
		}
		t.Points = append(t.Points, p)
	}
	return t
}
