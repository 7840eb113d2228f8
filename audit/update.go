package audit

import (
	"context"
	"fmt"

	"github.com/riskaudit/riskaudit/internal/atomicfile"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/resample"
	"github.com/riskaudit/riskaudit/update"
	"github.com/riskaudit/riskaudit/validate"
)

// updateModel runs the closed testing procedure on the cohort, offers the
// chosen updated model as a file and estimates its performance by
// bootstrap. It reuses the cohort as read for the audit and builds its
// design matrix with curSpec, the model with the cohort's outcome coding
// (cohortSpec); the updated model names the outcome as spec, the parent,
// does, since it predicts the same outcome.
func (c *Config) updateModel(ctx context.Context, spec, curSpec *model.Spec, parent validate.ParentModel, cur *scored) (*validate.Update, atomicfile.File, error) {
	var none atomicfile.File
	d, m, err := model.Build(curSpec, cur.frame, model.Options{Outcome: true, FailOnMissing: c.FailOnMissing})
	if err != nil {
		return nil, none, err
	}
	beta, err := d.Coefficients()
	if err != nil {
		return nil, none, err
	}
	alpha := c.UpdateAlpha
	if alpha == 0 {
		alpha = 0.05
	}
	res, err := update.ClosedTest(m.X, m.N, m.P, m.Y, beta, alpha)
	if err != nil {
		return nil, none, &model.FitError{Msg: "updating the model: " + err.Error(), Err: err}
	}
	u := &validate.Update{Alpha: res.Alpha, Chosen: res.Chosen, ModelFile: c.Update, Parent: parent}
	for _, s := range res.Steps {
		u.Steps = append(u.Steps, validate.UpdateStep{Method: s.Method, Params: s.Params, Neg2LL: s.Neg2LL, AIC: s.AIC})
	}
	for _, t := range res.Tests {
		u.Tests = append(u.Tests, validate.UpdateTest{Simpler: t.Simpler, LRChi2: t.LRChi2, DF: t.DF, P: t.P, Rejected: t.Rejected})
	}
	if res.Chosen != update.Original && c.UpdateBootstrap > 0 {
		f := res.Fit
		br, err := resample.Optimism(ctx, resample.Problem{X: f.X, N: m.N, P: f.P, Y: m.Y, Coef: f.Coef, Offset: f.Offset},
			resample.Options{B: c.UpdateBootstrap, Seed: c.Seed, Workers: c.Workers})
		if err != nil {
			if ctx.Err() != nil {
				return nil, none, err
			}
			return nil, none, &model.FitError{Msg: "bootstrapping the update: " + err.Error(), Err: err}
		}
		m := internalMetrics(br)
		if res.Chosen == update.InTheLarge || res.Chosen == update.Recalibration {
			m.AUC = rankKept(m.AUC)
		}
		u.Expected = &m
		u.Bootstrap, u.Seed, u.Failed = br.B, br.Seed, br.Failed
	}
	of := "the model in " + parent.Path
	if parent.FittedInAudit {
		of = fmt.Sprintf("the model fitted from %s in the same audit (%s)", c.Model, parent.Path)
	}
	frozen := model.FreezeWith(d, res.Coef, model.Provenance{
		Method:   fmt.Sprintf("%s of %s on %s (closed testing, Vergouwe et al. 2017, α = %g)", res.Chosen, of, cur.file, res.Alpha),
		DataFile: cur.file, DataSHA256: cur.hash, RowsUsed: m.N, Events: m.Events(),
		FittedAt: now(c.Clock).Format(timeFormat), ToolVersion: c.Tool, ParentSHA256: parent.SHA256, ParentFile: parent.Path,
	})
	frozen.Outcome = spec.Outcome
	y, err := frozen.MarshalYAML()
	if err != nil {
		return nil, none, err
	}
	return u, atomicfile.File{Path: c.Update, Data: y}, nil
}

// rankKept is the AUC of an update that keeps (or, with a negative slope,
// reverses in every patient at once) the model's ranking of patients:
// recalibration in the large and logistic recalibration. Its optimism is
// exactly 0, since every refit in the bootstrap orders the patients as
// the model does, so the corrected AUC is the apparent one; the
// bootstrap's mean difference would be noise alone.
func rankKept(c validate.Corrected) validate.Corrected {
	return validate.Corrected{Apparent: c.Apparent, Optimism: 0, Corrected: c.Apparent}
}
