package validate

import (
	"math"
	"strconv"
	"testing"

	"github.com/riskaudit/riskaudit/internal/reftest"
)

// TestCalibrationBandMatchesTranscription: the flexible calibration
// curve's pointwise band against testdata/reference/extra.json, where
// numpy solves the local weighted least squares at every point, takes
// Σl² from the smoother weights e₁'(X'WX)⁻¹X'W and forms fit ± 1.96·SE
// (Cleveland & Devlin 1988, §3); the curve clips the fit to [0, 1] and
// then each end of the band, as its doc comment says.
func TestCalibrationBandMatchesTranscription(t *testing.T) {
	var r struct {
		Band struct{ X, Fit, SE []float64 } `json:"lowess_band"`
	}
	reftest.JSON(t, "extra.json", &r)
	y, cols := reftest.Predictions(t, "risk")
	perf, err := Assess(y, cols["risk"], Options{})
	if err != nil {
		t.Fatal(err)
	}
	at := map[float64]int{}
	for i, x := range r.Band.X {
		at[x] = i
	}
	clip := func(v float64) float64 { return math.Min(math.Max(v, 0), 1) }
	checked := 0
	for _, pt := range perf.Curves.Flexible {
		// The reference rounds x to 12 significant digits.
		i, ok := at[roundTo12(pt.Predicted)]
		if !ok {
			continue
		}
		checked++
		f := clip(r.Band.Fit[i])
		for _, c := range []struct {
			what      string
			got, want float64
		}{
			{"smoothed observed risk", pt.Observed, f},
			{"band lower, fit − 1.96·SE", pt.Lower, clip(f - 1.959963984540054*r.Band.SE[i])},
			{"band upper, fit + 1.96·SE", pt.Upper, clip(f + 1.959963984540054*r.Band.SE[i])},
		} {
			if math.Abs(c.got-c.want) > 1e-8 {
				t.Errorf("at predicted %.6g: %s %.12g, numpy %.12g", pt.Predicted, c.what, c.got, c.want)
			}
		}
	}
	if checked < 100 {
		t.Fatalf("only %d curve points found in the reference", checked)
	}
}

// roundTo12 rounds v to 12 significant digits, as the reference does.
func roundTo12(v float64) float64 {
	r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 12, 64), 64)
	return r
}
