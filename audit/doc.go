// Package audit runs riskaudit's pipelines as library calls: the audit of
// a model on a cohort (Run), the comparison of two models on one cohort
// (Compare), fitting a recipe into a frozen model (Fit), scoring data
// with a frozen model (Score), planning the sample size of a validation
// (PlanSize) and the trend of a history store (ReadTrend). The command
// line is one thin client of it; a monitoring service, a scheduled job
// written in Go or a test is another.
//
// The data flow of an audit is
//
//	Config → read and score (cohort, model) → measures (validate, metrics)
//	       → internal validation, percentile intervals (resample)
//	       → verdict, sample size, case-mix, updating, subgroups
//	       → figures (plots) → Result
//
// and writing is a step of its own: Write puts the report, audit.json,
// the figures and any further files in place all at once (or none of
// them), and RecordHistory appends the audit to a history store. Run
// itself writes nothing, prints nothing and sets no process-wide state
// unless Config.GCPercent asks it to.
//
// A Config names its inputs by path, or as frames already read
// (Input.Frame); its options are plain fields whose zero values give the
// command line's defaults, except where a field says otherwise.
// Progress is reported through the Progress interface (nil: silent), and
// a context cancels a run: a cancelled or expired ctx stops a bootstrap
// within one replicate per worker, and a file read within one chunk, and
// the run returns context.Cause(ctx) with nothing written.
//
// Errors keep their kinds: a *ConfigError for contradictory options
// (its message names the options by their command-line flags), the
// cohort package's *cohort.Error for data that cannot be read or used,
// the model package's *model.SpecError for a spec that cannot be used
// and its fit errors (such as *model.SeparationError) for a model that
// cannot be fitted; errors.As finds each through any wrapping.
package audit
