package main

import (
	"bytes"
	"fmt"
	"time"

	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/resample"
	"github.com/riskaudit/riskaudit/validate"
)

// outFile is one more file for the audit's atomic write.
type outFile struct {
	path string
	data []byte
}

// inside is a recipe fitted on the development data within an audit.
type inside struct {
	fitted   *model.Fitted
	frozen   *model.Spec
	report   *fitReport
	refit    bool // a frozen model's terms were refitted
	internal *validate.Internal
	hash     string
}

// fitInside fits spec (a recipe, or a frozen model's terms) on the
// development data.
func fitInside(o *auditOptions, spec *model.Spec) (*inside, error) {
	copt, fail, err := o.data.options()
	if err != nil {
		return nil, err
	}
	copt.Rename = o.rename
	in := &inside{}
	recipe := spec
	if spec.Frozen() {
		recipe, in.refit = spec.AsRecipe(), true
	}
	_, d, m, err := model.Load(recipe, o.devFile, copt, model.Options{Outcome: true, FailOnMissing: fail})
	if err != nil {
		return nil, err
	}
	if in.fitted, err = model.Fit(d, m, model.FitOptions{Firth: o.firth, HLGroups: o.hlGroups}); err != nil {
		return nil, fmt.Errorf("fitting %s on %s: %w", o.model, o.devFile, err)
	}
	if in.hash, err = fileSHA256(o.devFile); err != nil {
		return nil, err
	}
	st := in.fitted.Stats
	in.frozen = in.fitted.Freeze(model.Provenance{
		Method: st.Method, DataFile: o.devFile, DataSHA256: in.hash, RowsUsed: m.N, Events: st.Events,
		FittedAt: now().Format("2006-01-02T15:04:05Z"), ToolVersion: "riskaudit " + toolVersion(), RecipeFile: o.model,
	})
	in.report = &fitReport{Schema: "riskaudit.fit/1", Model: recipe.Name, DataFile: o.devFile, DataSHA256: in.hash, FitStats: st}
	return in, nil
}

// internalValidation runs the optimism bootstrap on the fitted recipe and
// returns the extra files it writes (resample log, shrunken model).
func internalValidation(o *auditOptions, s *streams, in *inside, prog *progress) ([]outFile, error) {
	m := in.fitted.Matrix
	var log bytes.Buffer
	opt := resample.Options{B: o.bootstrap, Seed: o.seed, Workers: o.workers}
	if o.resampleLog != "" {
		opt.Log = &log
	}
	start := time.Now()
	opt.Progress = func(done int) { prog.count("bootstrap", done, o.bootstrap, start) }
	res, err := resample.Optimism(resample.Problem{X: m.X, N: m.N, P: m.P, Y: m.Y, Coef: in.fitted.Result.Coef, Firth: o.firth}, opt)
	if err != nil {
		return nil, &model.FitError{Msg: err.Error(), Err: err}
	}
	iv := &validate.Internal{
		Bootstrap: res.B, Seed: res.Seed, Failed: res.Failed, Reasons: res.Reasons, Refitted: in.refit, ICIDelta: res.ICIDelta,
		Shrinkage: res.Corrected.Slope, Metrics: internalMetrics(res),
	}
	if len(res.Reasons) == 0 {
		iv.Reasons = nil
	}
	if res.FailedShare() > 0.10 {
		iv.Warning = fmt.Sprintf("Warning: %d of %d replicates (%.0f%%) failed to fit and were left out; the corrected figures may be biased.",
			res.Failed, res.B, 100*res.FailedShare())
	}
	in.internal = iv
	var extra []outFile
	if o.resampleLog != "" {
		extra = append(extra, outFile{o.resampleLog, log.Bytes()})
	}
	if o.shrunken != "" {
		spec, err := shrink(in, res.Corrected.Slope)
		if err != nil {
			return nil, err
		}
		y, err := spec.MarshalYAML()
		if err != nil {
			return nil, err
		}
		extra = append(extra, outFile{o.shrunken, y})
		iv.ShrunkenModel = o.shrunken
	}
	return extra, nil
}

// shrink multiplies every coefficient but the intercept by the factor and
// re-estimates the intercept with the shrunken linear predictor as an
// offset (Van Houwelingen & le Cessie 1990, Statistics in Medicine
// 9:1303–1325), so that the shrunken model is calibrated in the large on
// the development data.
func shrink(in *inside, factor float64) (*model.Spec, error) {
	m := in.fitted.Matrix
	beta := append([]float64(nil), in.fitted.Result.Coef...)
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
	pv := *in.frozen.Provenance
	pv.Method = fmt.Sprintf("%s, then uniform shrinkage by the bootstrap factor %.4f with the intercept re-estimated (Van Houwelingen & le Cessie 1990)", pv.Method, factor)
	return model.FreezeWith(in.fitted.Design, beta, pv), nil
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
