package audit

import (
	"bytes"
	"context"
	"fmt"

	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/resample"
	"github.com/riskaudit/riskaudit/validate"
)

// fitInside fits spec (a recipe, or a frozen model's terms) on the
// development data the audit read.
func (c *Config) fitInside(spec *model.Spec, dev Input) (*FitResult, error) {
	fc := FitConfig{Model: c.Model, Data: dev, FailOnMissing: c.FailOnMissing, Firth: c.Firth,
		HLGroups: c.Measures.HLGroups, Tool: c.Tool, Clock: c.Clock}
	return fitFrame(spec, nil, dev.Frame, dev.SHA256, fc, true)
}

// internalValidation runs the optimism bootstrap on the fitted recipe and
// returns its report and the files it offers (resample log, shrunken
// model).
func (c *Config) internalValidation(ctx context.Context, in *FitResult, prog Progress) (*validate.Internal, []atomicfile.File, error) {
	m := in.Fitted.Matrix
	var log bytes.Buffer
	opt := resample.Options{B: c.Bootstrap, Seed: c.Seed, Workers: c.Workers}
	if c.ResampleLog != "" {
		opt.Log = &log
	}
	opt.Progress = func(done int) { prog.Count("bootstrap", done, c.Bootstrap) }
	res, err := resample.Optimism(ctx, resample.Problem{X: m.X, N: m.N, P: m.P, Y: m.Y, Coef: in.Fitted.Result.Coef, Firth: c.Firth}, opt)
	if err != nil {
		if ctx.Err() != nil {
			return nil, nil, err
		}
		return nil, nil, &model.FitError{Msg: err.Error(), Err: err}
	}
	iv := &validate.Internal{
		Bootstrap: res.B, Seed: res.Seed, Failed: res.Failed, Reasons: res.Reasons, Refitted: in.Refitted, ICIDelta: res.ICIDelta,
		Shrinkage: res.Corrected.Slope, Metrics: internalMetrics(res),
	}
	if len(res.Reasons) == 0 {
		iv.Reasons = nil
	}
	if res.FailedShare() > 0.10 {
		iv.Warning = fmt.Sprintf("Warning: %d of %d replicates (%.0f%%) failed to fit and were left out; the corrected figures may be biased.",
			res.Failed, res.B, 100*res.FailedShare())
	}
	var files []atomicfile.File
	if c.ResampleLog != "" {
		files = append(files, atomicfile.File{Path: c.ResampleLog, Data: log.Bytes()})
	}
	if c.Shrunken != "" {
		spec, err := shrink(in, res.Corrected.Slope)
		if err != nil {
			return nil, nil, err
		}
		y, err := spec.MarshalYAML()
		if err != nil {
			return nil, nil, err
		}
		files = append(files, atomicfile.File{Path: c.Shrunken, Data: y})
		iv.ShrunkenModel = c.Shrunken
	}
	return iv, files, nil
}

// shrink multiplies every coefficient but the intercept by the factor and
// re-estimates the intercept with the shrunken linear predictor as an
// offset (Van Houwelingen & le Cessie 1990, Statistics in Medicine
// 9:1303–1325), so that the shrunken model is calibrated in the large on
// the development data.
func shrink(in *FitResult, factor float64) (*model.Spec, error) {
	m := in.Fitted.Matrix
	beta := append([]float64(nil), in.Fitted.Result.Coef...)
	for j := 1; j < len(beta); j++ {
		beta[j] *= factor
	}
	off := make([]float64, m.N)
	ones := make([]float64, m.N)
	for i := range off {
		x := m.X[i*m.P : (i+1)*m.P]
		for j := 1; j < m.P; j++ {
			off[i] += x[j] * beta[j]
		}
		ones[i] = 1
	}
	r, err := logistic.Fit(logistic.Data{X: ones, N: m.N, P: 1, Y: m.Y, Offset: off}, logistic.Options{})
	if err != nil {
		return nil, &model.FitError{Msg: "re-estimating the shrunken model's intercept: " + err.Error(), Err: err}
	}
	beta[0] = r.Coef[0]
	pv := *in.Frozen.Provenance
	pv.Method = fmt.Sprintf("%s, then uniform shrinkage by the bootstrap factor %.4f with the intercept re-estimated (Van Houwelingen & le Cessie 1990)", pv.Method, factor)
	return model.FreezeWith(in.Fitted.Design, beta, pv), nil
}

// internalMetrics lays a bootstrap result out as the audit reports it.
func internalMetrics(r *resample.Result) validate.InternalMetrics {
	c := func(ap, op, co float64) validate.Corrected {
		return validate.Corrected{Apparent: ap, Optimism: op, Corrected: co}
	}
	A, O, C := r.Apparent, r.Optimism, r.Corrected
	return validate.InternalMetrics{
		AUC: c(A.AUC, O.AUC, C.AUC), Slope: c(A.Slope, O.Slope, C.Slope), CITL: c(A.CITL, O.CITL, C.CITL),
		Brier: c(A.Brier, O.Brier, C.Brier), ScaledBrier: c(A.ScaledBrier, O.ScaledBrier, C.ScaledBrier),
		R2: c(A.R2, O.R2, C.R2), ICI: c(A.ICI, O.ICI, C.ICI),
	}
}
