package monitor

import "time"

// Dates are the patients' dates, one a patient, each as whole seconds
// since 1970-01-01 UTC (time.Time.Unix). They are a slice without
// pointers, which the garbage collector does not scan: a []time.Time
// holds a pointer a date (its location), so the 1M dates of a large
// extract, alive for the whole audit, were read through at every
// collection cycle.
type Dates []int64

// DatesOf returns ts as Dates, each to the whole second (time.Time.Unix;
// the part below a second is dropped).
func DatesOf(ts []time.Time) Dates {
	if ts == nil {
		return nil
	}
	d := make(Dates, len(ts))
	for i, t := range ts {
		d[i] = t.Unix()
	}
	return d
}

// At returns patient i's date in UTC.
func (d Dates) At(i int) time.Time { return time.Unix(d[i], 0).UTC() }
