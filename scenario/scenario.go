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
}

// Development is the extract the demo model is fitted to.
var Development = Extract{Rows: 4000, Seed: 20240101, MissingRate: 0.02}

// Later is an extract two years on, in which the patients are older and
// complications more common at every level of risk (say a change in how
// complications are recorded): the model should still rank patients well
// but under-predict their risk.
var Later = Extract{Rows: 3000, Seed: 20260101, AgeShift: 5, EventShift: 0.35, MissingRate: 0.03}

// CSV returns the extract as CSV text with a header row.
func (e Extract) CSV() []byte {
	r := rand.New(rand.NewPCG(e.Seed, 0x0b57b00c))
	var b bytes.Buffer
	b.WriteString("patient_ref,age,sex,bmi,smoker,albumin,op_minutes,lung_disease,ppc_30d\n")
	buf := make([]byte, 0, 32)
	for i := 0; i < e.Rows; i++ {
		age := clamp(math.Round(64+e.AgeShift+11*normal(r)), 18, 97)
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
		eta := -3.1 + e.EventShift + 0.45*(age-65)/10 + 0.004*sq(bmi-26) - 0.06*(alb-40) +
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
		fmt.Fprintf(&b, ",%g,%s,%s\n", mins, pick(lung, "yes", "no"), pick(event, "yes", "no"))
	}
	return b.Bytes()
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
