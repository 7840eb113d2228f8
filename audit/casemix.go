package audit

import (
	"fmt"

	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// caseMix compares the development data with the new cohort for a
// frozen model, spec, which reads the cohort as curSpec does (its
// outcome coding: cohortSpec). The frames read for the audit are
// reused; only the design matrices are built here.
func (c *Config) caseMix(spec, curSpec *model.Spec, devSc, curSc *scored, devPerf, perf *validate.Performance) (*validate.CaseMix, error) {
	side := func(spec *model.Spec, sc *scored) (validate.MixInput, error) {
		fr := sc.frame
		d, m, err := model.Build(spec, fr, model.Options{Outcome: true, FailOnMissing: c.FailOnMissing})
		if err != nil {
			return validate.MixInput{}, err
		}
		lp, err := d.FrozenLinearPredictors(m)
		if err != nil {
			return validate.MixInput{}, err
		}
		return validate.MixInput{Frame: fr, Rows: m.Rows, X: m.X, P: m.P, Y: m.Y, LP: lp, Terms: m.Terms}, nil
	}
	dev, err := side(spec, devSc)
	if err != nil {
		return nil, err
	}
	cur, err := side(curSpec, curSc)
	if err != nil {
		return nil, err
	}
	var cols []string
	for _, r := range spec.Columns(false) {
		cols = append(cols, r.Name)
	}
	// A membership model that cannot be fitted is reported inside the
	// comparison (MembershipNote), never as an error: the case-mix step
	// is optional evidence and does not stop the audit.
	cm, err := validate.CompareCaseMix(dev, cur, cols, devPerf, perf)
	if err != nil {
		return nil, fmt.Errorf("comparing case-mix: %w", err)
	}
	return cm, nil
}
