// Package scenario generates the invented demonstration data of
// riskaudit: extracts of a fictional hospital group, Ostbrook Valley
// Health, for a fictional model of post-operative pulmonary complications
// within 30 days of elective abdominal surgery. No real patient,
// organisation or published model lies behind any of it; the numbers come
// from a seeded generator and are the same on every machine.
package scenario

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"time"
)

// Recipe is the demo's model recipe.
const Recipe = `# Ostbrook Valley Health (a fictional organisation): post-operative
# pulmonary complication within 30 days of elective abdominal surgery.
# Invented for the riskaudit demo; not based on any published model.
name: OVH post-operative pulmonary complication model (demo)
purpose:
  intended_use: flag patients at high risk for a pre-operative respiratory review
  target_population: adults listed for elective abdominal surgery
  setting: pre-operative assessment clinics (invented)
  outcome_definition: a post-operative pulmonary complication recorded in the notes
  prediction_horizon: 30 days after surgery
outcome:
  column: ppc_30d
  event: "yes"
  non_event: "no"
predictors:
  - column: age
    center: 65
    scale: 10
  - column: sex
    categorical: true
    reference: F
  - column: bmi
    spline:
      knots: 3
  - column: smoker
    categorical: true
    reference: never
  - column: albumin
    center: 40
  - column: op_minutes
    scale: 60
    log: true
  - column: lung_disease
    categorical: true
    reference: "no"
`

// Extract describes one generated extract.
type Extract struct {
	// Rows is the number of patients.
	Rows int
	// Seed fixes the random stream.
	Seed uint64
	// AgeShift moves the age distribution (years), and EventShift the
	// log-odds of every patient, to imitate drift between extracts.
	AgeShift, EventShift float64
	// MissingRate is the share of missing BMI and albumin values.
	MissingRate float64
	// Hospitals are the group's hospitals the patients were operated in
	// (the column hospital), each with its share of the patients and its
	// own differences; their shares sum to 1.
	Hospitals []Hospital
	// Start is the first admission date (the column admission_date,
	// YYYY-MM-DD) and Days the number of days admissions span, each day
	// equally likely.
	Start string
	Days  int
	// DriftDay and DriftShift imitate drift inside the extract: patients
	// admitted DriftDay days after Start or later have DriftShift added
	// to their log-odds (0: none).
	DriftDay   int
	DriftShift float64
}

// Hospital is one invented hospital of the group, as an extract sees it.
type Hospital struct {
	// Name is the value of the hospital column.
	Name string
	// Share is the share of the extract's patients operated there.
	Share float64
	// AgeShift moves its patients' ages (years, case-mix) and EventShift
	// their log-odds (a local difference the model does not know of,
	// such as how complications are recorded there).
	AgeShift, EventShift float64
}

// The hospitals of Ostbrook Valley Health (invented names): a large
// central hospital, three district hospitals and a small community
// hospital (Brackenlea), too small for every measure to be pooled. The
// names are short enough for the forest plots' row labels.
const (
	hospCentral   = "Ostbrook Central"
	hospNorth     = "Ostbrook North"
	hospVellmoor  = "Vellmoor District"
	hospTarrow    = "Tarrowfield"
	hospCommunity = "Brackenlea"
)

// Development is the extract the demo model is fitted to: admissions
// over 2024 in the group's five hospitals, which differ only by chance.
var Development = Extract{Rows: 4000, Seed: 20240101, MissingRate: 0.02, Start: "2024-01-01", Days: 366,
	Hospitals: []Hospital{{Name: hospCentral, Share: 0.36}, {Name: hospNorth, Share: 0.26}, {Name: hospVellmoor, Share: 0.2},
		{Name: hospTarrow, Share: 0.16}, {Name: hospCommunity, Share: 0.02}}}

// Later is an extract of 2025, the year after, in which the patients are
// older and, from 1 July 2025 (day 181), complications more common at
// every level of risk (say a change in how complications are recorded):
// the model should still rank patients well but under-predict their risk
// in the second half of the year, which the charts over time show. The
// hospitals differ: the central one operates on older patients and
// Tarrowfield on younger ones (case-mix), Vellmoor District's
// complications are more common than the model predicts and
// Tarrowfield's less (calibration), and Brackenlea (the community
// hospital) is too small for its measures to be pooled. Its dates end
// before any day the demo runs on (and before the tests' clock,
// 2026-01-01), so that the demo's report, dated the day it runs,
// describes a cohort that ends before that date.
var Later = Extract{Rows: 3000, Seed: 20260101, AgeShift: 5, EventShift: -0.05, MissingRate: 0.03, Start: "2025-01-01", Days: 365,
	DriftDay: 181, DriftShift: 0.7,
	Hospitals: []Hospital{{Name: hospCentral, Share: 0.36, AgeShift: 2}, {Name: hospNorth, Share: 0.26},
		{Name: hospVellmoor, Share: 0.2, EventShift: 0.45}, {Name: hospTarrow, Share: 0.16, AgeShift: -3, EventShift: -0.35},
		{Name: hospCommunity, Share: 0.02}}}

// CSV returns the extract as CSV text with a header row. The hospital
// and the admission date are drawn from a stream of their own, so that
// the patients' other values are those of the extract without them.
func (e Extract) CSV() []byte {
	r := rand.New(rand.NewPCG(e.Seed, 0x0b57b00c))
	site := rand.New(rand.NewPCG(e.Seed, 0x5173da7e))
	start, err := time.Parse(time.DateOnly, e.Start)
	if err != nil {
		panic(fmt.Sprintf("scenario: start date %q: %v", e.Start, err))
	}
	var b bytes.Buffer
	b.WriteString("patient_ref,age,sex,bmi,smoker,albumin,op_minutes,lung_disease,ppc_30d,hospital,admission_date\n")
	buf := make([]byte, 0, 32)
	for i := 0; i < e.Rows; i++ {
		h := e.hospital(site.Float64())
		day := site.IntN(e.Days)
		shift := e.EventShift + h.EventShift
		if e.DriftShift != 0 && day >= e.DriftDay {
			shift += e.DriftShift
		}
		age := clamp(math.Round(64+e.AgeShift+h.AgeShift+11*normal(r)), 18, 97)
		male := r.Float64() < 0.48
		bmi := clamp(math.Round((27.5+5*normal(r))*10)/10, 15, 55)
		smoke := "never"
		switch u := r.Float64(); {
		case u < 0.17:
			smoke = "current"
		case u < 0.45:
			smoke = "former"
		}
		lung := r.Float64() < 0.08+0.004*math.Max(age-50, 0)
		alb := clamp(math.Round((40-0.08*(age-64)+4*normal(r))*10)/10, 18, 55)
		mins := clamp(math.Round(math.Exp(math.Log(140)+0.4*normal(r))), 30, 600)
		eta := -3.1 + shift + 0.45*(age-65)/10 + 0.004*sq(bmi-26) - 0.06*(alb-40) +
			0.75*math.Log(mins/120)
		if male {
			eta += 0.3
		}
		switch smoke {
		case "former":
			eta += 0.25
		case "current":
			eta += 0.65
		}
		if lung {
			eta += 0.85
		}
		event := r.Float64() < 1/(1+math.Exp(-eta))
		fmt.Fprintf(&b, "OVH-%06d,%g,%s,", i+1, age, pick(male, "M", "F"))
		if r.Float64() < e.MissingRate {
			b.WriteString("NA")
		} else {
			b.Write(strconv.AppendFloat(buf[:0], bmi, 'f', -1, 64))
		}
		fmt.Fprintf(&b, ",%s,", smoke)
		if r.Float64() < e.MissingRate*1.5 {
			b.WriteString("")
		} else {
			b.Write(strconv.AppendFloat(buf[:0], alb, 'f', -1, 64))
		}
		fmt.Fprintf(&b, ",%g,%s,%s,%s,%s\n", mins, pick(lung, "yes", "no"), pick(event, "yes", "no"),
			h.Name, start.AddDate(0, 0, day).Format(time.DateOnly))
	}
	return b.Bytes()
}

// hospital is the hospital of the patient whose uniform draw is u: the
// first whose cumulative share exceeds u (the last when rounding leaves
// the shares' sum below u).
func (e Extract) hospital(u float64) Hospital {
	sum := 0.0
	for _, h := range e.Hospitals {
		sum += h.Share
		if u < sum {
			return h
		}
	}
	return e.Hospitals[len(e.Hospitals)-1]
}

// normal draws a standard normal value by the Box–Muller transform, so
// that the stream depends only on the generator's uint64 output.
func normal(r *rand.Rand) float64 {
	u1 := 1 - r.Float64() // (0, 1]
	u2 := r.Float64()
	return math.Sqrt(-2*math.Log(u1)) * math.Cos(2*math.Pi*u2)
}

func sq(x float64) float64 { return x * x }

func clamp(x, lo, hi float64) float64 { return math.Min(math.Max(x, lo), hi) }

func pick(c bool, a, b string) string {
	if c {
		return a
	}
	return b
}
