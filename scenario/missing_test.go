package scenario

import (
	"bytes"
	"math"
	"strconv"
	"testing"

	"github.com/riskaudit/riskaudit/validate"
)

func TestMissingStacked(t *testing.T) {
	ms := LaterMissing
	inc := parseTable(ms.Incomplete())
	st := parseTable(ms.Stacked())
	if len(st.rows) != ms.M*len(inc.rows) {
		t.Fatalf("%d stacked rows, want %d × %d", len(st.rows), ms.M, len(inc.rows))
	}
	if !bytes.Equal(ms.Stacked(), ms.Stacked()) {
		t.Fatal("two runs differ")
	}
	bmi, alb := inc.col("bmi"), inc.col("albumin")
	missing := 0
	for _, r := range inc.rows {
		if r[bmi] == "NA" || r[alb] == "NA" {
			missing++
		}
	}
	share := float64(missing) / float64(len(inc.rows))
	if share < 0.12 || share > 0.35 {
		t.Errorf("%.3f of the rows have a missing value, outside the intended 12%%–35%%", share)
	}
	// Every completed value is a number in range, observed values are
	// kept, and the imputations differ.
	sb, sa := st.col("bmi"), st.col("albumin")
	differ := 0
	n := len(inc.rows)
	for j := 0; j < ms.M; j++ {
		for i, r := range inc.rows {
			s := st.rows[j*n+i]
			if s[0] != strconv.Itoa(j+1) {
				t.Fatalf("row %d of imputation %d is numbered %s", i, j+1, s[0])
			}
			for _, c := range []struct{ in, out int }{{bmi, sb}, {alb, sa}} {
				v, err := strconv.ParseFloat(s[c.out], 64)
				if err != nil || v < 15 || v > 55 {
					t.Fatalf("imputation %d row %d: %q", j+1, i, s[c.out])
				}
				if r[c.in] != "NA" && r[c.in] != s[c.out] {
					t.Fatalf("observed value %s changed to %s", r[c.in], s[c.out])
				}
				if j > 0 && r[c.in] == "NA" && s[c.out] != st.rows[i][c.out] {
					differ++
				}
			}
		}
	}
	if differ == 0 {
		t.Error("no imputed value differs between imputations")
	}
	t.Logf("%d of %d rows incomplete; %d imputed values differ from imputation 1", missing, n, differ)
}

// risk is the generating model's risk of a row of an extract (the
// model the scenario draws its outcomes from, without drift), the model
// audited in the simulation below.
func risk(t table, row []string) float64 {
	f := func(c string) float64 {
		v, err := strconv.ParseFloat(row[t.col(c)], 64)
		if err != nil {
			panic("scenario: " + c + " " + row[t.col(c)])
		}
		return v
	}
	eta := -3.1 + 0.45*(f("age")-65)/10 + 0.004*sq(f("bmi")-26) - 0.06*(f("albumin")-40) + 0.75*math.Log(f("op_minutes")/120)
	if row[t.col("sex")] == "M" {
		eta += 0.3
	}
	switch row[t.col("smoker")] {
	case "former":
		eta += 0.25
	case "current":
		eta += 0.65
	}
	if row[t.col("lung_disease")] == "yes" {
		eta += 0.85
	}
	return 1 / (1 + math.Exp(-eta))
}

func measure(t *testing.T, tb table, rows [][]string) (*validate.Performance, []float64, []float64) {
	t.Helper()
	y, p := make([]float64, len(rows)), make([]float64, len(rows))
	for i, r := range rows {
		y[i] = ind(r[tb.col("ppc_30d")] == "yes")
		p[i] = risk(tb, r)
	}
	perf, err := validate.Assess(y, p, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return perf, y, p
}

// TestImputationBeatsCompleteCases simulates data missing at random: BMI
// and albumin go missing more often in older patients and in those with
// the outcome (Missing), and the generating model is audited three
// ways — on the full data before any value went missing, on the complete
// cases only, and on 5 imputations pooled by Rubin's rules
// (validate.PoolImputations). Since the outcome drives the missingness,
// the complete cases under-represent events and their O/E and
// calibration-in-the-large are biased; the pooled figures keep every
// patient and should lie closer to the full-data values, as the theory
// of multiple imputation under MAR says (Rubin 1987; Sterne et al. 2009,
// BMJ 338:b2393). The check is over 4 seeds, each on its own, and on
// average for the Brier score.
func TestImputationBeatsCompleteCases(t *testing.T) {
	if testing.Short() {
		t.Skip("a simulation")
	}
	var errPooledBrier, errCCBrier float64
	for _, seed := range []uint64{11, 12, 13, 14} {
		ex := Extract{Rows: 3000, Seed: seed, Start: "2026-01-01", Days: 365, Hospitals: []Hospital{{Name: "one", Share: 1}}}
		ms := Missing{Extract: ex, Share: 0.25, M: 5, Seed: seed + 100}
		full := parseTable(ex.CSV())
		fullPerf, _, _ := measure(t, full, full.rows)
		inc, r := ms.incomplete()
		var cc [][]string
		for _, row := range inc.rows {
			if row[inc.col("bmi")] != "NA" && row[inc.col("albumin")] != "NA" {
				cc = append(cc, row)
			}
		}
		ccPerf, _, _ := measure(t, inc, cc)
		var sets []validate.ImputedData
		for _, rows := range Impute(inc, ms.M, r) {
			perf, y, p := measure(t, inc, rows)
			sets = append(sets, validate.ImputedData{Y: y, P: p, Perf: perf})
		}
		im, _, err := validate.PoolImputations(sets, validate.ImputationOptions{})
		if err != nil {
			t.Fatal(err)
		}
		for _, m := range []struct {
			name             string
			full, cc, pooled float64
		}{
			{"O/E", fullPerf.Calibration.OE, ccPerf.Calibration.OE, im.Pooled.OE.Estimate},
			{"calibration-in-the-large", fullPerf.Calibration.CITL, ccPerf.Calibration.CITL, im.Pooled.CITL.Estimate},
		} {
			dp, dc := math.Abs(m.pooled-m.full), math.Abs(m.cc-m.full)
			t.Logf("seed %d %s: full %.4f, complete cases %.4f (%d of %d patients), pooled %.4f", seed, m.name, m.full, m.cc, len(cc), len(inc.rows), m.pooled)
			if !(dp < dc) {
				t.Errorf("seed %d %s: pooled %.4f is %.4f from the full-data %.4f, complete cases %.4f only %.4f", seed, m.name, m.pooled, dp, m.full, m.cc, dc)
			}
		}
		errPooledBrier += math.Abs(im.Pooled.Brier.Estimate - fullPerf.Overall.Brier)
		errCCBrier += math.Abs(ccPerf.Overall.Brier - fullPerf.Overall.Brier)
	}
	if !(errPooledBrier < errCCBrier) {
		t.Errorf("Brier score: pooled off the full-data value by %.5f in total, complete cases by only %.5f", errPooledBrier, errCCBrier)
	}
}
