// Package plan reads audit plans: YAML files that name everything a
// scheduled audit needs (model, data, outcome, column renames, subgroups,
// acceptance criteria, bootstrap settings, outputs), so that the same
// audit can be re-run on every fresh extract. Unknown keys are errors
// with their line; relative paths are taken from the plan's folder.
//
// Every problem in a plan is an *Error with the file and line, built as
// encoding/csv builds its ParseError: Kind is one of the sentinel errors
// ErrRead, ErrSyntax, ErrUnknownKey, ErrDuplicateKey, ErrValue,
// ErrConflict and ErrCriterion, which errors.Is matches through the
// Error's Is method, and Err keeps the error underneath (the
// *fs.PathError of a plan that cannot be read, strconv's, validate's or
// samplesize's error), which Unwrap returns. The message does not depend
// on either.
package plan

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"time"

	"go.yaml.in/yaml/v3"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/pathtext"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/samplesize"
	"github.com/riskaudit/riskaudit/validate"
)

// The kinds of problems in a plan, the values of Error.Kind. Each *Error
// this package returns has exactly one of them.
var (
	// ErrRead is a plan file that cannot be read; Err holds the
	// operating system's error.
	ErrRead = errors.New("plan: cannot read the plan file")
	// ErrSyntax is a plan file that is empty, is not valid YAML (Err
	// holds the parser's error), holds a second document, has an alias
	// inside its own value or aliases that expand it too far, or is not
	// a mapping of keys.
	ErrSyntax = errors.New("plan: not a YAML plan")
	// ErrUnknownKey is a key the plan's schema does not have where it
	// stands, a merge key (<<) or a key that is a mapping or a list.
	ErrUnknownKey = errors.New("plan: unknown key")
	// ErrDuplicateKey is a key given twice in one mapping (a column
	// renamed twice included).
	ErrDuplicateKey = errors.New("plan: duplicate key")
	// ErrValue is a value of the wrong type or outside its range, such as
	// a number that does not read as one (Err holds strconv's error), an
	// audit_date that is not a calendar date (Err holds time's error) or
	// a rename to an empty name or of two names to one.
	ErrValue = errors.New("plan: bad value")
	// ErrConflict is keys or values that do not go together in
	// sample_size.anticipated, such as an event proportion and a
	// C-statistic that no normal linear predictor has (Err holds
	// package samplesize's error).
	ErrConflict = errors.New("plan: conflicting keys")
	// ErrCriterion is an acceptance criterion that package validate
	// refuses; Err holds validate's error.
	ErrCriterion = errors.New("plan: bad criterion")
)

// Error is a problem in a plan file.
type Error struct {
	File string
	Line int
	Msg  string
	// Kind is the kind of problem, one of the sentinel errors above, or
	// nil for an error of no listed kind; errors.Is(err, Kind) holds.
	Kind error
	// Err is the underlying error, or nil; Unwrap returns it.
	Err error
}

// Error gives the plan file, the line when known, and the message.
func (e *Error) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s: line %d: %s", pathtext.Path(e.File), e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", pathtext.Path(e.File), e.Msg)
}

// Unwrap returns the underlying error, Err.
func (e *Error) Unwrap() error { return e.Err }

// Is reports whether target is the error's kind.
func (e *Error) Is(target error) bool { return e.Kind != nil && target == e.Kind }

// Data says how to read the plan's files.
type Data struct {
	Delimiter    string
	DecimalComma bool
	Missing      string
	NAValues     []string
	HasNAValues  bool
	// Sheet is the worksheet read from Excel workbooks (data.sheet).
	Sheet string
}

// Plan is an audit plan. Paths are absolute or relative to the working
// folder (resolved from the plan's folder when read). A field is set
// when Set[key] is true.
type Plan struct {
	File string
	// Name is the plan's name (its name key), and SHA256 the hex SHA-256
	// of the bytes it was read from, for the audit's provenance.
	Name, SHA256 string
	// Purpose is the purpose the plan states for the audited model (its
	// purpose section); the audit lets each field it gives replace the
	// model spec's.
	Purpose model.Purpose

	Model, Predicted, Outcome, Event, NonEvent string
	PredictedPercent                           bool
	Dev, Cohort, Out, History, AuditDate       string
	Rename                                     map[string]string
	Subgroups                                  []string
	MinSubgroupEvents                          int
	// Bands are the numeric subgroup columns of subgroups, each cut at
	// given points or at quantiles; SubgroupCriteria how subgroup checks
	// count in the verdict (review, fail or ignore).
	Bands            []validate.Banding
	SubgroupCriteria string
	// Cluster is the cluster column and Clusters the options of the
	// validation across clusters (plan/clusters.go).
	Cluster  string
	Clusters Clusters
	// Imputation is a multiply imputed cohort (plan/imputation.go).
	Imputation Imputation
	// ClusterFiles are the cohort's files, each one cluster, in place of
	// cohort and cluster (plan/clusterfiles.go).
	ClusterFiles []ClusterFile
	// DateColumn charts the cohort in date order (audit --date-column);
	// Periods is "month", "quarter" or a number of patients a block.
	DateColumn, Periods string
	Criteria            []validate.Criterion
	Bootstrap           int
	Seed                uint64
	CIBootstrap         int
	Thresholds          string
	ClassifyAt          string
	NetBenefitMinGain   float64
	Data                Data
	// SampleSize is the sample_size section.
	SampleSize samplesize.Request
	// DB is the database connection of the queries (db), Queries the
	// cohort's and the development data's queries by role ("cohort",
	// "dev"), Params the values of their @name placeholders (params).
	DB      string
	Queries map[string]Query
	Params  map[string]string

	// Set records the keys the plan gave, by their plan name, and Lines
	// the line of each top-level key.
	Set   map[string]bool
	Lines map[string]int
	// CriteriaLines is the line of each of Criteria.
	CriteriaLines []int
}

// FileKeys are the plan's keys that name a file read by the audit.
var FileKeys = []string{"model", "dev", "cohort"}

// CheckFile checks that the file the plan names under key (one of
// FileKeys, or history: a store that may not exist yet but whose folder
// must) can be read, and says which key and line named it when it
// cannot. A key the plan does not set is not checked.
func (pl *Plan) CheckFile(key string) error {
	path := map[string]string{"model": pl.Model, "dev": pl.Dev, "cohort": pl.Cohort, "history": pl.History}[key]
	if !pl.Set[key] || path == "" {
		return nil
	}
	fail := func(kind error, format string, args ...any) error {
		return &Error{File: pl.File, Line: pl.Lines[key], Msg: key + ": " + fmt.Sprintf(format, args...), Kind: kind}
	}
	if key == "history" {
		dir := filepath.Dir(path)
		if fi, err := os.Stat(dir); err != nil || !fi.IsDir() {
			return fail(ErrRead, "%s: the folder %s does not exist", path, dir)
		}
		return nil
	}
	fi, err := os.Stat(path)
	switch {
	case err != nil:
		msg := err.Error()
		if pe, ok := err.(*os.PathError); ok {
			msg = pe.Err.Error()
		}
		return fail(ErrRead, "%s: %s", path, msg)
	case fi.IsDir():
		return fail(ErrRead, "%s is a folder, not a file", path)
	}
	f, err := os.Open(path)
	if err != nil {
		return fail(ErrRead, "%s: cannot be read: %v", path, errors.Unwrap(err))
	}
	return f.Close()
}

var topKeys = []string{"name", "model", "predicted", "predicted_percent", "outcome", "event", "non_event", "dev", "cohort", "out", "history",
	"audit_date", "rename", "subgroups", "min_subgroup_events", "subgroup_criteria", "criteria", "bootstrap", "ci_bootstrap",
	"thresholds", "classify_at", "net_benefit_min_gain", "data", "sample_size", "purpose",
	"db", "cohort_query", "cohort_query_file", "dev_query", "dev_query_file", "params",
	"cluster", "clusters", "date_column", "periods", "imputation_column", "imputed", "cluster_files"}

// Load reads the plan at path.
func Load(path string) (*Plan, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		msg := err.Error()
		if pe, ok := err.(*os.PathError); ok {
			msg = pe.Err.Error()
		}
		return nil, &Error{File: path, Msg: "cannot read file: " + msg, Kind: ErrRead, Err: err}
	}
	return Parse(path, b)
}

// Parse reads a plan from data, the contents of the file named name.
func Parse(name string, data []byte) (*Plan, error) {
	p := &parser{file: name}
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, p.errf(ErrSyntax, nil, "file is empty")
	}
	doc, prob := model.ReadYAML(data)
	if prob != nil {
		kind := ErrSyntax
		if prob.Kind == model.YAMLKey {
			kind = ErrUnknownKey
		}
		return nil, &Error{File: name, Line: prob.Line, Msg: prob.Msg, Kind: kind, Err: prob.Err}
	}
	if len(doc.Content) != 1 || doc.Content[0].Kind != yaml.MappingNode {
		return nil, p.errf(ErrSyntax, doc, "a plan must be a mapping of keys such as model, cohort and criteria")
	}
	sum := sha256.Sum256(data)
	pl := &Plan{File: name, SHA256: hex.EncodeToString(sum[:]), Set: map[string]bool{}, Lines: map[string]int{}}
	root := doc.Content[0]
	if err := p.fields(root, "the plan", topKeys, func(key string, v *yaml.Node) error {
		pl.Set[key] = true
		pl.Lines[key] = v.Line
		return p.top(pl, key, v)
	}); err != nil {
		return nil, err
	}
	if err := p.checkQueries(pl, root); err != nil {
		return nil, err
	}
	dir := filepath.Dir(name)
	if err := p.checkClusterFiles(pl, dir); err != nil {
		return nil, err
	}
	for _, f := range []*string{&pl.Model, &pl.Dev, &pl.Cohort, &pl.Out, &pl.History} {
		if *f != "" && !filepath.IsAbs(*f) {
			*f = filepath.Join(dir, *f)
		}
	}
	return pl, nil
}

type parser struct{ file string }

// errf is an Error of the given kind at the line of n (no line for nil).
func (p *parser) errf(kind error, n *yaml.Node, format string, args ...any) error {
	return p.wrapf(kind, nil, n, format, args...)
}

// wrapf is errf with an underlying error.
func (p *parser) wrapf(kind, err error, n *yaml.Node, format string, args ...any) error {
	line := 0
	if n != nil {
		line = n.Line
	}
	return &Error{File: p.file, Line: line, Msg: fmt.Sprintf(format, args...), Kind: kind, Err: err}
}

func (p *parser) fields(n *yaml.Node, what string, allowed []string, f func(key string, v *yaml.Node) error) error {
	if n.Kind != yaml.MappingNode {
		return p.errf(ErrValue, n, "%s must be a mapping", what)
	}
	seen := map[string]*yaml.Node{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		if first, ok := seen[k.Value]; ok {
			return p.errf(ErrDuplicateKey, k, "key %s appears twice in %s (first on line %d)", cohort.Quote(k.Value), what, first.Line)
		}
		seen[k.Value] = k
		ok := false
		for _, a := range allowed {
			ok = ok || a == k.Value
		}
		if !ok {
			msg := fmt.Sprintf("unknown key %s in %s", cohort.Quote(k.Value), what)
			if c := cohort.Closest(k.Value, allowed); c != "" {
				msg += fmt.Sprintf(" (did you mean %s?)", cohort.Quote(c))
			}
			return p.errf(ErrUnknownKey, k, "%s; allowed keys: %s", msg, strings.Join(allowed, ", "))
		}
		if err := f(k.Value, v); err != nil {
			return err
		}
	}
	return nil
}

func (p *parser) str(v *yaml.Node, key string) (string, error) {
	if v.Kind != yaml.ScalarNode {
		return "", p.errf(ErrValue, v, "%s must be a single value", key)
	}
	return v.Value, nil
}

func (p *parser) num(v *yaml.Node, key string) (float64, error) {
	s, err := p.str(v, key)
	if err != nil {
		return 0, err
	}
	x, err := strconv.ParseFloat(s, 64)
	if err != nil {
		return 0, p.wrapf(ErrValue, err, v, "%s must be a number, not %s", key, cohort.Quote(s))
	}
	return x, nil
}

// boolean reads true or false.
func (p *parser) boolean(v *yaml.Node, key string) (bool, error) {
	s, err := p.str(v, key)
	if err != nil {
		return false, err
	}
	if s != "true" && s != "false" {
		return false, p.errf(ErrValue, v, "%s must be true or false", key)
	}
	return s == "true", nil
}

func (p *parser) whole(v *yaml.Node, key string) (int, error) {
	s, err := p.str(v, key)
	if err != nil {
		return 0, err
	}
	x, err := strconv.Atoi(s)
	if err != nil || x < 0 {
		return 0, p.wrapf(ErrValue, err, v, "%s must be a whole number, not %s", key, cohort.Quote(s))
	}
	return x, nil
}

// date reads a calendar date written YYYY-MM-DD: 2026-02-30 and
// 2026-13-01 are refused, as --audit-date refuses them.
func (p *parser) date(v *yaml.Node, key string) (string, error) {
	s, err := p.str(v, key)
	if err != nil {
		return "", err
	}
	if t, perr := time.Parse(time.DateOnly, s); perr != nil || t.Format(time.DateOnly) != s {
		return "", p.wrapf(ErrValue, perr, v, "%s must be a calendar date written YYYY-MM-DD, not %s", key, cohort.Quote(s))
	}
	return s, nil
}

// rename reads the mapping of column names in the extract to the names
// the model uses: every name a non-empty single value, no name renamed
// twice and no two names renamed to one.
func (p *parser) rename(v *yaml.Node) (map[string]string, error) {
	if v.Kind != yaml.MappingNode {
		return nil, p.errf(ErrValue, v, "rename must map each column name in the extract to the name the model uses")
	}
	out := map[string]string{}
	from := map[string]*yaml.Node{}
	to := map[string]*yaml.Node{}
	for i := 0; i+1 < len(v.Content); i += 2 {
		k, n := v.Content[i], v.Content[i+1]
		if k.Value == "" || k.ShortTag() == "!!null" {
			return nil, p.errf(ErrValue, k, "rename: a column name to rename is empty")
		}
		if first, ok := from[k.Value]; ok {
			return nil, p.errf(ErrDuplicateKey, k, "rename: %s appears twice (first on line %d)", cohort.Quote(k.Value), first.Line)
		}
		from[k.Value] = k
		if n.Kind != yaml.ScalarNode {
			return nil, p.errf(ErrValue, n, "rename: the new name of %s must be a single column name, not a %s", cohort.Quote(k.Value), nodeKind(n))
		}
		if n.Value == "" || n.ShortTag() == "!!null" {
			return nil, p.errf(ErrValue, n, "rename: the new name of %s is empty", cohort.Quote(k.Value))
		}
		if first, ok := to[n.Value]; ok {
			return nil, p.errf(ErrValue, n, "rename: %s and %s are both renamed to %s (lines %d and %d)",
				cohort.Quote(first.Value), cohort.Quote(k.Value), cohort.Quote(n.Value), first.Line, k.Line)
		}
		to[n.Value] = k
		out[k.Value] = n.Value
	}
	return out, nil
}

// nodeKind names a YAML node's kind for a message.
func nodeKind(n *yaml.Node) string {
	switch n.Kind {
	case yaml.MappingNode:
		return "mapping"
	case yaml.SequenceNode:
		return "list"
	}
	return "value"
}

func (p *parser) strs(v *yaml.Node, key string) ([]string, error) {
	if v.Kind != yaml.SequenceNode {
		return nil, p.errf(ErrValue, v, "%s must be a list", key)
	}
	var out []string
	for _, c := range v.Content {
		s, err := p.str(c, key)
		if err != nil {
			return nil, err
		}
		out = append(out, s)
	}
	return out, nil
}

func (p *parser) top(pl *Plan, key string, v *yaml.Node) error {
	var err error
	switch key {
	case "name":
		pl.Name, err = p.str(v, key)
	case "purpose":
		err = p.purpose(&pl.Purpose, v)
	case "model":
		pl.Model, err = p.str(v, key)
	case "predicted_percent":
		pl.PredictedPercent, err = p.boolean(v, key)
	case "predicted":
		pl.Predicted, err = p.str(v, key)
	case "outcome":
		pl.Outcome, err = p.str(v, key)
	case "event":
		pl.Event, err = p.str(v, key)
	case "non_event":
		pl.NonEvent, err = p.str(v, key)
	case "dev":
		pl.Dev, err = p.str(v, key)
	case "cohort":
		pl.Cohort, err = p.str(v, key)
	case "out":
		pl.Out, err = p.str(v, key)
	case "history":
		pl.History, err = p.str(v, key)
	case "audit_date":
		pl.AuditDate, err = p.date(v, key)
	case "thresholds":
		if v.Kind == yaml.SequenceNode {
			var parts []string
			if parts, err = p.strs(v, key); err == nil {
				pl.Thresholds = strings.Join(parts, ",")
			}
		} else {
			pl.Thresholds, err = p.str(v, key)
		}
	case "classify_at":
		var parts []string
		if v.Kind != yaml.SequenceNode {
			parts = []string{v.Value}
		} else if parts, err = p.strs(v, key); err != nil {
			break
		}
		for i, s := range parts {
			node := v
			if v.Kind == yaml.SequenceNode {
				node = v.Content[i]
			}
			for _, one := range strings.Split(s, ",") {
				x, perr := validate.ParseRisk(one)
				if perr != nil {
					return p.wrapf(ErrValue, perr, node, "classify_at: %s is not a risk (a proportion such as 0.1 or a percentage such as 10%%)", cohort.Quote(one))
				}
				if !(x > 0 && x < 1) {
					return p.errf(ErrValue, node, "classify_at: %s is not strictly between 0 and 1%s", cohort.Quote(one), validate.PercentHint(x))
				}
			}
		}
		pl.ClassifyAt = strings.Join(parts, ",")
	case "net_benefit_min_gain":
		pl.NetBenefitMinGain, err = p.num(v, key)
		if err == nil && (pl.NetBenefitMinGain < 0 || pl.NetBenefitMinGain >= 1) {
			return p.errf(ErrValue, v, "net_benefit_min_gain: %g: give a net benefit from 0 (any gain) to below 1", pl.NetBenefitMinGain)
		}
	case "rename":
		pl.Rename, err = p.rename(v)
	case "subgroups":
		pl.Subgroups, pl.Bands, err = p.subgroups(v)
	case "date_column":
		pl.DateColumn, err = p.str(v, key)
	case "periods":
		if pl.Periods, err = p.str(v, key); err == nil && pl.Periods != "month" && pl.Periods != "quarter" {
			if n, aerr := strconv.Atoi(pl.Periods); aerr != nil || n < 2 {
				return p.errf(ErrValue, v, "periods must be month, quarter or a number of patients a block (at least 2), not %s", cohort.Quote(pl.Periods))
			}
		}
	case "subgroup_criteria":
		if pl.SubgroupCriteria, err = p.str(v, key); err == nil {
			if verr := validate.CheckSubgroupMode(pl.SubgroupCriteria); verr != nil {
				return p.wrapf(ErrValue, verr, v, "subgroup_criteria must be review (the default), fail or ignore, not %s", cohort.Quote(pl.SubgroupCriteria))
			}
		}
	case "min_subgroup_events":
		pl.MinSubgroupEvents, err = p.whole(v, key)
	case "ci_bootstrap":
		pl.CIBootstrap, err = p.whole(v, key)
	case "bootstrap":
		err = p.fields(v, "bootstrap", []string{"replicates", "seed"}, func(k string, c *yaml.Node) error {
			pl.Set["bootstrap."+k] = true
			n, err := p.whole(c, k)
			if k == "replicates" {
				pl.Bootstrap = n
			} else {
				pl.Seed = uint64(n)
			}
			return err
		})
	case "data":
		err = p.data(&pl.Data, v, pl.Set)
	case "sample_size":
		err = p.sampleSize(&pl.SampleSize, v, pl.Set)
	case "cluster":
		pl.Cluster, err = p.str(v, key)
	case "clusters":
		err = p.clusters(&pl.Clusters, v, pl.Set)
	case "imputation_column", "imputed":
		err = p.imputation(&pl.Imputation, key, v)
	case "cluster_files":
		pl.ClusterFiles, err = p.clusterFiles(v)
	case "db", "cohort_query", "cohort_query_file", "dev_query", "dev_query_file", "params":
		err = p.query(pl, key, v)
	case "criteria":
		if v.Kind != yaml.SequenceNode {
			return p.errf(ErrValue, v, "criteria must be a list")
		}
		for _, c := range v.Content {
			cr, err := p.criterion(c)
			if err != nil {
				return err
			}
			pl.Criteria = append(pl.Criteria, cr)
			pl.CriteriaLines = append(pl.CriteriaLines, c.Line)
		}
	}
	return err
}

// purpose reads the purpose section, with the keys and rules of a model
// spec's: any of model.PurposeKeys, each a single non-empty text.
func (p *parser) purpose(pu *model.Purpose, v *yaml.Node) error {
	return p.fields(v, "purpose", model.PurposeKeys, func(k string, c *yaml.Node) error {
		s, err := p.str(c, "purpose."+k)
		if err != nil {
			return err
		}
		if strings.TrimSpace(s) == "" || c.ShortTag() == "!!null" {
			return p.errf(ErrValue, c, "purpose.%s is empty: state it, or leave the key out", k)
		}
		pu.Set(k, s)
		return nil
	})
}

// subgroups reads the subgroup list: a categorical column by its name,
// a numeric one as a mapping of column and cuts (a list of increasing
// numbers) or quantiles (the number of bands).
func (p *parser) subgroups(v *yaml.Node) ([]string, []validate.Banding, error) {
	if v.Kind != yaml.SequenceNode {
		return nil, nil, p.errf(ErrValue, v, "subgroups must be a list of columns (a numeric one as {column: age, cuts: [65, 75]} or {column: age, quantiles: 4})")
	}
	var cats []string
	var bands []validate.Banding
	for _, n := range v.Content {
		if n.Kind == yaml.ScalarNode {
			cats = append(cats, n.Value)
			continue
		}
		if n.Kind != yaml.MappingNode {
			return nil, nil, p.errf(ErrValue, n, "subgroups: each item is a column name or a mapping such as {column: age, cuts: [65, 75]}")
		}
		var b validate.Banding
		err := p.fields(n, "a banded subgroup", []string{"column", "cuts", "quantiles"}, func(k string, c *yaml.Node) error {
			var err error
			switch k {
			case "column":
				b.Column, err = p.str(c, k)
			case "cuts":
				if c.Kind != yaml.SequenceNode || len(c.Content) == 0 {
					return p.errf(ErrValue, c, "cuts must be a list of increasing numbers, such as [65, 75]")
				}
				for _, e := range c.Content {
					x, err := p.num(e, "a cut point")
					if err != nil {
						return err
					}
					if math.IsNaN(x) || math.IsInf(x, 0) {
						return p.errf(ErrValue, e, "a cut point must be a finite number, not %s", cohort.Quote(e.Value))
					}
					if len(b.Cuts) > 0 && !(x > b.Cuts[len(b.Cuts)-1]) {
						return p.errf(ErrValue, e, "cuts must increase, but %s follows %g", cohort.Quote(e.Value), b.Cuts[len(b.Cuts)-1])
					}
					b.Cuts = append(b.Cuts, x)
				}
			case "quantiles":
				if b.Quantiles, err = p.whole(c, k); err == nil && (b.Quantiles < 2 || b.Quantiles > validate.MaxQuantileBands) {
					return p.errf(ErrValue, c, "quantiles is the number of bands, 2 to %d, not %d", validate.MaxQuantileBands, b.Quantiles)
				}
			}
			return err
		})
		if err != nil {
			return nil, nil, err
		}
		if err := b.Check(); err != nil {
			return nil, nil, p.wrapf(ErrValue, err, n, "subgroups: %v", err)
		}
		bands = append(bands, b)
	}
	return cats, bands, nil
}

func (p *parser) data(d *Data, v *yaml.Node, set map[string]bool) error {
	return p.fields(v, "data", []string{"delimiter", "decimal_comma", "missing", "na_values", "sheet"}, func(k string, c *yaml.Node) error {
		set["data."+k] = true
		var err error
		switch k {
		case "delimiter":
			d.Delimiter, err = p.str(c, k)
		case "decimal_comma":
			d.DecimalComma, err = p.boolean(c, k)
		case "missing":
			d.Missing, err = p.str(c, k)
		case "na_values":
			d.NAValues, err = p.strs(c, k)
			d.HasNAValues = true
		case "sheet":
			if d.Sheet, err = p.str(c, k); err == nil && d.Sheet == "" {
				return p.errf(ErrValue, c, "sheet must name a worksheet")
			}
		}
		return err
	})
}

// inRange reads a number strictly between lo and hi (hi = 0: no upper
// bound).
func (p *parser) inRange(v *yaml.Node, key string, lo, hi float64) (float64, error) {
	x, err := p.num(v, key)
	if err != nil {
		return 0, err
	}
	if !(x > lo) || (hi != 0 && !(x < hi)) {
		if hi == 0 {
			return 0, p.errf(ErrValue, v, "%s must be above %g, not %g", key, lo, x)
		}
		return 0, p.errf(ErrValue, v, "%s must be strictly between %g and %g, not %g", key, lo, hi, x)
	}
	return x, nil
}

func (p *parser) sampleSize(ss *samplesize.Request, v *yaml.Node, set map[string]bool) error {
	return p.fields(v, "sample_size", []string{"oe_width", "slope_width", "c_width", "nb_width", "threshold", "anticipated"}, func(k string, c *yaml.Node) error {
		set["sample_size."+k] = true
		var err error
		switch k {
		case "oe_width":
			ss.OEWidth, err = p.inRange(c, k, 0, 0)
		case "slope_width":
			ss.SlopeWidth, err = p.inRange(c, k, 0, 0)
		case "c_width":
			ss.CWidth, err = p.inRange(c, k, 0, 1)
		case "nb_width":
			ss.NBWidth, err = p.inRange(c, k, 0, 0)
		case "threshold":
			ss.Threshold, err = p.inRange(c, k, 0, 1)
		case "anticipated":
			err = p.anticipated(ss, c)
		}
		return err
	})
}

func (p *parser) anticipated(ss *samplesize.Request, v *yaml.Node) error {
	keys := map[string]*yaml.Node{}
	err := p.fields(v, "anticipated", []string{"event_rate", "c_statistic", "lp_mean", "lp_sd", "calibration_intercept", "calibration_slope"}, func(k string, c *yaml.Node) error {
		keys[k] = c
		var err error
		switch k {
		case "event_rate":
			ss.EventRate, err = p.inRange(c, k, 0, 1)
		case "c_statistic":
			ss.CStatistic, err = p.inRange(c, k, 0.5, 1)
		case "lp_mean":
			ss.LPMean, err = p.num(c, k)
		case "lp_sd":
			ss.LPSD, err = p.inRange(c, k, 0, 0)
		case "calibration_intercept":
			var x float64
			x, err = p.num(c, k)
			ss.CalIntercept = &x
		case "calibration_slope":
			var x float64
			x, err = p.inRange(c, k, 0, 0)
			ss.CalSlope = &x
		}
		return err
	})
	if err != nil {
		return err
	}
	_, mean := keys["lp_mean"]
	_, sd := keys["lp_sd"]
	switch {
	case mean != sd:
		return p.errf(ErrConflict, v, "anticipated: lp_mean and lp_sd go together")
	case mean && keys["event_rate"] != nil:
		return p.errf(ErrConflict, keys["event_rate"], "anticipated: give the linear predictor by lp_mean and lp_sd, or by event_rate and c_statistic, not both")
	case keys["event_rate"] != nil && keys["c_statistic"] == nil:
		return p.errf(ErrConflict, keys["event_rate"], "anticipated: event_rate needs c_statistic (the normal linear predictor is found from both), or give lp_mean and lp_sd")
	case keys["event_rate"] != nil:
		m, s, err := samplesize.NormalFor(ss.EventRate, ss.CStatistic)
		if err != nil {
			return p.wrapf(ErrConflict, err, keys["c_statistic"], "anticipated: %v", strings.TrimPrefix(err.Error(), "samplesize: "))
		}
		ss.LPMean, ss.LPSD, ss.FromEventRate = m, s, true
	}
	return nil
}

func (p *parser) criterion(n *yaml.Node) (validate.Criterion, error) {
	var c validate.Criterion
	err := p.fields(n, "a criterion", []string{"measure", "at_least", "at_most", "between", "contains", "over", "severity", "source"}, func(k string, v *yaml.Node) error {
		var err error
		switch k {
		case "measure":
			c.Measure, err = p.str(v, k)
		case "at_least":
			var x float64
			x, err = p.num(v, k)
			c.AtLeast = &x
		case "at_most":
			var x float64
			x, err = p.num(v, k)
			c.AtMost = &x
		case "contains":
			var x float64
			x, err = p.num(v, k)
			c.Contains = &x
		case "between", "over":
			if v.Kind != yaml.SequenceNode || len(v.Content) != 2 {
				if k == "over" {
					return p.errf(ErrValue, v, "over takes two risk thresholds: [from, to]")
				}
				return p.errf(ErrValue, v, "between takes two numbers: [low, high]")
			}
			var b [2]float64
			for i := range b {
				if b[i], err = p.num(v.Content[i], k); err != nil {
					return err
				}
			}
			if k == "over" {
				c.Over = &b
			} else {
				c.Between = &b
			}
		case "severity":
			c.Severity, err = p.str(v, k)
		case "source":
			c.Source, err = p.str(v, k)
		}
		return err
	})
	if err != nil {
		return c, err
	}
	// validate's message repeats the measure and the severity: check a
	// copy with both cut to what a message may echo. No measure name or
	// severity is that long, so the copy passes exactly when c does.
	short := c
	short.Measure, short.Severity = cohort.Clip(c.Measure), cohort.Clip(c.Severity)
	if err := short.Check(); err != nil {
		return c, p.wrapf(ErrCriterion, err, n, "%v", err)
	}
	return c, nil
}

// Starter is a commented plan to copy and edit.
const Starter = `# riskaudit audit plan. Paths are relative to this file.
# Run it with: riskaudit audit --plan this-file.yaml
# Flags on the command line override what the plan says.

model: frozen.yaml          # a frozen model (or a recipe, fitted on dev)
dev: development.csv        # development data, measured beside the cohort
cohort: extracts/2026-11.csv
out: audits/2026-11         # report.md, audit.json and figures go here
history: audit-history.sqlite
# audit_date: 2026-11-30    # the date the extract describes, which the history
                            # stores the audit under. Leave it out of a plan
                            # run on every new extract: the date is then
                            # --audit-date, or the day the audit runs (UTC).

# Registry extracts rename columns between releases: map the name in the
# extract to the name the model uses.
rename:
  age_years: age

# Measures by patient subgroup: categorical columns by name, numeric ones
# cut into bands at given points (here <65, 65-<75, >=75) or at the
# cohort's quantiles (quantiles: 4 for quartiles).
subgroups:
  - sex
  - column: age
    cuts: [65, 75]
min_subgroup_events: 20     # fewer events: reported as too small, not judged
subgroup_criteria: review   # a subgroup's miss makes the verdict review;
                            # fail: counts as the criterion's severity; ignore

# Acceptance criteria. Without any, the documented defaults apply.
criteria:
  - measure: auc_ci.lower
    at_least: 0.70
  - measure: slope
    between: [0.8, 1.2]
  - measure: citl
    between: [-0.2, 0.2]
  - measure: oe_ci
    contains: 1
  - measure: ici
    at_most: 0.03
    severity: review        # a miss gives "review", not "fail"
  - measure: net_benefit_gain   # net benefit above treating all and none
    at_least: 0.001             # by 1 net true positive per 1000 patients
    over: [0.05, 0.20]          # at every decision-curve threshold in range
    severity: review
  # With a cluster column (cluster: site), criteria may also name the
  # pooled measures across clusters: pooled.auc, pooled.oe_pi (contains),
  # pooled.auc_pi.lower, pooled.slope_chance (the probability that a new
  # site's slope is acceptable; see the clusters section's accept_slope).
  # - measure: pooled.auc_pi.lower
  #   at_least: 0.65
  #   severity: review

bootstrap:
  replicates: 0             # internal validation on dev (e.g. 200)
  seed: 1

data:
  missing: complete-case    # or fail
  # sheet: Extract          # the worksheet of an Excel workbook (default: the first)

# Was the cohort large enough? Target 95% CI widths of the sample-size
# criteria (Riley et al. 2021; these are the defaults) and, optionally,
# anticipated values to use instead of the cohort's own.
sample_size:
  oe_width: 0.2
  slope_width: 0.2
  c_width: 0.1
  nb_width: 0.2
  # threshold: 0.1          # net-benefit criterion (default: the first classify_at)
  # anticipated:            # default: taken from the cohort
  #   event_rate: 0.12      # with c_statistic: a normal linear predictor
  #   c_statistic: 0.75
  #   lp_mean: -2.3         # or give the linear predictor itself
  #   lp_sd: 1.0
  #   calibration_intercept: 0
  #   calibration_slope: 1

# The model's stated purpose, shown at the top of the report. Each key
# given here replaces the model spec's own (a spec may state the same
# keys in its purpose section); leave out what the spec already says.
# purpose:
#   intended_use: flag patients for a pre-operative respiratory review
#   target_population: adults listed for elective surgery
#   setting: pre-operative assessment clinics
#   outcome_definition: a pulmonary complication recorded in the notes
#   prediction_horizon: 30 days after surgery
`
