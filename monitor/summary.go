package monitor

import "time"

// Summary is what audit.json records of a monitoring run (the paths
// themselves are in the figures, not the JSON).
type Summary struct {
	// DateColumn is the column the patients were ordered by (stable sort:
	// patients with the same date keep their file order).
	DateColumn string `json:"date_column"`
	// Patients are those charted; LeftOutMissing and LeftOutInvalid the
	// audited rows left out of the charts for a missing or unreadable
	// date.
	Patients       int    `json:"patients"`
	LeftOutMissing int    `json:"left_out_missing_date"`
	LeftOutInvalid int    `json:"left_out_invalid_date"`
	FirstDate      string `json:"first_date"`
	LastDate       string `json:"last_date"`
	// Period and PeriodSize say how periods were formed; Periods are
	// their measures.
	Period     string   `json:"period"`
	PeriodSize int      `json:"period_size,omitempty"`
	Periods    []Period `json:"periods"`
	// Overall is every charted patient together.
	Overall Period `json:"overall"`
	// VLADEnd is the cumulative expected − observed after the last
	// patient; VLADMin and VLADMax its extremes along the way.
	VLADEnd float64 `json:"vlad_end"`
	VLADMin float64 `json:"vlad_min"`
	VLADMax float64 `json:"vlad_max"`
	// CUSUM are the two one-sided charts.
	CUSUM []ChartSummary `json:"cusum"`
	// EWMA is the risk-adjusted EWMA.
	EWMA EWMASummary `json:"ewma"`
}

// Alarm is a chart's first signal: the patient's 1-based position in
// date order and the date (Patient 0 and no date when there is none).
type Alarm struct {
	Patient int    `json:"patient"`
	Date    string `json:"date,omitempty"`
}

// ChartSummary is one CUSUM's limit and signals.
type ChartSummary struct {
	Name    string `json:"name"`
	Limit   Limit  `json:"limit"`
	Signals int    `json:"signals"`
	First   Alarm  `json:"first_signal"`
	// End is the chart's value after the last patient (no restarts).
	End float64 `json:"end"`
}

// EWMASummary is the EWMA's settings and first crossings.
type EWMASummary struct {
	Lambda     float64 `json:"lambda"`
	Width      float64 `json:"width"`
	FirstAbove Alarm   `json:"first_above"`
	FirstBelow Alarm   `json:"first_below"`
	End        float64 `json:"end"`
	EndSD      float64 `json:"end_sd"`
}

func (r *Result) alarm(i int) Alarm {
	if i < 0 {
		return Alarm{}
	}
	a := Alarm{Patient: i + 1}
	if r.Dates != nil {
		a.Date = r.Dates.At(i).Format(time.DateOnly)
	}
	return a
}

// Summarise returns the Summary of r.
func (r *Result) Summarise(dateColumn string) *Summary {
	s := &Summary{DateColumn: dateColumn, Patients: r.N, Period: r.Per.Kind, Periods: r.Periods, Overall: r.Overall}
	if r.Per.Kind == "block" {
		s.PeriodSize = r.Per.Block
	}
	if r.Dates != nil {
		s.FirstDate = r.Dates.At(0).Format(time.DateOnly)
		s.LastDate = r.Dates.At(r.N - 1).Format(time.DateOnly)
	}
	s.VLADEnd = r.VLAD[r.N-1]
	s.VLADMin, s.VLADMax = r.VLAD[0], r.VLAD[0]
	for _, v := range r.VLAD {
		s.VLADMin, s.VLADMax = min(s.VLADMin, v), max(s.VLADMax, v)
	}
	for _, c := range r.Charts {
		s.CUSUM = append(s.CUSUM, ChartSummary{Name: c.Name, Limit: c.Limit, Signals: len(c.Signals), First: r.alarm(c.First()), End: c.Path[r.N-1]})
	}
	e := r.EWMA
	s.EWMA = EWMASummary{Lambda: e.Lambda, Width: e.L, FirstAbove: r.alarm(e.FirstAbove), FirstBelow: r.alarm(e.FirstBelow), End: e.Z[r.N-1], EndSD: e.SD[r.N-1]}
	return s
}
