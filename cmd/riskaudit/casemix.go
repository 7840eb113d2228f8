package main

import (
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// caseMix compares the development data with the new cohort for a
// frozen model.
func caseMix(o *auditOptions, spec *model.Spec, devPerf, perf *validate.Performance) (*validate.CaseMix, error) {
	copt, fail, err := o.data.options()
	if err != nil {
		return nil, err
	}
	copt.Rename = o.rename
	side := func(path string) (validate.MixInput, error) {
		fr, d, m, err := model.Load(spec, path, copt, model.Options{Outcome: true, FailOnMissing: fail})
		if err != nil {
			return validate.MixInput{}, err
		}
		beta, err := d.Coefficients()
		if err != nil {
			return validate.MixInput{}, err
		}
		return validate.MixInput{Frame: fr, Rows: m.Rows, X: m.X, P: m.P, Y: m.Y, LP: model.LinearPredictors(m, beta)}, nil
	}
	dev, err := side(o.devFile)
	if err != nil {
		return nil, err
	}
	cur, err := side(o.cohortFile)
	if err != nil {
		return nil, err
	}
	var cols []string
	for _, r := range spec.Columns(false) {
		cols = append(cols, r.Name)
	}
	cm, err := validate.CompareCaseMix(dev, cur, cols, devPerf, perf)
	if err != nil {
		return nil, &model.FitError{Msg: err.Error(), Err: err}
	}
	return cm, nil
}
