package resample

import (
	"bytes"
	"context"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/metrics"
)

// TestFirthBootstrapRefits: the optimism bootstrap of a Firth recipe.
// Every replicate named in the resample log is refitted here by Firth on
// its drawn rows repeated (the unweighted path, pinned to the numpy
// transcription of fits.json through model's Firth tests), and the
// optimism of the calibration slope, mean(slope on the sample − slope on the
// original rows; its slope on the sample is measured too, since a
// penalised fit's is not 1), and of the Brier score, mean(Brier on the sample −
// Brier on the original rows), are computed from that alone; a bootstrap
// that refitted by maximum likelihood would differ, as the check at the
// end makes sure.
func TestFirthBootstrapRefits(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	n, p := 80, 2
	pr := Problem{N: n, P: p, X: make([]float64, n*p), Y: make([]float64, n), Firth: true}
	for i := 0; i < n; i++ {
		x := r.NormFloat64()
		pr.X[i*p], pr.X[i*p+1] = 1, x
		if r.Float64() < logistic.Expit(-1+2.5*x) {
			pr.Y[i] = 1
		}
	}
	fit, err := logistic.Fit(logistic.Data{X: pr.X, N: n, P: p, Y: pr.Y}, logistic.Options{Firth: true})
	if err != nil {
		t.Fatal(err)
	}
	pr.Coef = fit.Coef
	var log bytes.Buffer
	res, err := Optimism(context.Background(), pr, Options{B: 12, Seed: 5, Log: &log})
	if err != nil {
		t.Fatal(err)
	}
	if res.Failed != 0 {
		t.Fatalf("%d replicates failed", res.Failed)
	}
	brier := func(y, p []float64) float64 {
		s := 0.0
		for i := range y {
			s += (p[i] - y[i]) * (p[i] - y[i])
		}
		return s / float64(len(y))
	}
	risks := func(x []float64, rows int, beta []float64) []float64 {
		out := make([]float64, rows)
		for i := range out {
			out[i] = logistic.Expit(x[i*p]*beta[0] + x[i*p+1]*beta[1])
		}
		return out
	}
	var slopeOpt, brierOpt, mlSlopeOpt float64
	lines := strings.Split(strings.TrimSpace(log.String()), "\n")
	if len(lines) != res.B {
		t.Fatalf("%d log lines for %d replicates", len(lines), res.B)
	}
	for _, line := range lines {
		var d logistic.Data
		d.P = p
		for _, f := range strings.Split(line, ",") {
			i, err := strconv.Atoi(f)
			if err != nil {
				t.Fatalf("log line %q: %v", line, err)
			}
			d.X = append(d.X, pr.X[i*p:i*p+p]...)
			d.Y = append(d.Y, pr.Y[i])
			d.N++
		}
		for _, firth := range []bool{true, false} {
			f, err := logistic.Fit(d, logistic.Options{Firth: firth})
			if err != nil {
				t.Fatal(err)
			}
			lp := make([]float64, n)
			for i := range lp {
				lp[i] = pr.X[i*p]*f.Coef[0] + pr.X[i*p+1]*f.Coef[1]
			}
			slope, _, err := metrics.CalibrationSlope(pr.Y, lp)
			if err != nil {
				t.Fatal(err)
			}
			// A Firth fit's slope on its own sample is not exactly 1:
			// it is measured there too.
			lps := make([]float64, d.N)
			for i := range lps {
				lps[i] = d.X[i*p]*f.Coef[0] + d.X[i*p+1]*f.Coef[1]
			}
			app, _, err := metrics.CalibrationSlope(d.Y, lps)
			if err != nil {
				t.Fatal(err)
			}
			if !firth {
				mlSlopeOpt += (1 - slope.Value) / float64(res.B)
				continue
			}
			slopeOpt += (app.Value - slope.Value) / float64(res.B)
			brierOpt += (brier(d.Y, risks(d.X, d.N, f.Coef)) - brier(pr.Y, risks(pr.X, n, f.Coef))) / float64(res.B)
		}
	}
	if math.Abs(res.Optimism.Slope-slopeOpt) > 1e-7 {
		t.Errorf("slope optimism %.10g, Firth refits by hand %.10g", res.Optimism.Slope, slopeOpt)
	}
	if math.Abs(res.Optimism.Brier-brierOpt) > 1e-9 {
		t.Errorf("Brier optimism %.10g, Firth refits by hand %.10g", res.Optimism.Brier, brierOpt)
	}
	// The corrected figure is the apparent one less the optimism (Efron
	// 1983; Harrell, Lee & Mark 1996), the apparent one measured here on
	// the original rows with the full Firth fit.
	lpFull := make([]float64, n)
	for i := range lpFull {
		lpFull[i] = pr.X[i*p]*fit.Coef[0] + pr.X[i*p+1]*fit.Coef[1]
	}
	appSlope, _, err := metrics.CalibrationSlope(pr.Y, lpFull)
	if err != nil {
		t.Fatal(err)
	}
	appBrier := brier(pr.Y, risks(pr.X, n, fit.Coef))
	if math.Abs(res.Apparent.Slope-appSlope.Value) > 1e-7 || math.Abs(res.Corrected.Slope-(appSlope.Value-slopeOpt)) > 1e-7 {
		t.Errorf("slope apparent %.10g corrected %.10g; by hand %.10g and %.10g", res.Apparent.Slope, res.Corrected.Slope, appSlope.Value, appSlope.Value-slopeOpt)
	}
	if math.Abs(res.Corrected.Brier-(appBrier-brierOpt)) > 1e-9 {
		t.Errorf("Brier corrected %.10g; by hand %.10g", res.Corrected.Brier, appBrier-brierOpt)
	}
	if math.Abs(mlSlopeOpt-slopeOpt) < 1e-4 {
		t.Errorf("Firth and ML refits give slope optimism %g and %g: too close for the test to tell them apart", slopeOpt, mlSlopeOpt)
	}
}
