package audit

import (
	"context"
	"fmt"
	"os"
	"time"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/samplesize"
	"github.com/riskaudit/riskaudit/validate"
)

// Input is one dataset of an audit: a file to read, a Source such as a
// database query, or a frame already read.
type Input struct {
	// Path is the file to read. With Frame or Source it is only the name
	// the report and the provenance give the data (empty with Source:
	// the Source's Name).
	Path string
	// Source, when not nil, reads the data instead of a file (see
	// Source); the frame it returns carries the rows' SHA-256.
	Source Source
	// Frame, when not nil, is used as it is instead of reading Path; it
	// must hold every column the audit needs, of the kind it needs.
	Frame *cohort.Frame
	// SHA256 is the hex SHA-256 of the data. It is computed from Path
	// when Frame and Source are nil, and is the SHA-256 of the rows as
	// read with Source; with Frame it is the caller's (empty: unknown).
	SHA256 string
}

// given reports whether the input names any data.
func (in Input) given() bool { return in.Path != "" || in.Frame != nil || in.Source != nil }

// Source reads a dataset that is not a file: the rows of a database
// query (package pgcohort's *Query is one). Package audit knows nothing
// of databases, so that a program that reads only files does not link a
// database driver.
type Source interface {
	// Name is how messages, the report and the provenance name the data.
	Name() string
	// Load reads the requested columns as opt says (the options that
	// apply to it), stops when ctx is cancelled, and returns a frame
	// whose Query describes what was read, with the rows' SHA-256.
	Load(ctx context.Context, reqs []cohort.Request, opt cohort.Options) (*cohort.Frame, error)
}

// named is the input with the Source's name as its Path when it has
// none.
func (in Input) named() Input {
	if in.Source != nil && in.Path == "" && in.Frame == nil {
		in.Path = in.Source.Name()
	}
	return in
}

// Predicted names a column of risks that some model wrote into the
// cohort, audited instead of a model.
type Predicted struct {
	// Column holds the predicted risks, each in [0, 1].
	Column string
	// Outcome is the outcome column and Event the value that is an
	// event; with NonEvent, any value other than the two is an error.
	Outcome, Event, NonEvent string
	// Percent says that the column holds risks in percent (0 to 100),
	// which are divided by 100; without it a risk above 1 is an error.
	Percent bool
}

// Config names everything one audit needs. The zero values of the
// options give the command line's defaults, except where a field says
// otherwise.
type Config struct {
	// Model is the path of a frozen model, or of a recipe to fit on Dev
	// (YAML). Spec, when not nil, is that model already read, and Model
	// then only names it. Predicted audits a column of risks instead;
	// exactly one of Model (or Spec) and Predicted is given.
	Model     string
	Spec      *model.Spec
	Predicted *Predicted
	// Outcome, when it names anything, says how the cohort codes the
	// model's outcome (outcome.go); the development data are read with
	// the model's own codes.
	Outcome *CohortOutcome

	// Cohort is the data to audit; Dev the development data, measured
	// the same way beside it. Without Cohort a recipe audit describes
	// its development data.
	Cohort, Dev Input

	// Read says how to read the files (delimiter, decimal comma,
	// missing-value markers, renames, format); FailOnMissing makes a
	// missing value in a model column an error instead of leaving the row
	// out (complete-case analysis).
	Read          cohort.Options
	FailOnMissing bool

	// Measures are the options of every measure (thresholds, groups,
	// LOWESS span and δ, clamping). Its Development field is set by the
	// audit itself.
	Measures validate.Options

	// Bootstrap is the number of replicates of the internal validation
	// (0: none), drawn with Seed on Workers goroutines (0: all cores);
	// Firth fits the recipe and every refit by Firth's penalised
	// likelihood. ResampleLog and Shrunken, when set, are the paths at
	// which the result offers the replicates' rows and the shrunken
	// model (see Result.Files).
	Bootstrap   int
	Seed        uint64
	Workers     int
	Firth       bool
	ResampleLog string
	Shrunken    string

	// CIBootstrap is the number of replicates of the percentile intervals
	// on the cohort (0: none).
	CIBootstrap int

	// Criteria judge the audit; nil means validate.DefaultCriteria.
	Criteria []validate.Criterion

	// MissingCaution is the share of rows left out for missing values
	// above which the summary cautions that the complete-case analysis
	// may be biased (0: validate.DefaultMissingCaution, 5%).
	MissingCaution float64

	// SampleSize holds the sample-size check's target widths, threshold
	// and anticipated values; zero widths take samplesize's defaults.
	SampleSize samplesize.Request

	// Subgroups are categorical columns to measure the model in, level by
	// level; a subgroup with fewer than MinSubgroupEvents events or
	// non-events is reported as too small (0: the default of 20).
	Subgroups         []string
	MinSubgroupEvents int
	// Bands are numeric columns cut into subgroups at given points or at
	// the cohort's quantiles (validate.Banding), measured after the
	// categorical Subgroups, in the order given.
	Bands []validate.Banding
	// SubgroupCriteria says how subgroup checks count in the verdict:
	// validate.SubgroupReview (also ""), SubgroupFail or SubgroupIgnore.
	SubgroupCriteria string

	// Clusters asks for the validation across clusters (audit/clusters.go).
	Clusters ClusterConfig

	// Imputation audits a multiply imputed cohort (audit/imputed.go).
	Imputation ImputationConfig

	// Update, when set, updates the model on the cohort by closed testing
	// at level UpdateAlpha (0: 0.05) and offers the chosen model at this
	// path; its expected performance comes from UpdateBootstrap
	// replicates (0: none).
	Update          string
	UpdateAlpha     float64
	UpdateBootstrap int

	// OverTime, with a DateColumn, charts the cohort in date order
	// (overtime.go).
	OverTime OverTime

	// Tool names the program and its version for the provenance, and
	// CommandLine how it was called (the caller masks any secret in it);
	// Clock gives the time (nil: the current time in UTC).
	Tool        string
	CommandLine string
	Clock       func() time.Time

	// AuditDate is the date the cohort describes, YYYY-MM-DD (empty: the
	// day the audit started, by Clock), and AuditDateSource where it came
	// from, for the provenance: validate.DateFromFlag or DateFromPlan
	// (empty: validate.DateFromConfig).
	AuditDate, AuditDateSource string
	// Plan is the audit plan the Config was made from, recorded in the
	// provenance (nil: none).
	Plan *validate.PlanFile
	// Purpose is the model's purpose as the plan states it: each field it
	// gives replaces the spec's in the audit (validate.NewPurpose).
	Purpose model.Purpose
	// RenameSources says where each rename of Read.Rename came from
	// ("flag" or "plan"), by the column name in the file, for the
	// provenance; a rename without an entry is recorded as "config".
	RenameSources map[string]string
	// OutDir is the folder the result is to be written to (Write's dir),
	// used to name the files the audit puts into it (the model fitted
	// from a recipe) in the provenance and in an updated model's; empty:
	// they are named by their file name alone.
	OutDir string

	// GCPercent, when positive, is the garbage collector's target while a
	// cohort of LargeCohort rows or more is measured (the process-wide
	// setting, restored afterwards); the command line sets 25 unless the
	// environment sets GOGC.
	GCPercent int

	// Progress hears of each step; nil is silent.
	Progress Progress
}

// ConfigError is a Config that cannot be run as it is: contradictory or
// out-of-range options. Its message names the options by their
// command-line flags, which are the names riskaudit's users know.
type ConfigError struct {
	Msg string
	// Err is the refusal underneath, if any (such as an
	// *atomicfile.TargetError); Unwrap returns it.
	Err error
}

// Error returns the message.
func (e *ConfigError) Error() string { return e.Msg }

// Unwrap returns the refusal underneath.
func (e *ConfigError) Unwrap() error { return e.Err }

func configErrorf(format string, args ...any) error {
	return &ConfigError{Msg: fmt.Sprintf(format, args...)}
}

// model reports whether the audit has a model (rather than a column of
// risks).
func (c *Config) hasModel() bool { return c.Model != "" || c.Spec != nil }

// check refuses contradictory or out-of-range options.
func (c *Config) check() error {
	switch {
	case c.hasModel() && c.Predicted != nil:
		return configErrorf("give either --model (a frozen model or a recipe) or --predicted (a column of risks), not both")
	case !c.hasModel() && c.Predicted == nil:
		return configErrorf("give either --model (a frozen model or a recipe) or --predicted (a column of risks)")
	case c.Predicted != nil && (c.Predicted.Outcome == "" || c.Predicted.Event == ""):
		return configErrorf("--predicted needs --outcome and --event")
	case c.Predicted != nil && c.Predicted.Column == c.Predicted.Outcome:
		return configErrorf("--predicted and --outcome name the same column")
	case !c.hasCohort() && !c.Dev.given():
		return configErrorf("give the cohort to audit with --cohort (or, for a recipe, the development data with --dev)")
	case c.Bootstrap < 0 || c.CIBootstrap < 0:
		return configErrorf("--bootstrap and --ci-bootstrap take a number of replicates")
	case c.Bootstrap > 0 && !c.Dev.given():
		return configErrorf("--bootstrap resamples the development data: give it with --dev")
	case c.Bootstrap > 0 && c.Predicted != nil:
		return configErrorf("--bootstrap refits a model: give --model, not --predicted")
	case c.Bootstrap > 0 && c.Bootstrap < 10:
		return configErrorf("--bootstrap %d: give at least 10 replicates (200 or more is common practice)", c.Bootstrap)
	case c.CIBootstrap > 0 && c.CIBootstrap < 20:
		return configErrorf("--ci-bootstrap %d: give at least 20 replicates", c.CIBootstrap)
	case (c.Shrunken != "" || c.ResampleLog != "") && c.Bootstrap == 0:
		return configErrorf("--shrunken and --resample-log come from the bootstrap: add --bootstrap N")
	case !c.hasCohort() && c.Predicted != nil:
		return configErrorf("--predicted needs --cohort")
	case c.Update != "" && (c.Predicted != nil || !c.hasCohort()):
		return configErrorf("--update updates a model on the cohort: give --model and --cohort")
	}
	if c.AuditDate != "" {
		if err := CheckAuditDate(c.AuditDate); err != nil {
			return err
		}
	}
	if err := c.checkOutcome(); err != nil {
		return err
	}
	if err := c.checkClusterFiles(); err != nil {
		return err
	}
	if err := c.Clusters.check(); err != nil {
		return err
	}
	if err := validate.CheckSubgroupMode(c.SubgroupCriteria); err != nil {
		return configErrorf("--subgroup-criteria: %v", err)
	}
	for _, b := range c.Bands {
		if err := b.Check(); err != nil {
			return configErrorf("--subgroups %s: %v", cohort.Quote(b.String()), err)
		}
	}
	for _, out := range []string{c.Shrunken, c.ResampleLog, c.Update} {
		if err := CheckNotInput(out, append([]string{c.Model, c.Cohort.Path, c.Dev.Path}, c.clusterPaths()...)...); err != nil {
			return err
		}
	}
	return nil
}

// sizeRequest is the sample-size request with samplesize's default
// widths where the Config gives none.
func (c *Config) sizeRequest() samplesize.Request {
	s := c.SampleSize
	s.Targets = withDefaultTargets(s.Targets)
	return s
}

// withDefaultTargets replaces each zero width by samplesize's default.
func withDefaultTargets(t samplesize.Targets) samplesize.Targets {
	def := samplesize.DefaultTargets()
	for _, w := range []struct{ v, def *float64 }{
		{&t.OEWidth, &def.OEWidth}, {&t.SlopeWidth, &def.SlopeWidth}, {&t.CWidth, &def.CWidth}, {&t.NBWidth, &def.NBWidth}} {
		if *w.v == 0 {
			*w.v = *w.def
		}
	}
	return t
}

// now is the time by clock, or the current time in UTC when clock is
// nil.
func now(clock func() time.Time) time.Time {
	if clock != nil {
		return clock()
	}
	return time.Now().UTC()
}

// CheckNotInput refuses an output path that names one of the inputs
// (input files are never modified): a *ConfigError when out exists and
// is the same file as an input. An empty out or input is skipped.
func CheckNotInput(out string, inputs ...string) error {
	if out == "" {
		return nil
	}
	ost, err := os.Stat(out)
	if err != nil {
		return nil
	}
	for _, in := range inputs {
		if in == "" {
			continue
		}
		if ist, err := os.Stat(in); err == nil && os.SameFile(ost, ist) {
			return configErrorf("the output %s is the input %s: inputs are never overwritten; choose another output path", out, in)
		}
	}
	return nil
}
