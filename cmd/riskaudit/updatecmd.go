package main

import (
	"fmt"

	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/resample"
	"github.com/riskaudit/riskaudit/update"
	"github.com/riskaudit/riskaudit/validate"
)

// updateModel runs the closed testing procedure on the cohort, writes the
// chosen updated model (returned as an extra output) and estimates its
// performance by bootstrap.
// It reuses the cohort as read for the audit and builds its design matrix.
func updateModel(o *auditOptions, spec *model.Spec, cur *scored) (*validate.Update, []outFile, error) {
	_, fail, err := o.data.options()
	if err != nil {
		return nil, nil, err
	}
	cohortHash := cur.hash
	d, m, err := model.Build(spec, cur.frame, model.Options{Outcome: true, FailOnMissing: fail})
	if err != nil {
		return nil, nil, err
	}
	beta, err := d.Coefficients()
	if err != nil {
		return nil, nil, err
	}
	res, err := update.ClosedTest(m.X, m.N, m.P, m.Y, beta, o.updateAlpha)
	if err != nil {
		return nil, nil, &model.FitError{Msg: "updating the model: " + err.Error(), Err: err}
	}
	u := &validate.Update{Alpha: res.Alpha, Chosen: res.Chosen, ModelFile: o.update}
	for _, s := range res.Steps {
		u.Steps = append(u.Steps, validate.UpdateStep{Method: s.Method, Params: s.Params, Neg2LL: s.Neg2LL, AIC: s.AIC})
	}
	for _, t := range res.Tests {
		u.Tests = append(u.Tests, validate.UpdateTest{Simpler: t.Simpler, LRChi2: t.LRChi2, DF: t.DF, P: t.P, Rejected: t.Rejected})
	}
	if res.Chosen != update.Original && o.updateBootstrap > 0 {
		f := res.Fit
		br, err := resample.Optimism(resample.Problem{X: f.X, N: m.N, P: f.P, Y: m.Y, Coef: f.Coef, Offset: f.Offset},
			resample.Options{B: o.updateBootstrap, Seed: o.seed, Workers: o.workers})
		if err != nil {
			return nil, nil, &model.FitError{Msg: "bootstrapping the update: " + err.Error(), Err: err}
		}
		m := internalMetrics(br)
		u.Expected = &m
		u.Bootstrap, u.Seed, u.Failed = br.B, br.Seed, br.Failed
	}
	parent, err := fileSHA256(o.model)
	if err != nil {
		return nil, nil, err
	}
	frozen := model.FreezeWith(d, res.Coef, model.Provenance{
		Method:   fmt.Sprintf("%s of the model in %s on %s (closed testing, Vergouwe et al. 2017, α = %g)", res.Chosen, o.model, o.cohortFile, res.Alpha),
		DataFile: o.cohortFile, DataSHA256: cohortHash, RowsUsed: m.N, Events: m.Events(),
		FittedAt: now().Format("2006-01-02T15:04:05Z"), ToolVersion: "riskaudit " + toolVersion(), ParentSHA256: parent,
	})
	y, err := frozen.MarshalYAML()
	if err != nil {
		return nil, nil, err
	}
	return u, []outFile{{o.update, y}}, nil
}
