package model

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"go.yaml.in/yaml/v3"

	"github.com/riskaudit/riskaudit/internal/pathtext"
	"github.com/riskaudit/riskaudit/logistic"
)

// FrozenLinearPredictors returns the linear predictor of every matrix
// row under the frozen spec's coefficients (Coefficients, then
// LinearPredictors). A linear predictor that is not finite — a
// coefficient times a value beyond ±MaxFloat64, a sum of such products
// that overflows, or infinite products of opposite signs (∞ − ∞) — is
// the model's doing, not the data's: it is a *SpecError of kind
// ErrLPOverflow naming the term and the first such row, with an
// *LPOverflowError as Err. A finite linear predictor, however large, is
// kept (its risk rounds to 0 or 1, which the calibration fits clamp).
func (d *Design) FrozenLinearPredictors(m *Matrix) ([]float64, error) {
	beta, err := d.Coefficients()
	if err != nil {
		return nil, err
	}
	lp, err := d.LinearPredictors(m, beta)
	if err != nil {
		return nil, err
	}
	for r, v := range lp {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, d.overflow(m, beta, r, v)
		}
	}
	return lp, nil
}

// FrozenScores is FrozenLinearPredictors with the risks as well, the
// risk of each row (logistic.Expit of its linear predictor, as Risks
// computes it) taken as its linear predictor is summed, on the same
// goroutines, rather than in a second pass over the rows. Its errors are
// FrozenLinearPredictors'.
func (d *Design) FrozenScores(m *Matrix) (lp, p []float64, err error) {
	beta, err := d.Coefficients()
	if err != nil {
		return nil, nil, err
	}
	if m.X != nil {
		if lp, err = d.FrozenLinearPredictors(m); err != nil {
			return nil, nil, err
		}
		return lp, Risks(lp), nil
	}
	lp, p = make([]float64, m.N), make([]float64, m.N)
	err = d.eachRow(m, false, func(r int, x []float64) {
		eta := 0.0
		for j, b := range beta {
			eta += x[j] * b
		}
		lp[r], p[r] = eta, logistic.Expit(eta)
	})
	if err != nil {
		return nil, nil, err
	}
	for r, v := range lp {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, nil, d.overflow(m, beta, r, v)
		}
	}
	return lp, p, nil
}

// ErrLPOverflow is the kind of the *SpecError for a frozen model whose
// linear predictor is not finite for some row (FrozenLinearPredictors).
var ErrLPOverflow = errors.New("model: the linear predictor overflows")

// LPOverflowError says why the frozen model's linear predictor of one
// data row is not a finite number.
type LPOverflowError struct {
	// Data is the data file; Line its line holding the row (a row number
	// when Row is set, for a columnar file).
	Data string
	Line int
	Row  bool
	// Term is the term responsible: the first whose coefficient times
	// value is infinite, or, when every product is finite, the one of
	// largest magnitude; Coef and Value are its coefficient and value,
	// Product their product.
	Term                 string
	Coef, Value, Product float64
	// Column and Raw are the data column and its value in the row when
	// the term is a transform (center, scale, log, powers, spline) of a
	// single numeric column whose value differs from Value; Column is ""
	// otherwise.
	Column string
	Raw    float64
	// Opposite, when not "", is a term whose product is infinite with the
	// opposite sign, so that the sum is ∞ − ∞ (NaN).
	Opposite string
	// LP is the linear predictor: ±Inf or NaN.
	LP float64
}

// Error says which term made the row's linear predictor overflow.
func (e *LPOverflowError) Error() string {
	where := fmt.Sprintf("line %d", e.Line)
	if e.Row {
		where = fmt.Sprintf("row %d", e.Line)
	}
	value := fmt.Sprintf("%g", e.Value)
	if e.Column != "" {
		value += fmt.Sprintf(" (from %s = %g in the data)", e.Column, e.Raw)
	}
	s := fmt.Sprintf("the model's linear predictor overflowed on %s of %s: term %s, coefficient %g × value %s = %g", where, pathtext.Path(e.Data), e.Term, e.Coef, value, e.Product)
	switch {
	case e.Opposite != "":
		s += fmt.Sprintf(", against an infinite product of the opposite sign from term %s, gives ∞ − ∞", e.Opposite)
	case !math.IsInf(e.Product, 0):
		s += fmt.Sprintf(", the largest of the products whose sum, %g, exceeds the floating-point range", e.LP)
	default:
		s += fmt.Sprintf(" makes the linear predictor %g", e.LP)
	}
	return s + "; the model's coefficients cannot be applied to this value (check their scale, or the predictor's center and scale)"
}

// overflow explains the non-finite linear predictor lp of matrix row r.
func (d *Design) overflow(m *Matrix, beta []float64, r int, lp float64) error {
	x := make([]float64, m.P)
	i := m.Rows[r]
	if m.X != nil {
		copy(x, m.X[r*m.P:(r+1)*m.P])
	} else if err := d.row(i, x); err != nil {
		return err
	}
	e := &LPOverflowError{Data: d.frame.File, Line: d.frame.Line(i), Row: d.frame.RowNumbered, LP: lp}
	worst, first := -1, -1
	for j, b := range beta {
		v := b * x[j]
		if math.IsInf(v, 0) {
			if first < 0 {
				first = j
			} else if e.Opposite == "" && math.Signbit(v) != math.Signbit(beta[first]*x[first]) {
				e.Opposite = d.Terms[j]
			}
		}
		if worst < 0 || math.Abs(v) > math.Abs(beta[worst]*x[worst]) {
			worst = j
		}
	}
	k := worst
	if first >= 0 {
		k = first
	}
	e.Term, e.Coef, e.Value, e.Product = d.Terms[k], beta[k], x[k], beta[k]*x[k]
	line := 0
	if en := d.termEntry(k); en != nil {
		line = en.pred.Line
		if en.kind != categorical && en.kind != product && en.col != nil && en.col.Num[i] != x[k] {
			e.Column, e.Raw = en.col.Name, en.col.Num[i]
		}
	}
	return &SpecError{File: d.Spec.File, Line: line, Msg: e.Error(), Kind: ErrLPOverflow, Err: e}
}

// termEntry returns the entry that holds term k (nil for the
// intercept).
func (d *Design) termEntry(k int) *entry {
	for i := range d.entries {
		e := &d.entries[i]
		if k >= e.offset && k < e.offset+len(e.labels) {
			return e
		}
	}
	return nil
}

// Coefficients returns the frozen spec's coefficients in the design's term
// order, checking that the spec gives one for every term and none for a
// term the model lacks.
func (d *Design) Coefficients() ([]float64, error) {
	s := d.Spec
	if !s.Frozen() {
		return nil, &SpecError{File: s.File, Msg: "the spec is a recipe (it has no intercept); fit it first", Kind: ErrNotFrozen}
	}
	beta := make([]float64, len(d.Terms))
	beta[0] = s.Intercept
	for k := range d.entries {
		e := &d.entries[k]
		pr := e.pred
		t := beta[e.offset : e.offset+len(e.labels)]
		switch {
		case e.kind == categorical:
			for j, l := range pr.Levels {
				t[j] = l.Value
			}
		case pr.HasCoef && len(e.labels) == 1 && pr.Coefs == nil:
			t[0] = pr.Coef
		case pr.Coefs != nil && !pr.HasCoef:
			// A term may be named in the earlier spline form (bmi'),
			// read as the current one (bmi [spline 1]).
			byTerm := map[string]Coef{}
			for _, c := range pr.Coefs {
				byTerm[upgradeTermLabel(c.Term)] = c
			}
			for j, l := range e.labels {
				c, ok := byTerm[l]
				if !ok {
					return nil, &SpecError{File: s.File, Line: pr.Line, Msg: fmt.Sprintf("coefs has no coefficient for term %q (terms: %v)", l, e.labels), Kind: ErrCoefficients}
				}
				t[j] = c.Value
				delete(byTerm, l)
			}
			for _, c := range pr.Coefs {
				if _, extra := byTerm[upgradeTermLabel(c.Term)]; extra {
					return nil, &SpecError{File: s.File, Line: c.Line, Msg: fmt.Sprintf("coefs names %q, which is not a term of this predictor (terms: %v)", c.Term, e.labels), Kind: ErrCoefficients}
				}
			}
		case len(e.labels) == 1:
			return nil, &SpecError{File: s.File, Line: pr.Line, Msg: fmt.Sprintf("frozen predictor %s needs coef (or coefs with its one term)", describe(pr)), Kind: ErrCoefficients}
		default:
			return nil, &SpecError{File: s.File, Line: pr.Line, Msg: fmt.Sprintf("frozen predictor %s has %d terms and needs coefs with a coefficient for each of %v", describe(pr), len(e.labels), e.labels), Kind: ErrCoefficients}
		}
	}
	return beta, nil
}

func describe(pr *Predictor) string {
	if pr.Product != nil {
		return fmt.Sprintf("product %v", pr.Product)
	}
	return strconv.Quote(pr.Column)
}

// Freeze returns the fitted model as a frozen spec: the recipe with its
// coefficients, reference levels, knot positions and each numeric
// predictor's development range filled in, and the given provenance.
func (f *Fitted) Freeze(prov Provenance) *Spec {
	return freeze(f.Design, f.Result.Coef, prov)
}

// FreezeWith returns a frozen spec with the design's terms and the given
// coefficients (in term order). The development ranges are those of the
// rows a recipe's design was built on; a frozen model's design (an
// update's) keeps the ranges its spec states.
func FreezeWith(d *Design, beta []float64, prov Provenance) *Spec {
	return freeze(d, beta, prov)
}

func freeze(d *Design, beta []float64, prov Provenance) *Spec {
	s := *d.Spec
	s.Intercept, s.HasIntercept = beta[0], true
	s.Predictors = make([]Predictor, len(d.Spec.Predictors))
	for k := range d.entries {
		e := &d.entries[k]
		pr := *e.pred
		t := beta[e.offset : e.offset+len(e.labels)]
		pr.HasCoef, pr.Coefs, pr.Levels = false, nil, nil
		switch {
		case e.kind == categorical:
			pr.Reference, pr.HasReference = e.reference, true
			for j, l := range e.levels {
				pr.Levels = append(pr.Levels, Coef{Term: l, Value: t[j]})
			}
		case len(e.labels) == 1:
			pr.Coef, pr.HasCoef = t[0], true
		default:
			for j, l := range e.labels {
				pr.Coefs = append(pr.Coefs, Coef{Term: l, Value: t[j]})
			}
		}
		if pr.Spline != nil {
			sp := *pr.Spline
			sp.Knots, sp.Count = e.knots, 0
			pr.Spline = &sp
		}
		if e.rng != nil {
			// A frozen spec's own range (an update's parent) is kept.
			rng := *e.rng
			pr.Range = &rng
		}
		s.Predictors[k] = pr
	}
	s.Provenance = &prov
	return &s
}

// LinearPredictors returns the linear predictor of every matrix row for
// coefficients beta.
func LinearPredictors(m *Matrix, beta []float64) []float64 {
	d := logistic.Data{X: m.X, N: m.N, P: m.P}
	return d.LinearPredictor(beta, make([]float64, m.N))
}

// Risk is the predicted risk of a linear predictor.
func Risk(lp float64) float64 { return logistic.Expit(lp) }

// Risks returns the risk of every linear predictor (Risk of each); a NaN
// linear predictor gives a NaN risk.
func Risks(lp []float64) []float64 {
	p := make([]float64, len(lp))
	for i, v := range lp {
		p[i] = logistic.Expit(v)
	}
	return p
}

// MarshalYAML writes the spec in the fixed schema, keys in a stable order.
func (s *Spec) MarshalYAML() ([]byte, error) {
	root := mapping()
	if s.Name != "" {
		add(root, "name", str(s.Name))
	}
	if !s.Purpose.IsZero() {
		pu := mapping()
		for _, k := range PurposeKeys {
			if v := s.Purpose.Get(k); v != "" {
				add(pu, k, str(v))
			}
		}
		add(root, "purpose", pu)
	}
	o := mapping()
	add(o, "column", str(s.Outcome.Column))
	add(o, "event", val(s.Outcome.Event))
	if s.Outcome.NonEvent != nil {
		add(o, "non_event", val(*s.Outcome.NonEvent))
	}
	add(root, "outcome", o)
	if s.HasIntercept {
		add(root, "intercept", num(s.Intercept))
	}
	preds := &yaml.Node{Kind: yaml.SequenceNode}
	for _, pr := range s.Predictors {
		preds.Content = append(preds.Content, predictorNode(&pr))
	}
	add(root, "predictors", preds)
	if pv := s.Provenance; pv != nil {
		p := mapping()
		add(p, "method", str(pv.Method))
		add(p, "data_file", str(pv.DataFile))
		add(p, "data_sha256", str(pv.DataSHA256))
		add(p, "rows_used", whole(pv.RowsUsed))
		add(p, "events", whole(pv.Events))
		add(p, "fitted_at", str(pv.FittedAt))
		add(p, "tool_version", str(pv.ToolVersion))
		if pv.RecipeFile != "" {
			add(p, "recipe_file", str(pv.RecipeFile))
		}
		if pv.ParentSHA256 != "" {
			add(p, "parent_model_sha256", str(pv.ParentSHA256))
		}
		if pv.ParentFile != "" {
			add(p, "parent_model_file", str(pv.ParentFile))
		}
		add(root, "provenance", p)
	}
	doc := &yaml.Node{Kind: yaml.DocumentNode, Content: []*yaml.Node{root}}
	var b bytes.Buffer
	enc := yaml.NewEncoder(&b)
	enc.SetIndent(2)
	if err := enc.Encode(doc); err != nil {
		return nil, err
	}
	if err := enc.Close(); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

func predictorNode(pr *Predictor) *yaml.Node {
	n := mapping()
	if pr.Product != nil {
		seq := &yaml.Node{Kind: yaml.SequenceNode, Style: yaml.FlowStyle}
		for _, c := range pr.Product {
			seq.Content = append(seq.Content, str(c))
		}
		add(n, "product", seq)
	} else {
		add(n, "column", str(pr.Column))
	}
	if pr.Categorical {
		add(n, "categorical", &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!bool", Value: "true"})
		if pr.HasReference {
			add(n, "reference", str(pr.Reference))
		}
	}
	if pr.Center != 0 {
		add(n, "center", num(pr.Center))
	}
	if pr.Scale != 1 {
		add(n, "scale", num(pr.Scale))
	}
	if pr.Log {
		add(n, "log", &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!bool", Value: "true"})
	}
	if pr.Powers != nil {
		add(n, "powers", nums(pr.Powers))
	}
	if sp := pr.Spline; sp != nil {
		m := mapping()
		if sp.Knots != nil {
			add(m, "knots", nums(sp.Knots))
		} else {
			add(m, "knots", num(float64(sp.Count)))
		}
		add(m, "normalise", str(sp.Normalise))
		add(n, "spline", m)
	}
	if pr.HasCoef {
		add(n, "coef", num(pr.Coef))
	}
	if pr.Levels != nil {
		add(n, "levels", coefMapNode(pr.Levels))
	}
	if pr.Coefs != nil {
		add(n, "coefs", coefMapNode(pr.Coefs))
	}
	if r := pr.Range; r != nil {
		m := &yaml.Node{Kind: yaml.MappingNode, Style: yaml.FlowStyle}
		add(m, "min", num(r.Min))
		add(m, "max", num(r.Max))
		add(n, "development_range", m)
	}
	return n
}

func coefMapNode(cs []Coef) *yaml.Node {
	m := mapping()
	for _, c := range cs {
		add(m, c.Term, num(c.Value))
	}
	return m
}

func mapping() *yaml.Node { return &yaml.Node{Kind: yaml.MappingNode} }

func add(m *yaml.Node, key string, v *yaml.Node) {
	m.Content = append(m.Content, str(key), v)
}

// str is a string scalar, quoted when a YAML 1.2 or 1.1 reader would
// take it for another type (1.1 readers take yes, no, on and off for
// booleans).
func str(s string) *yaml.Node {
	n := &yaml.Node{Kind: yaml.ScalarNode, Tag: "!!str", Value: s}
	switch strings.ToLower(s) {
	case "y", "n", "yes", "no", "on", "off", "true", "false", "null", "~", "":
		n.Style = yaml.DoubleQuotedStyle
	}
	if _, err := strconv.ParseFloat(s, 64); err == nil {
		n.Style = yaml.DoubleQuotedStyle
	}
	return n
}

func val(v Value) *yaml.Node {
	if v.IsNum {
		return &yaml.Node{Kind: yaml.ScalarNode, Value: v.Text}
	}
	return str(v.Text)
}

// num writes a float in its shortest form that reads back exactly.
func num(v float64) *yaml.Node {
	s := strconv.FormatFloat(v, 'g', -1, 64)
	if math.Trunc(v) == v && math.Abs(v) < 1e15 {
		s = strconv.FormatFloat(v, 'f', -1, 64)
	}
	return &yaml.Node{Kind: yaml.ScalarNode, Value: s}
}

// whole writes a count in decimal digits, which num would round beyond
// 2^53.
func whole(n int) *yaml.Node {
	return &yaml.Node{Kind: yaml.ScalarNode, Value: strconv.Itoa(n)}
}

func nums(vs []float64) *yaml.Node {
	seq := &yaml.Node{Kind: yaml.SequenceNode, Style: yaml.FlowStyle}
	for _, v := range vs {
		seq.Content = append(seq.Content, num(v))
	}
	return seq
}
