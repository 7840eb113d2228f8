package audit

import (
	"strconv"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// CohortOutcome says how the audited cohort codes a frozen model's
// outcome when the extract does not use the model's own codes (a model
// whose event is "yes" on a registry extract coded 1/0): the command
// line's --outcome, --event and --non-event given with --model, or the
// plan's outcome, event and non_event. The model, its file's SHA-256 and
// its coefficients are unchanged; only the reading of the cohort's
// outcome column is. Each empty field keeps the model's own.
type CohortOutcome struct {
	// Column is the cohort's outcome column (empty: the model's).
	Column string
	// Event is the cohort's event value (empty: the model's). An Event
	// given without NonEvent makes every other value a non-event, as a
	// model without non_event does.
	Event string
	// NonEvent is the cohort's non-event value (empty: the model's when
	// Event is empty too, otherwise none: every value but the event).
	NonEvent string
}

// given reports whether the override names anything.
func (o *CohortOutcome) given() bool {
	return o != nil && (o.Column != "" || o.Event != "" || o.NonEvent != "")
}

// checkOutcome refuses an override that cannot apply: one with a column
// of risks, one without a cohort to apply to (the development data are
// always read with the model's own codes), and one whose event and
// non-event are the same value.
func (c *Config) checkOutcome() error {
	o := c.Outcome
	switch {
	case !o.given():
		return nil
	case c.Predicted != nil:
		return configErrorf("the cohort's outcome coding goes with --model; with --predicted, --outcome and --event name the outcome themselves")
	case !c.hasCohort():
		return configErrorf("--outcome, --event and --non-event with --model say how the cohort (--cohort) codes the model's outcome, and no cohort is given: the development data (--dev) are read with the model's own codes")
	}
	return o.check()
}

// check refuses an event and a non-event that are the same value.
func (o *CohortOutcome) check() error {
	if o.Event != "" && o.Event == o.NonEvent {
		return configErrorf("--event and --non-event are the same value %s", cohort.Quote(o.Event))
	}
	return nil
}

// outcomeValue reads a value given on the command line as a spec's
// outcome value: text, and a number when it reads as one (so that event
// 1 matches 1.0).
func outcomeValue(s string) model.Value {
	f, err := strconv.ParseFloat(s, 64)
	return model.Value{Text: s, Num: f, IsNum: err == nil}
}

// recoded returns spec with its outcome read as o says, or spec itself
// when o names nothing. The copy shares everything else with spec (its
// file, provenance and coefficients), so it scores the same risks; an
// outcome column that is one of the model's predictors is a
// *ConfigError.
func recoded(spec *model.Spec, o *CohortOutcome) (*model.Spec, error) {
	if !o.given() {
		return spec, nil
	}
	out := spec.Outcome
	if o.Column != "" {
		out.Column = o.Column
	}
	switch {
	case o.Event != "":
		out.Event, out.NonEvent = outcomeValue(o.Event), nil
		if o.NonEvent != "" {
			ne := outcomeValue(o.NonEvent)
			out.NonEvent = &ne
		}
	case o.NonEvent != "":
		ne := outcomeValue(o.NonEvent)
		out.NonEvent = &ne
	}
	if out.NonEvent != nil && out.NonEvent.Text == out.Event.Text {
		return nil, configErrorf("--non-event %s is the model's event value", cohort.Quote(out.NonEvent.Text))
	}
	for _, pr := range spec.Predictors {
		if pr.Column == out.Column {
			return nil, configErrorf("--outcome %s is a predictor of the model %s", cohort.Quote(out.Column), spec.File)
		}
	}
	s := *spec
	s.Outcome = out
	return &s, nil
}

// cohortSpec is the spec that reads the audited cohort: the model with
// the cohort's outcome coding (Config.Outcome) when one is given.
func (r *run) cohortSpec() *model.Spec {
	if r.cspec != nil {
		return r.cspec
	}
	return r.spec
}

// recode makes the cohort's spec from the model: after the model is
// read, and again after a recipe is fitted, since the spec audited then
// changes.
func (r *run) recode() error {
	s, err := recoded(r.spec, r.cfg.Outcome)
	if err != nil {
		return err
	}
	r.cspec = s
	return nil
}

// outcomeInfo describes the cohort's outcome coding for the report, or
// is nil when the cohort uses the model's own.
func outcomeInfo(model, cohortSpec *model.Spec) *validate.CohortOutcome {
	if model == cohortSpec {
		return nil
	}
	o := cohortSpec.Outcome
	info := &validate.CohortOutcome{Column: o.Column, Event: o.Event.Text, ModelColumn: model.Outcome.Column, ModelEvent: model.Outcome.Event.Text}
	if o.NonEvent != nil {
		info.NonEvent = o.NonEvent.Text
	}
	if ne := model.Outcome.NonEvent; ne != nil {
		info.ModelNonEvent = ne.Text
	}
	return info
}
