package validate

import (
	"encoding/json"
	"math"
	"os"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
)

// TestAssessIntervalsMatchReferences: the intervals Assess reports, on
// the Wisconsin risks of audit_predictions.csv, against outside values:
// the Wald intervals of calibration-in-the-large and the calibration
// slope from statsmodels GLM conf_int (oe.json "wald"), the O/E interval
// with scipy's binomial variance (oe.json "oe"), the AUC's logit-scale
// interval from the numpy transcription (extra.json), the AUC with its
// DeLong SE from scikit-learn and the quadratic transcription
// (audit.json) and its interval with z from scipy (oe.json "auc_ci"). The metrics package checks each measure's function; this
// checks that Assess puts each interval beside its own measure.
func TestAssessIntervalsMatchReferences(t *testing.T) {
	var oe struct {
		OE struct {
			Ratio float64    `json:"oe"`
			CI    [2]float64 `json:"ci"`
		} `json:"oe"`
		AUCCI [2]float64 `json:"auc_ci"`
		Wald  struct {
			CITL    float64    `json:"citl"`
			CITLCI  [2]float64 `json:"citl_ci"`
			Slope   float64    `json:"slope"`
			SlopeCI [2]float64 `json:"slope_ci"`
		} `json:"wald"`
	}
	var extra struct {
		AUCLogitCI [2]float64 `json:"auc_logit_ci"`
	}
	var audit struct {
		W struct {
			AUC   float64 `json:"auc_sklearn"`
			AUCSE float64 `json:"auc_se_delong_quadratic"`
		} `json:"wdbc"`
	}
	for file, v := range map[string]any{"oe.json": &oe, "extra.json": &extra, "audit.json": &audit} {
		b, err := os.ReadFile("../testdata/reference/" + file)
		if err != nil {
			t.Fatal(err)
		}
		if err := json.Unmarshal(b, v); err != nil {
			t.Fatal(err)
		}
	}
	fr, err := cohort.Load("../testdata/reference/audit_predictions.csv",
		[]cohort.Request{{Name: "diagnosis", Kind: cohort.Categorical}, {Name: "risk", Kind: cohort.Numeric}}, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	d := fr.Column("diagnosis")
	y := make([]float64, fr.Rows)
	for i, c := range d.Codes {
		if d.Levels[c] == "M" {
			y[i] = 1
		}
	}
	perf, err := Assess(y, fr.Column("risk").Num, Options{})
	if err != nil {
		t.Fatal(err)
	}
	c, di := perf.Calibration, perf.Discrimination
	for _, k := range []struct {
		what      string
		got, want float64
		rel       float64
	}{
		{"CITL vs statsmodels", c.CITL, oe.Wald.CITL, 1e-7},
		{"CITL CI lower vs statsmodels conf_int", c.CITLCI[0], oe.Wald.CITLCI[0], 1e-7},
		{"CITL CI upper vs statsmodels conf_int", c.CITLCI[1], oe.Wald.CITLCI[1], 1e-7},
		{"slope vs statsmodels", c.Slope, oe.Wald.Slope, 1e-7},
		{"slope CI lower vs statsmodels conf_int", c.SlopeCI[0], oe.Wald.SlopeCI[0], 1e-7},
		{"slope CI upper vs statsmodels conf_int", c.SlopeCI[1], oe.Wald.SlopeCI[1], 1e-7},
		{"O/E vs numpy", c.OE, oe.OE.Ratio, 1e-10},
		{"O/E CI lower vs scipy", c.OECI[0], oe.OE.CI[0], 1e-10},
		{"O/E CI upper vs scipy", c.OECI[1], oe.OE.CI[1], 1e-10},
		{"AUC vs scikit-learn", di.AUC, audit.W.AUC, 1e-10},
		{"AUC SE vs quadratic DeLong", di.SE, audit.W.AUCSE, 1e-9},
		{"AUC CI lower vs scipy", di.CI[0], oe.AUCCI[0], 1e-9},
		{"AUC CI upper vs scipy", di.CI[1], oe.AUCCI[1], 1e-9},
		{"AUC logit CI lower vs numpy", di.LogitCI[0], extra.AUCLogitCI[0], 1e-9},
		{"AUC logit CI upper vs numpy", di.LogitCI[1], extra.AUCLogitCI[1], 1e-9},
	} {
		if math.Abs(k.got-k.want) > k.rel*math.Max(math.Abs(k.want), 1e-3) {
			t.Errorf("%s: %.12g, reference %.12g", k.what, k.got, k.want)
		}
	}
}
