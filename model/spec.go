// Package model reads model specs (YAML), builds design matrices from
// cohort columns, fits recipes into frozen models and scores cohorts.
//
// One schema serves two purposes. A recipe names the outcome and the
// predictors; a frozen model adds the intercept and every coefficient.
// A spec is frozen exactly when it has an intercept.
//
// # Errors
//
// A problem in a spec file is a *SpecError with the file and line, a
// problem in the cohort data (a missing value under the fail policy, an
// outcome value that is neither event nor non-event, a level a frozen
// model lacks, a value outside a transform's domain) is a *cohort.Error
// with the kind cohort.ErrMissing, ErrOutcome, ErrLevel or ErrDomain, and
// a fit that cannot be made is a *SeparationError or a *FitError. Each
// carries its kind for errors.Is, as in encoding/csv: a SpecError's Kind
// is one of the ErrSpec…, ErrUnknownKey, … sentinels below and its Is
// method matches it; Err (returned by Unwrap) keeps the error underneath,
// such as the *fs.PathError of a spec that cannot be read, the YAML
// parser's error or the strconv error of a bad number. A fit error
// unwraps to the package logistic error it explains, whose kind is
// ErrSeparation, ErrCollinear or ErrNotConverged (the same values as
// logistic's), and CompareNested's errors are of kind ErrNotNested.
// Messages are built from the fields alone and do not depend on Kind or
// Err.
package model

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/pathtext"
)

// The kinds of problems in a spec, the values of SpecError.Kind. Each
// *SpecError this package returns has exactly one of them.
var (
	// ErrSpecRead is a spec file that cannot be read; Err holds the
	// operating system's error.
	ErrSpecRead = errors.New("model: cannot read the spec file")
	// ErrSpecSyntax is a spec file that is empty, is not valid YAML (Err
	// holds the parser's error), holds a second document, has an alias
	// inside its own value or aliases that expand it too far, or is not
	// a mapping of keys.
	ErrSpecSyntax = errors.New("model: not a YAML spec")
	// ErrUnknownKey is a key the schema does not have where it stands,
	// a merge key (<<) or a key that is a mapping or a list.
	ErrUnknownKey = errors.New("model: unknown key")
	// ErrDuplicateKey is a key (or a term of a coefficient map) given
	// twice.
	ErrDuplicateKey = errors.New("model: duplicate key")
	// ErrMissingKey is a key the spec needs and lacks: the outcome, its
	// column or event, the predictors, a predictor's column, a spline's
	// knots, and in a frozen spec the knot positions and reference
	// levels.
	ErrMissingKey = errors.New("model: missing key")
	// ErrSpecValue is a value of the wrong type or outside its range,
	// such as a number that does not read as one (Err holds strconv's
	// error) or knots that do not increase.
	ErrSpecValue = errors.New("model: bad value")
	// ErrConflict is keys or predictors that do not go together: a
	// categorical predictor with a transform, two transforms, the
	// outcome as a predictor, a product of terms the spec lacks or lists
	// later, a term that appears twice.
	ErrConflict = errors.New("model: conflicting keys")
	// ErrCoefficients is coefficients that do not match the terms: a
	// term without one, one for no term or for the reference level, or
	// coefficients in a recipe (a spec without an intercept).
	ErrCoefficients = errors.New("model: coefficients do not match the terms")
	// ErrNotFrozen is a recipe where a frozen model is needed.
	ErrNotFrozen = errors.New("model: the spec is a recipe")
	// ErrSpecData is a spec that the data cannot bear out: a reference
	// level that does not occur, too few distinct values to place the
	// default knots.
	ErrSpecData = errors.New("model: the spec does not fit the data")
)

// SpecError is a problem in a spec file, with the line it is on (0 when
// not tied to a line).
type SpecError struct {
	File string
	Line int
	Msg  string
	// Kind is the kind of problem, one of the sentinel errors above, or
	// nil for an error of no listed kind; errors.Is(err, Kind) holds.
	Kind error
	// Err is the underlying error, or nil; Unwrap returns it.
	Err error
}

// Error gives the file, the line when known, and the message.
func (e *SpecError) Error() string {
	if e.Line > 0 {
		return fmt.Sprintf("%s: line %d: %s", pathtext.Path(e.File), e.Line, e.Msg)
	}
	return fmt.Sprintf("%s: %s", pathtext.Path(e.File), e.Msg)
}

// Unwrap returns the underlying error, Err.
func (e *SpecError) Unwrap() error { return e.Err }

// Is reports whether target is the error's kind.
func (e *SpecError) Is(target error) bool { return e.Kind != nil && target == e.Kind }

// Value is a YAML scalar that may be read as text or as a number.
type Value struct {
	Text  string
	Num   float64
	IsNum bool
}

// Matches reports whether a field of the outcome column equals v: as text,
// or as numbers when both are numbers (so event 1 matches "1.0").
func (v Value) Matches(field string) bool {
	if field == v.Text {
		return true
	}
	if !v.IsNum {
		return false
	}
	f, err := strconv.ParseFloat(strings.TrimSpace(field), 64)
	return err == nil && f == v.Num
}

// Outcome says which column holds the outcome and which value is an event.
type Outcome struct {
	Column   string
	Event    Value
	NonEvent *Value
}

// Coef is a coefficient of one named term.
type Coef struct {
	Term  string
	Value float64
	Line  int
}

// Spline is a restricted cubic spline: cubic between the knots, linear
// beyond the outer knots (Stone & Koo 1985; the truncated-power basis of
// Durrleman & Simon 1989, Statistics in Medicine 8:551–561).
type Spline struct {
	// Knots are the knot positions, on the scale of (x − center)/scale.
	Knots []float64
	// Count asks a recipe for this many knots at the default quantiles
	// of the development data; the frozen model states the positions.
	Count int
	// Normalise is "outer-range" (divide the nonlinear basis terms by
	// (t_k − t_1)², the default) or "none".
	Normalise string
}

// Predictor is one entry of a spec's predictor list.
type Predictor struct {
	// Column names the cohort column (empty for a product).
	Column string
	// Categorical marks a column read as strings, coded by indicator
	// terms for every level but the reference.
	Categorical bool
	// Reference is the reference level ("" with HasReference false for
	// the default: the first level in sorted order).
	Reference    string
	HasReference bool
	// Levels are the coefficients of a frozen categorical predictor.
	Levels []Coef
	// Center and Scale transform x into z = (x − Center) / Scale before
	// any other transform. Scale is 1 when not given.
	Center, Scale float64
	// Log replaces z by ln z.
	Log bool
	// Powers are fractional-polynomial powers of z (Royston & Altman
	// 1994, Applied Statistics 43:429–467): power 0 means ln z, and a
	// repeated power p gives z^p · ln z for its second term.
	Powers []float64
	// Spline expands z into a restricted cubic spline basis.
	Spline *Spline
	// Product names two other predictor entries (by column) whose terms
	// are multiplied pairwise.
	Product []string
	// Coef is the coefficient of a single-term predictor (frozen only).
	Coef    float64
	HasCoef bool
	// Coefs are the coefficients of a multi-term predictor, by term label
	// (frozen only).
	Coefs []Coef
	// Range is the column's range in the development data (the spec's
	// optional development_range key, which fit writes for every numeric
	// predictor), or nil when the spec does not state it.
	Range *Range
	// Line is the spec line the entry starts on.
	Line int
}

// Range is the smallest and largest value of a numeric predictor's
// column in the rows a model was fitted to, on the column's own scale
// (before center, scale or any transform).
type Range struct {
	Min, Max float64
}

// Contains reports whether v lies within the range, ends included.
func (r Range) Contains(v float64) bool { return v >= r.Min && v <= r.Max }

// Provenance records where a frozen model came from.
type Provenance struct {
	DataFile    string `yaml:"data_file"`
	DataSHA256  string `yaml:"data_sha256"`
	RowsUsed    int    `yaml:"rows_used"`
	Events      int    `yaml:"events"`
	FittedAt    string `yaml:"fitted_at"`
	ToolVersion string `yaml:"tool_version"`
	Method      string `yaml:"method"`
	RecipeFile  string `yaml:"recipe_file,omitempty"`
	// ParentSHA256 is the SHA-256 of the frozen model this one updates,
	// and ParentFile that model's file.
	ParentSHA256 string `yaml:"parent_model_sha256,omitempty"`
	ParentFile   string `yaml:"parent_model_file,omitempty"`
}

// Spec is a recipe or a frozen model.
type Spec struct {
	File string
	Name string
	// Purpose is the model's stated purpose (the spec's optional purpose
	// section).
	Purpose      Purpose
	Outcome      Outcome
	Intercept    float64
	HasIntercept bool
	Predictors   []Predictor
	Provenance   *Provenance
}

// Frozen reports whether the spec carries coefficients.
func (s *Spec) Frozen() bool { return s.HasIntercept }

// LoadSpec reads and checks the spec file at path.
func LoadSpec(path string) (*Spec, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, &SpecError{File: path, Msg: "cannot read file: " + unwrapPath(err), Kind: ErrSpecRead, Err: err}
	}
	return ParseSpec(path, data)
}

func unwrapPath(err error) string {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err.Error()
	}
	return err.Error()
}

// ParseSpec reads a spec from data, the contents of the file named name.
// Unknown keys, misplaced keys and values of the wrong type are errors
// with the line they are on: a typo must never change a model silently.
func ParseSpec(name string, data []byte) (*Spec, error) {
	if len(bytes.TrimSpace(data)) == 0 {
		return nil, &SpecError{File: name, Msg: "file is empty", Kind: ErrSpecSyntax}
	}
	doc, prob := ReadYAML(data)
	if prob != nil {
		kind := ErrSpecSyntax
		if prob.Kind == YAMLKey {
			kind = ErrUnknownKey
		}
		return nil, &SpecError{File: name, Line: prob.Line, Msg: prob.Msg, Kind: kind, Err: prob.Err}
	}
	p := &specParser{file: name}
	if len(doc.Content) != 1 || doc.Content[0].Kind != yaml.MappingNode {
		return nil, p.errf(ErrSpecSyntax, doc, "the spec must be a mapping of keys such as name, outcome and predictors")
	}
	s, err := p.spec(doc.Content[0])
	if err != nil {
		return nil, err
	}
	s.File = name
	if err := s.check(p); err != nil {
		return nil, err
	}
	return s, nil
}

type specParser struct{ file string }

// errf is a SpecError of the given kind at the line of n.
func (p *specParser) errf(kind error, n *yaml.Node, format string, args ...any) error {
	return p.wrapf(kind, nil, n, format, args...)
}

// wrapf is errf with an underlying error.
func (p *specParser) wrapf(kind, err error, n *yaml.Node, format string, args ...any) error {
	line := 0
	if n != nil {
		line = n.Line
	}
	return &SpecError{File: p.file, Line: line, Msg: fmt.Sprintf(format, args...), Kind: kind, Err: err}
}

// fields walks a mapping node, checking every key against allowed.
func (p *specParser) fields(n *yaml.Node, what string, allowed []string, f func(key string, k, v *yaml.Node) error) error {
	if n.Kind != yaml.MappingNode {
		return p.errf(ErrSpecValue, n, "%s must be a mapping", what)
	}
	seen := map[string]*yaml.Node{}
	for i := 0; i+1 < len(n.Content); i += 2 {
		k, v := n.Content[i], n.Content[i+1]
		key := k.Value
		if first, ok := seen[key]; ok {
			return p.errf(ErrDuplicateKey, k, "key %s appears twice in %s (first on line %d)", cohort.Quote(key), what, first.Line)
		}
		seen[key] = k
		ok := false
		for _, a := range allowed {
			ok = ok || a == key
		}
		if !ok {
			msg := fmt.Sprintf("unknown key %s in %s", cohort.Quote(key), what)
			if c := cohort.Closest(key, allowed); c != "" {
				msg += fmt.Sprintf(" (did you mean %s?)", cohort.Quote(c))
			}
			return p.errf(ErrUnknownKey, k, "%s; allowed keys: %s", msg, strings.Join(allowed, ", "))
		}
		if err := f(key, k, v); err != nil {
			return err
		}
	}
	return nil
}

func (p *specParser) scalar(v *yaml.Node, key string) (string, error) {
	if v.Kind != yaml.ScalarNode {
		return "", p.errf(ErrSpecValue, v, "%s must be a single value", key)
	}
	return v.Value, nil
}

func (p *specParser) number(v *yaml.Node, key string) (float64, error) {
	s, err := p.scalar(v, key)
	if err != nil {
		return 0, err
	}
	f, perr := strconv.ParseFloat(s, 64)
	if perr != nil || math.IsInf(f, 0) || math.IsNaN(f) {
		return 0, p.wrapf(ErrSpecValue, perr, v, "%s must be a finite number, not %s", key, cohort.Quote(s))
	}
	return f, nil
}

func (p *specParser) boolean(v *yaml.Node, key string) (bool, error) {
	s, err := p.scalar(v, key)
	if err != nil {
		return false, err
	}
	switch s {
	case "true":
		return true, nil
	case "false":
		return false, nil
	}
	return false, p.errf(ErrSpecValue, v, "%s must be true or false, not %s", key, cohort.Quote(s))
}

func (p *specParser) value(v *yaml.Node, key string) (Value, error) {
	s, err := p.scalar(v, key)
	if err != nil {
		return Value{}, err
	}
	out := Value{Text: s}
	if v.Style == 0 {
		if f, err := strconv.ParseFloat(s, 64); err == nil {
			out.Num, out.IsNum = f, true
		}
	}
	return out, nil
}

func (p *specParser) spec(n *yaml.Node) (*Spec, error) {
	s := &Spec{}
	sawOutcome, sawPreds := false, false
	err := p.fields(n, "the spec", []string{"name", "purpose", "outcome", "intercept", "predictors", "provenance"}, func(key string, k, v *yaml.Node) error {
		var err error
		switch key {
		case "name":
			s.Name, err = p.scalar(v, "name")
		case "purpose":
			err = p.purpose(v, &s.Purpose)
		case "outcome":
			sawOutcome = true
			err = p.outcome(v, &s.Outcome)
		case "intercept":
			s.Intercept, err = p.number(v, "intercept")
			s.HasIntercept = true
		case "predictors":
			sawPreds = true
			if v.Kind != yaml.SequenceNode {
				return p.errf(ErrSpecValue, v, "predictors must be a list")
			}
			for _, item := range v.Content {
				pr, err := p.predictor(item)
				if err != nil {
					return err
				}
				s.Predictors = append(s.Predictors, pr)
			}
		case "provenance":
			s.Provenance = &Provenance{}
			err = p.provenance(v, s.Provenance)
		}
		return err
	})
	if err != nil {
		return nil, err
	}
	if !sawOutcome {
		return nil, p.errf(ErrMissingKey, n, "the spec has no outcome")
	}
	if !sawPreds {
		return nil, p.errf(ErrMissingKey, n, "the spec has no predictors (write predictors: [] for an intercept-only model)")
	}
	return s, nil
}

// purpose reads the purpose section: any of PurposeKeys, each a
// single non-empty text.
func (p *specParser) purpose(n *yaml.Node, pu *Purpose) error {
	return p.fields(n, "purpose", PurposeKeys, func(key string, k, v *yaml.Node) error {
		s, err := p.scalar(v, "purpose."+key)
		if err != nil {
			return err
		}
		if strings.TrimSpace(s) == "" || v.ShortTag() == "!!null" {
			return p.errf(ErrSpecValue, v, "purpose.%s is empty: state it, or leave the key out", key)
		}
		pu.Set(key, s)
		return nil
	})
}

func (p *specParser) outcome(n *yaml.Node, o *Outcome) error {
	sawEvent := false
	err := p.fields(n, "outcome", []string{"column", "event", "non_event"}, func(key string, k, v *yaml.Node) error {
		var err error
		switch key {
		case "column":
			o.Column, err = p.scalar(v, "column")
		case "event":
			sawEvent = true
			o.Event, err = p.value(v, "event")
		case "non_event":
			var ne Value
			ne, err = p.value(v, "non_event")
			o.NonEvent = &ne
		}
		return err
	})
	if err != nil {
		return err
	}
	if o.Column == "" {
		return p.errf(ErrMissingKey, n, "outcome needs a column")
	}
	if !sawEvent {
		return p.errf(ErrMissingKey, n, "outcome needs an event value")
	}
	if o.NonEvent != nil && o.NonEvent.Text == o.Event.Text {
		return p.errf(ErrConflict, n, "outcome event and non_event are the same value %s", cohort.Quote(o.Event.Text))
	}
	return nil
}

var predictorKeys = []string{"column", "categorical", "reference", "levels", "coef", "coefs",
	"center", "scale", "log", "powers", "spline", "product", "development_range"}

func (p *specParser) predictor(n *yaml.Node) (Predictor, error) {
	pr := Predictor{Scale: 1, Line: n.Line}
	err := p.fields(n, "a predictor", predictorKeys, func(key string, k, v *yaml.Node) error {
		var err error
		switch key {
		case "column":
			pr.Column, err = p.scalar(v, "column")
		case "categorical":
			pr.Categorical, err = p.boolean(v, "categorical")
		case "reference":
			pr.Reference, err = p.scalar(v, "reference")
			pr.HasReference = true
		case "levels":
			pr.Levels, err = p.coefMap(v, "levels")
		case "coef":
			pr.Coef, err = p.number(v, "coef")
			pr.HasCoef = true
		case "coefs":
			pr.Coefs, err = p.coefMap(v, "coefs")
		case "center":
			pr.Center, err = p.number(v, "center")
		case "scale":
			pr.Scale, err = p.number(v, "scale")
			if err == nil && pr.Scale <= 0 {
				err = p.errf(ErrSpecValue, v, "scale must be positive")
			}
		case "log":
			pr.Log, err = p.boolean(v, "log")
		case "powers":
			pr.Powers, err = p.numbers(v, "powers")
			if err == nil && (len(pr.Powers) < 1 || len(pr.Powers) > 2) {
				err = p.errf(ErrSpecValue, v, "powers takes one or two fractional-polynomial powers")
			}
		case "spline":
			pr.Spline, err = p.spline(v)
		case "development_range":
			pr.Range, err = p.devRange(v)
		case "product":
			if v.Kind != yaml.SequenceNode || len(v.Content) != 2 {
				return p.errf(ErrSpecValue, v, "product takes a list of two predictor columns")
			}
			for _, c := range v.Content {
				s, err := p.scalar(c, "product")
				if err != nil {
					return err
				}
				pr.Product = append(pr.Product, s)
			}
		}
		return err
	})
	if err != nil {
		return pr, err
	}
	return pr, p.checkPredictor(n, &pr)
}

func (p *specParser) checkPredictor(n *yaml.Node, pr *Predictor) error {
	if pr.Product != nil {
		if pr.Column != "" || pr.Categorical || pr.Log || pr.Powers != nil || pr.Spline != nil || pr.Center != 0 || pr.Scale != 1 || pr.Levels != nil || pr.HasReference || pr.Range != nil {
			return p.errf(ErrConflict, n, "a product entry takes only product and its coefficients (coef or coefs)")
		}
		return nil
	}
	if pr.Column == "" {
		return p.errf(ErrMissingKey, n, "a predictor needs a column (or a product)")
	}
	if pr.Categorical {
		if pr.Log || pr.Powers != nil || pr.Spline != nil || pr.Center != 0 || pr.Scale != 1 || pr.HasCoef || pr.Coefs != nil || pr.Range != nil {
			return p.errf(ErrConflict, n, "categorical predictor %s takes only reference and levels", cohort.Quote(pr.Column))
		}
		return nil
	}
	if pr.HasReference || pr.Levels != nil {
		return p.errf(ErrConflict, n, "predictor %s has reference or levels but is not categorical (add categorical: true)", cohort.Quote(pr.Column))
	}
	ways := 0
	for _, b := range []bool{pr.Log, pr.Powers != nil, pr.Spline != nil} {
		if b {
			ways++
		}
	}
	if ways > 1 {
		return p.errf(ErrConflict, n, "predictor %s: choose one of log, powers and spline", cohort.Quote(pr.Column))
	}
	return nil
}

func (p *specParser) numbers(v *yaml.Node, key string) ([]float64, error) {
	if v.Kind != yaml.SequenceNode {
		return nil, p.errf(ErrSpecValue, v, "%s must be a list of numbers", key)
	}
	out := make([]float64, 0, len(v.Content))
	for _, c := range v.Content {
		f, err := p.number(c, key)
		if err != nil {
			return nil, err
		}
		out = append(out, f)
	}
	return out, nil
}

func (p *specParser) coefMap(v *yaml.Node, key string) ([]Coef, error) {
	if v.Kind != yaml.MappingNode {
		return nil, p.errf(ErrSpecValue, v, "%s must map each term to its coefficient", key)
	}
	var out []Coef
	seen := map[string]*yaml.Node{}
	for i := 0; i+1 < len(v.Content); i += 2 {
		k, val := v.Content[i], v.Content[i+1]
		if first, ok := seen[k.Value]; ok {
			return nil, p.errf(ErrDuplicateKey, k, "%s appears twice in %s (first on line %d)", cohort.Quote(k.Value), key, first.Line)
		}
		seen[k.Value] = k
		f, err := p.number(val, fmt.Sprintf("%s of %s", key, cohort.Quote(k.Value)))
		if err != nil {
			return nil, err
		}
		out = append(out, Coef{Term: k.Value, Value: f, Line: k.Line})
	}
	return out, nil
}

func (p *specParser) spline(n *yaml.Node) (*Spline, error) {
	sp := &Spline{Normalise: "outer-range"}
	err := p.fields(n, "spline", []string{"knots", "normalise"}, func(key string, k, v *yaml.Node) error {
		switch key {
		case "knots":
			if v.Kind == yaml.ScalarNode {
				c, err := strconv.Atoi(v.Value)
				if err != nil || c < 3 || c > 7 {
					return p.wrapf(ErrSpecValue, err, v, "knots must be a list of positions or a count from 3 to 7, not %s", cohort.Quote(v.Value))
				}
				sp.Count = c
				return nil
			}
			ks, err := p.numbers(v, "knots")
			if err != nil {
				return err
			}
			if len(ks) < 3 {
				return p.errf(ErrSpecValue, v, "a restricted cubic spline needs at least 3 knots")
			}
			for i := 1; i < len(ks); i++ {
				if ks[i] <= ks[i-1] {
					return p.errf(ErrSpecValue, v, "knots must increase strictly")
				}
			}
			sp.Knots = ks
		case "normalise":
			s, err := p.scalar(v, "normalise")
			if err != nil {
				return err
			}
			if s != "outer-range" && s != "none" {
				return p.errf(ErrSpecValue, v, "normalise must be outer-range or none, not %s", cohort.Quote(s))
			}
			sp.Normalise = s
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if sp.Knots == nil && sp.Count == 0 {
		return nil, p.errf(ErrMissingKey, n, "spline needs knots")
	}
	return sp, nil
}

// devRange reads a development_range: a mapping of min and max, both
// finite, min not above max.
func (p *specParser) devRange(n *yaml.Node) (*Range, error) {
	r := &Range{}
	seen := 0
	err := p.fields(n, "development_range", []string{"min", "max"}, func(key string, k, v *yaml.Node) error {
		f, err := p.number(v, "development_range."+key)
		if err != nil {
			return err
		}
		seen++
		if key == "min" {
			r.Min = f
		} else {
			r.Max = f
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	if seen != 2 {
		return nil, p.errf(ErrMissingKey, n, "development_range needs both min and max")
	}
	if r.Min > r.Max {
		return nil, p.errf(ErrSpecValue, n, "development_range: min %s is above max %s", fmtNum(r.Min), fmtNum(r.Max))
	}
	return r, nil
}

func (p *specParser) provenance(n *yaml.Node, pv *Provenance) error {
	keys := []string{"data_file", "data_sha256", "rows_used", "events", "fitted_at", "tool_version", "method", "recipe_file", "parent_model_sha256", "parent_model_file"}
	return p.fields(n, "provenance", keys, func(key string, k, v *yaml.Node) error {
		s, err := p.scalar(v, key)
		if err != nil {
			return err
		}
		switch key {
		case "rows_used", "events":
			n, err := strconv.Atoi(s)
			if err != nil || n < 0 {
				return p.wrapf(ErrSpecValue, err, v, "%s must be a whole number", key)
			}
			if key == "rows_used" {
				pv.RowsUsed = n
			} else {
				pv.Events = n
			}
		case "data_file":
			pv.DataFile = s
		case "data_sha256":
			pv.DataSHA256 = s
		case "fitted_at":
			pv.FittedAt = s
		case "tool_version":
			pv.ToolVersion = s
		case "method":
			pv.Method = s
		case "recipe_file":
			pv.RecipeFile = s
		case "parent_model_sha256":
			pv.ParentSHA256 = s
		case "parent_model_file":
			pv.ParentFile = s
		}
		return nil
	})
}

// check applies the rules that involve more than one key.
func (s *Spec) check(p *specParser) error {
	seen := map[string]int{}
	kinds := map[string]bool{}
	for i := range s.Predictors {
		pr := &s.Predictors[i]
		if pr.Column == s.Outcome.Column && pr.Column != "" {
			return &SpecError{File: p.file, Line: pr.Line, Msg: fmt.Sprintf("the outcome column %s cannot be a predictor", cohort.Quote(pr.Column)), Kind: ErrConflict}
		}
		if pr.Column != "" {
			if cat, ok := kinds[pr.Column]; ok && cat != pr.Categorical {
				return &SpecError{File: p.file, Line: pr.Line, Msg: fmt.Sprintf("column %s is both categorical and numeric", cohort.Quote(pr.Column)), Kind: ErrConflict}
			}
			kinds[pr.Column] = pr.Categorical
			if _, ok := seen[pr.Column]; !ok {
				seen[pr.Column] = i
			}
		}
	}
	for i := range s.Predictors {
		pr := &s.Predictors[i]
		for _, c := range pr.Product {
			j, ok := seen[c]
			if !ok {
				return &SpecError{File: p.file, Line: pr.Line, Msg: fmt.Sprintf("product names %s, which is not a predictor of the spec", cohort.Quote(c)), Kind: ErrConflict}
			}
			if s.Predictors[j].Product != nil {
				return &SpecError{File: p.file, Line: pr.Line, Msg: "a product cannot contain a product", Kind: ErrConflict}
			}
		}
		if pr.Product != nil && pr.Product[0] == pr.Product[1] && s.Predictors[seen[pr.Product[0]]].Categorical {
			return &SpecError{File: p.file, Line: pr.Line, Msg: "the product of a categorical predictor with itself is not defined", Kind: ErrConflict}
		}
	}
	if !s.Frozen() {
		for _, pr := range s.Predictors {
			if pr.HasCoef || pr.Levels != nil || pr.Coefs != nil {
				return &SpecError{File: p.file, Line: pr.Line, Msg: "coefficients are given but the spec has no intercept: a frozen model needs an intercept and every coefficient", Kind: ErrCoefficients}
			}
		}
		return nil
	}
	for _, pr := range s.Predictors {
		if pr.Spline != nil && pr.Spline.Knots == nil {
			return &SpecError{File: p.file, Line: pr.Line, Msg: fmt.Sprintf("frozen predictor %s needs its spline knot positions", cohort.Quote(pr.Column)), Kind: ErrMissingKey}
		}
		if pr.Categorical && !pr.HasReference {
			return &SpecError{File: p.file, Line: pr.Line, Msg: fmt.Sprintf("frozen categorical predictor %s needs its reference level", cohort.Quote(pr.Column)), Kind: ErrMissingKey}
		}
	}
	return nil
}

// Columns returns the cohort columns the spec reads: the outcome (as
// categorical text) when withOutcome, then each predictor column once.
func (s *Spec) Columns(withOutcome bool) []cohort.Request {
	var reqs []cohort.Request
	seen := map[string]bool{}
	if withOutcome {
		reqs = append(reqs, cohort.Request{Name: s.Outcome.Column, Kind: cohort.Categorical})
		seen[s.Outcome.Column] = true
	}
	for _, pr := range s.Predictors {
		if pr.Column == "" || seen[pr.Column] {
			continue
		}
		seen[pr.Column] = true
		k := cohort.Numeric
		if pr.Categorical {
			k = cohort.Categorical
		}
		reqs = append(reqs, cohort.Request{Name: pr.Column, Kind: k})
	}
	return reqs
}

// AsRecipe returns the spec without its coefficients: the terms of a
// frozen model, to be fitted again. Reference levels and knot positions
// are kept.
func (s *Spec) AsRecipe() *Spec {
	r := *s
	r.Intercept, r.HasIntercept = 0, false
	r.Provenance = nil
	r.Predictors = make([]Predictor, len(s.Predictors))
	for i, pr := range s.Predictors {
		pr.Coef, pr.HasCoef, pr.Coefs, pr.Levels = 0, false, nil, nil
		r.Predictors[i] = pr
	}
	return &r
}
