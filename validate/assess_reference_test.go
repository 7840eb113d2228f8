package validate

import (
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/internal/reftest"
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
		reftest.JSON(t, file, v)
	}
	y, cols := reftest.Predictions(t, "risk")
	perf, err := Assess(y, cols["risk"], Options{})
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
