package model

import (
	"fmt"
	"math"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/metrics"
)

// InterceptTerm is the label of the intercept in term lists.
const InterceptTerm = "intercept"

// Design is a spec bound to the columns of one cohort: every predictor
// entry with its coding (levels, knots) and its term labels.
type Design struct {
	Spec    *Spec
	entries []entry
	// Terms are the term labels, the intercept first.
	Terms []string
	// outcome codes: 1 event, 0 non-event, -1 invalid, by outcome level.
	outcome []int8
	ocol    *cohort.Column
	frame   *cohort.Frame
	// NonEvents names, when the outcome has no stated non-event value
	// and the used rows hold more than one value other than the event,
	// every such value with its rows: all are counted as non-events,
	// which a code such as "unknown" or "2" should not be. Empty
	// otherwise.
	NonEvents []ValueCount
}

// ValueCount is a value of a column and the number of rows holding it.
type ValueCount struct {
	Value string
	Rows  int
}

type entryKind int

const (
	linear entryKind = iota
	logTerm
	powers
	spline
	categorical
	product
)

type entry struct {
	pred   *Predictor
	kind   entryKind
	col    *cohort.Column
	labels []string
	// categorical: code of each data level → index of its indicator
	// term, -1 for the reference, -2 for a level the model lacks.
	codeTerm  []int
	reference string
	levels    []string // non-reference levels, in term order
	knots     []float64
	norm      bool
	factors   [2]int // product: entry indices
	offset    int    // first term's position in a row, after the intercept
	// rng is the column's range over the rows the design uses, found for
	// a recipe's numeric entry (nil otherwise): the development range the
	// frozen model states.
	rng *Range
}

// Options control how a design is built.
type Options struct {
	// Outcome reads the outcome column; it is needed to fit or audit, not
	// to score.
	Outcome bool
	// FailOnMissing makes a missing value an error instead of a reason to
	// leave the row out.
	FailOnMissing bool
	// Also names further columns whose missing values leave a row out, so
	// that two models can be fitted to the same rows.
	Also []string
	// CohortCodes says that the data are an audited cohort, which may
	// code the model's outcome otherwise and can say so with the audit's
	// --outcome, --event and --non-event: the outcome errors hint at
	// them first.
	CohortCodes bool
	// NoMatrix leaves Matrix.X empty: a frozen model that only scores
	// needs no design matrix. The terms are then evaluated, and their
	// values checked, by Design.LinearPredictors.
	NoMatrix bool
}

// Exclusion counts the rows left out for missing values in one column.
// A row missing several columns counts once in each.
type Exclusion struct {
	Column string `json:"column"`
	Rows   int    `json:"rows"`
}

// Matrix is the design matrix of the complete cases.
type Matrix struct {
	// X holds N rows of P values (the intercept column first).
	X    []float64
	N, P int
	// Y holds the outcomes (1 event, 0 non-event) when read.
	Y []float64
	// Rows holds the frame row of each matrix row.
	Rows []int
	// Terms are the column labels of X.
	Terms []string
	// Total counts the frame's rows; Excluded those left out.
	Total, Excluded int
	// ByColumn counts the missing values behind the exclusions.
	ByColumn []Exclusion
}

// Events counts the events in the matrix rows.
func (m *Matrix) Events() int {
	n := 0
	for _, y := range m.Y {
		if y == 1 {
			n++
		}
	}
	return n
}

// Build binds spec to frame and returns the design and the matrix of
// complete cases. For a recipe, categorical levels and knot positions come
// from the complete cases; for a frozen model they come from the spec, and
// a level the model does not know is an error.
func Build(spec *Spec, fr *cohort.Frame, opt Options) (*Design, *Matrix, error) {
	d := &Design{Spec: spec, frame: fr}
	if opt.Outcome {
		d.ocol = fr.Column(spec.Outcome.Column)
		if d.ocol == nil {
			return nil, nil, fmt.Errorf("model: the outcome column %q was not read", spec.Outcome.Column)
		}
	}
	used, m, err := d.completeCases(opt)
	if err != nil {
		return nil, nil, err
	}
	if err := d.bind(used); err != nil {
		return nil, nil, err
	}
	if opt.Outcome {
		if err := d.mapOutcome(used, opt.CohortCodes); err != nil {
			return nil, nil, err
		}
	}
	m.P = len(d.Terms)
	m.Terms = d.Terms
	if !opt.NoMatrix {
		m.X = make([]float64, m.N*m.P)
	}
	if opt.Outcome {
		m.Y = make([]float64, m.N)
	}
	if opt.NoMatrix {
		if opt.Outcome {
			for r, i := range m.Rows {
				m.Y[r] = float64(d.outcome[d.ocol.Codes[i]])
			}
		}
		return d, m, nil
	}
	if err := d.fill(m, opt.Outcome); err != nil {
		return nil, nil, err
	}
	return d, m, nil
}

// fill writes the matrix rows, splitting them between two goroutines
// when there are many; the first error in row order is returned.
func (d *Design) fill(m *Matrix, outcome bool) error {
	return d.eachRow(m, outcome, nil)
}

// LinearPredictors returns the linear predictor Xβ of every matrix row,
// from the matrix when it was built, otherwise term by term from the
// frame, on two goroutines for large cohorts.
func (d *Design) LinearPredictors(m *Matrix, beta []float64) ([]float64, error) {
	if m.X != nil {
		return LinearPredictors(m, beta), nil
	}
	lp := make([]float64, m.N)
	err := d.eachRow(m, false, func(r int, x []float64) {
		eta := 0.0
		for j, b := range beta {
			eta += x[j] * b
		}
		lp[r] = eta
	})
	return lp, err
}

// eachRow evaluates the terms of every matrix row into X (or a scratch
// row) and the outcome into Y, and hands each row to visit when it is not
// nil.
func (d *Design) eachRow(m *Matrix, outcome bool, visit func(r int, x []float64)) error {
	work := func(lo, hi int) error {
		buf := make([]float64, m.P)
		for r := lo; r < hi; r++ {
			i := m.Rows[r]
			out := buf
			if m.X != nil {
				out = m.X[r*m.P : (r+1)*m.P]
			}
			if err := d.row(i, out); err != nil {
				return err
			}
			if outcome {
				m.Y[r] = float64(d.outcome[d.ocol.Codes[i]])
			}
			if visit != nil {
				visit(r, out)
			}
		}
		return nil
	}
	if m.N < 50000 || runtime.GOMAXPROCS(0) < 2 {
		return work(0, m.N)
	}
	mid := m.N / 2
	var errHi error
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		errHi = work(mid, m.N)
	}()
	errLo := work(0, mid)
	wg.Wait()
	if errLo != nil {
		return errLo
	}
	return errHi
}

func (d *Design) completeCases(opt Options) ([]bool, *Matrix, error) {
	fr := d.frame
	cols := []*cohort.Column{}
	if d.ocol != nil {
		cols = append(cols, d.ocol)
	}
	names := []string{}
	for _, r := range d.Spec.Columns(false) {
		names = append(names, r.Name)
	}
	for _, a := range opt.Also {
		if !slices.Contains(names, a) && (d.ocol == nil || a != d.ocol.Name) {
			names = append(names, a)
		}
	}
	for _, name := range names {
		c := fr.Column(name)
		if c == nil {
			return nil, nil, fmt.Errorf("model: column %q was not read", name)
		}
		cols = append(cols, c)
	}
	m := &Matrix{Total: fr.Rows, Rows: make([]int, 0, fr.Rows)}
	used := make([]bool, fr.Rows)
	for i := range used {
		used[i] = true
	}
	counts := make([]int, len(cols))
	if opt.FailOnMissing {
		// The first missing value in file order (then column order).
		row, col := fr.Rows, (*cohort.Column)(nil)
		for _, c := range cols {
			for i := 0; i < row && c.Missing > 0; i++ {
				if c.IsMissing(i) {
					row, col = i, c
					break
				}
			}
		}
		if col != nil {
			return nil, nil, &cohort.Error{File: fr.File, Line: fr.Line(row), Row: fr.RowNumbered, Cell: fr.CellRef(fr.Line(row), col.Name), Column: col.Name,
				Msg: "missing value (the missing-value policy is fail)", Kind: cohort.ErrMissing}
		}
	}
	// Column by column: tight loops over contiguous values.
	for k, c := range cols {
		if c.Missing == 0 {
			continue
		}
		if c.Kind == cohort.Numeric {
			for i, v := range c.Num {
				if v != v {
					used[i] = false
					counts[k]++
				}
			}
		} else {
			for i, v := range c.Codes {
				if v < 0 {
					used[i] = false
					counts[k]++
				}
			}
		}
	}
	for i, ok := range used {
		if ok {
			m.Rows = append(m.Rows, i)
		}
	}
	m.N = len(m.Rows)
	m.Excluded = m.Total - m.N
	for k, c := range cols {
		if counts[k] > 0 {
			m.ByColumn = append(m.ByColumn, Exclusion{Column: c.Name, Rows: counts[k]})
		}
	}
	if m.N == 0 {
		return nil, nil, &cohort.Error{File: fr.File, Msg: fmt.Sprintf("no row has values in every column the model uses (%s)", describeExclusions(m.ByColumn)), Kind: cohort.ErrMissing}
	}
	return used, m, nil
}

func describeExclusions(ex []Exclusion) string {
	parts := make([]string, len(ex))
	for i, e := range ex {
		parts[i] = fmt.Sprintf("%q missing in %d rows", e.Column, e.Rows)
	}
	return strings.Join(parts, ", ")
}

// bind resolves every entry's coding and labels.
func (d *Design) bind(used []bool) error {
	s := d.Spec
	d.Terms = []string{InterceptTerm}
	byColumn := map[string]int{}
	d.entries = make([]entry, len(s.Predictors))
	for i := range s.Predictors {
		pr := &s.Predictors[i]
		e := &d.entries[i]
		e.pred = pr
		e.offset = len(d.Terms)
		var err error
		switch {
		case pr.Product != nil:
			err = d.bindProduct(e, byColumn)
		case pr.Categorical:
			err = d.bindCategorical(e, used)
		default:
			err = d.bindNumeric(e, used)
		}
		if err != nil {
			return err
		}
		if pr.Column != "" {
			if _, ok := byColumn[pr.Column]; !ok {
				byColumn[pr.Column] = i
			}
		}
		d.Terms = append(d.Terms, e.labels...)
	}
	seen := map[string]bool{}
	for _, t := range d.Terms {
		if seen[t] {
			return &SpecError{File: s.File, Msg: fmt.Sprintf("term %q appears twice in the model", t), Kind: ErrConflict}
		}
		seen[t] = true
	}
	return nil
}

func (d *Design) bindNumeric(e *entry, used []bool) error {
	pr := e.pred
	e.col = d.frame.Column(pr.Column)
	name := pr.Column
	if !d.Spec.Frozen() {
		e.rng = usedRange(e.col.Num, used)
	}
	switch {
	case pr.Log:
		e.kind = logTerm
		e.labels = []string{"log(" + name + ")"}
	case pr.Powers != nil:
		e.kind = powers
		for i, p := range pr.Powers {
			switch {
			case i == 1 && p == pr.Powers[0] && p == 0:
				e.labels = append(e.labels, "log("+name+")^2")
			case i == 1 && p == pr.Powers[0]:
				e.labels = append(e.labels, name+"^"+fmtNum(p)+"*log("+name+")")
			case p == 0:
				e.labels = append(e.labels, "log("+name+")")
			default:
				e.labels = append(e.labels, name+"^"+fmtNum(p))
			}
		}
	case pr.Spline != nil:
		e.kind = spline
		e.norm = pr.Spline.Normalise != "none"
		e.knots = pr.Spline.Knots
		if e.knots == nil {
			z := make([]float64, 0, len(used))
			for i, ok := range used {
				if ok {
					z = append(z, (e.col.Num[i]-pr.Center)/pr.Scale)
				}
			}
			k, err := DefaultKnots(z, pr.Spline.Count)
			if err != nil {
				return &SpecError{File: d.Spec.File, Line: pr.Line, Msg: fmt.Sprintf("predictor %q: %v", name, err), Kind: ErrSpecData, Err: err}
			}
			e.knots = k
		}
		e.labels = []string{name}
		for j := 1; j < len(e.knots)-1; j++ {
			e.labels = append(e.labels, SplineTermLabel(name, j))
		}
	default:
		e.kind = linear
		e.labels = []string{name}
	}
	return nil
}

// usedRange is the smallest and largest of the values x[i] with used[i]
// set (every used value is present: complete cases), or nil when no row
// is used.
func usedRange(x []float64, used []bool) *Range {
	var r *Range
	for i, ok := range used {
		if !ok {
			continue
		}
		v := x[i]
		switch {
		case r == nil:
			r = &Range{Min: v, Max: v}
		case v < r.Min:
			r.Min = v
		case v > r.Max:
			r.Max = v
		}
	}
	return r
}

func (d *Design) bindCategorical(e *entry, used []bool) error {
	pr := e.pred
	e.kind = categorical
	e.col = d.frame.Column(pr.Column)
	c := e.col
	present := make([]bool, len(c.Levels))
	for i, ok := range used {
		if ok {
			present[c.Codes[i]] = true
		}
	}
	if d.Spec.Frozen() {
		e.reference = pr.Reference
		for _, l := range pr.Levels {
			if l.Term == pr.Reference {
				return &SpecError{File: d.Spec.File, Line: l.Line, Msg: fmt.Sprintf("predictor %q: the reference level %q cannot have a coefficient", pr.Column, l.Term), Kind: ErrCoefficients}
			}
			e.levels = append(e.levels, l.Term)
		}
	} else {
		var levels []string
		for code, ok := range present {
			if ok {
				levels = append(levels, c.Levels[code])
			}
		}
		cohort.SortLevels(levels)
		e.reference = levels[0]
		if pr.HasReference {
			e.reference = pr.Reference
			found := false
			for _, l := range levels {
				found = found || l == pr.Reference
			}
			if !found {
				return &SpecError{File: d.Spec.File, Line: pr.Line, Msg: fmt.Sprintf("predictor %s: the reference level %s does not occur in the data (levels: %s)", cohort.Quote(pr.Column), cohort.Quote(pr.Reference), cohort.ClipList(levels)), Kind: ErrSpecData}
			}
		}
		for _, l := range levels {
			if l != e.reference {
				e.levels = append(e.levels, l)
			}
		}
	}
	index := map[string]int{}
	for j, l := range e.levels {
		index[l] = j
		e.labels = append(e.labels, pr.Column+"="+l)
	}
	e.codeTerm = make([]int, len(c.Levels))
	for code, l := range c.Levels {
		j, ok := index[l]
		switch {
		case l == e.reference:
			e.codeTerm[code] = -1
		case ok:
			e.codeTerm[code] = j
		default:
			e.codeTerm[code] = -2
			if present[code] {
				return &cohort.Error{File: d.frame.File, Line: c.LevelLine[code], Row: d.frame.RowNumbered, Cell: d.frame.CellRef(c.LevelLine[code], pr.Column), Column: pr.Column, Value: l, HasValue: true,
					Msg: fmt.Sprintf("a level the model does not know (it knows %s)", cohort.ClipList(append([]string{e.reference}, e.levels...))), Kind: cohort.ErrLevel}
			}
		}
	}
	return nil
}

func (d *Design) bindProduct(e *entry, byColumn map[string]int) error {
	pr := e.pred
	e.kind = product
	for k, c := range pr.Product {
		j, ok := byColumn[c]
		if !ok {
			return &SpecError{File: d.Spec.File, Line: pr.Line, Msg: fmt.Sprintf("product names %q before its own entry: list the product after the predictors it multiplies", c), Kind: ErrConflict}
		}
		e.factors[k] = j
	}
	a, b := d.entries[e.factors[0]], d.entries[e.factors[1]]
	for _, la := range a.labels {
		for _, lb := range b.labels {
			e.labels = append(e.labels, la+"*"+lb)
		}
	}
	return nil
}

// The hints of an outcome value that is neither the model's event nor
// its non-event: the audit's own flags first for an audited cohort.
const (
	recodeHint = "the model names its outcome's codes: recode the column to them, or write the model's risks with 'riskaudit score' and audit that column with --predicted, --outcome and --event"
	flagsHint  = "the model names its outcome's codes: if this cohort codes the outcome otherwise, say how with --outcome, --event and --non-event beside --model; " +
		"or recode the column to the model's codes, or write the model's risks with 'riskaudit score' and audit that column with --predicted, --outcome and --event"
)

// mapOutcome codes every outcome level present in the used rows as event
// or non-event, and refuses values that are neither; cohortCodes is
// Options.CohortCodes.
func (d *Design) mapOutcome(used []bool, cohortCodes bool) error {
	o := d.Spec.Outcome
	c := d.ocol
	d.outcome = make([]int8, len(c.Levels))
	present := make([]int, len(c.Levels))
	for i, ok := range used {
		if ok {
			present[c.Codes[i]]++
		}
	}
	var bad []int
	events, nonEvents := 0, 0
	for code, l := range c.Levels {
		switch {
		case o.Event.Matches(l):
			d.outcome[code] = 1
			events += present[code]
		case o.NonEvent == nil || o.NonEvent.Matches(l):
			d.outcome[code] = 0
			nonEvents += present[code]
		default:
			d.outcome[code] = -1
			if present[code] > 0 {
				bad = append(bad, code)
			}
		}
	}
	seen := func() string {
		var vals []string
		for code, l := range c.Levels {
			if present[code] > 0 {
				vals = append(vals, l)
			}
		}
		return cohort.QuoteList(vals)
	}
	hint := recodeHint
	if cohortCodes {
		hint = flagsHint
	}
	if len(bad) > 0 {
		code := bad[0]
		return &cohort.Error{File: d.frame.File, Line: c.LevelLine[code], Row: d.frame.RowNumbered, Cell: d.frame.CellRef(c.LevelLine[code], c.Name), Column: c.Name, Value: c.Levels[code], HasValue: true,
			Msg: fmt.Sprintf("neither the event %s nor the non-event %s; values seen: %s (%s)", cohort.Quote(o.Event.Text), cohort.Quote(o.NonEvent.Text), seen(), hint), Kind: cohort.ErrOutcome}
	}
	if events == 0 {
		hint, distinct := "", 0
		for _, n := range present {
			if n > 0 {
				distinct++
			}
		}
		if cohortCodes && distinct > 1 {
			hint = " (if this cohort codes the event otherwise, give its value with --event beside --model)"
		}
		return &cohort.Error{File: d.frame.File, Column: c.Name, Msg: fmt.Sprintf("no events (no row equals the event value %s); values seen: %s%s", cohort.Quote(o.Event.Text), seen(), hint), Kind: cohort.ErrOutcome}
	}
	if nonEvents == 0 {
		return &cohort.Error{File: d.frame.File, Column: c.Name, Msg: fmt.Sprintf("no non-events (every row equals the event value %s)", cohort.Quote(o.Event.Text)), Kind: cohort.ErrOutcome}
	}
	if o.NonEvent == nil {
		var vc []ValueCount
		for code, l := range c.Levels {
			if d.outcome[code] == 0 && present[code] > 0 {
				vc = append(vc, ValueCount{l, present[code]})
			}
		}
		if len(vc) > 1 {
			d.NonEvents = vc
		}
	}
	return nil
}

// row writes the terms of frame row i into out (len(d.Terms) values,
// the intercept's 1 first).
func (d *Design) row(i int, out []float64) error {
	out[0] = 1
	for k := range d.entries {
		e := &d.entries[k]
		t := out[e.offset : e.offset+len(e.labels)]
		switch e.kind {
		case product:
			a, b := &d.entries[e.factors[0]], &d.entries[e.factors[1]]
			ta := out[a.offset : a.offset+len(a.labels)]
			tb := out[b.offset : b.offset+len(b.labels)]
			for x, va := range ta {
				for y, vb := range tb {
					t[x*len(tb)+y] = va * vb
				}
			}
		case categorical:
			for j := range t {
				t[j] = 0
			}
			if j := e.codeTerm[e.col.Codes[i]]; j >= 0 {
				t[j] = 1
			} else if j == -2 {
				c := e.col
				return &cohort.Error{File: d.frame.File, Line: d.frame.Line(i), Row: d.frame.RowNumbered, Cell: d.frame.CellRef(d.frame.Line(i), c.Name), Column: c.Name, Value: c.Levels[c.Codes[i]], HasValue: true, Msg: "a level the model does not know", Kind: cohort.ErrLevel}
			}
		default:
			if err := d.numericTerms(e, i, t); err != nil {
				return err
			}
		}
	}
	return nil
}

func (d *Design) numericTerms(e *entry, i int, t []float64) error {
	pr := e.pred
	x := e.col.Num[i]
	z := (x - pr.Center) / pr.Scale
	switch e.kind {
	case linear:
		t[0] = z
	case logTerm, powers:
		if z <= 0 {
			what := "log needs"
			if e.kind == powers {
				what = "fractional-polynomial powers need"
			}
			return &cohort.Error{File: d.frame.File, Line: d.frame.Line(i), Row: d.frame.RowNumbered, Cell: d.frame.CellRef(d.frame.Line(i), pr.Column), Column: pr.Column, Value: fmtNum(x), HasValue: true,
				Msg: fmt.Sprintf("%s positive values of (x − center)/scale", what), Kind: cohort.ErrDomain}
		}
		if e.kind == logTerm {
			t[0] = math.Log(z)
			return nil
		}
		FPTerms(z, pr.Powers, t)
	case spline:
		SplineBasis(z, e.knots, e.norm, t)
	}
	return nil
}

// FPTerms writes the fractional-polynomial terms of z > 0 for the given
// powers into out (Royston & Altman 1994): z^p, with z^0 read as ln z;
// when the second power repeats the first, the second term is the first
// times ln z.
func FPTerms(z float64, powers []float64, out []float64) {
	for k, p := range powers {
		h := math.Log(z)
		if p != 0 {
			h = math.Pow(z, p)
		}
		if k == 1 && p == powers[0] {
			h = out[0] * math.Log(z)
		}
		out[k] = h
	}
}

// SplineBasis writes the restricted cubic spline basis of x for knots
// t_1 < … < t_k into out (k − 1 values): out[0] = x and, for
// j = 1 … k − 2,
//
//	(x − t_j)₊³ − (x − t_{k−1})₊³ (t_k − t_j)/(t_k − t_{k−1})
//	            + (x − t_k)₊³ (t_{k−1} − t_j)/(t_k − t_{k−1}),
//
// divided by (t_k − t_1)² when norm is set (Durrleman & Simon 1989,
// Statistics in Medicine 8:551–561, with the scaling that keeps the terms
// on the scale of x).
func SplineBasis(x float64, t []float64, norm bool, out []float64) {
	k := len(t)
	out[0] = x
	tk, tk1 := t[k-1], t[k-2]
	div := 1.0
	if norm {
		div = (tk - t[0]) * (tk - t[0])
	}
	for j := 0; j < k-2; j++ {
		v := cube(x-t[j]) - cube(x-tk1)*(tk-t[j])/(tk-tk1) + cube(x-tk)*(tk1-t[j])/(tk-tk1)
		out[j+1] = v / div
	}
}

func cube(u float64) float64 {
	if u <= 0 {
		return 0
	}
	return u * u * u
}

// defaultKnotQuantiles are the knot positions, as quantiles, commonly used
// for 3 to 7 knots (recalled from Harrell 2015, Regression Modeling
// Strategies, 2nd ed., §2.4.6).
var defaultKnotQuantiles = map[int][]float64{
	3: {0.10, 0.50, 0.90},
	4: {0.05, 0.35, 0.65, 0.95},
	5: {0.05, 0.275, 0.50, 0.725, 0.95},
	6: {0.05, 0.23, 0.41, 0.59, 0.77, 0.95},
	7: {0.025, 0.1833, 0.3417, 0.50, 0.6583, 0.8167, 0.975},
}

// DefaultKnots places k knots at the default quantiles of z, with the
// quantile of linear interpolation between order statistics
// (definition 7 of Hyndman & Fan 1996, The American Statistician
// 50:361–365), each rounded to 12 significant digits: an interpolated
// quantile such as 27.1 + 0.45·0.1 is 27.145000000000003 in float64, and
// the knot the fit uses is the one the frozen model writes (27.145).
func DefaultKnots(z []float64, k int) ([]float64, error) {
	qs, ok := defaultKnotQuantiles[k]
	if !ok {
		return nil, fmt.Errorf("no default knot positions for %d knots", k)
	}
	s := append([]float64(nil), z...)
	sort.Float64s(s)
	out := make([]float64, k)
	for i, q := range qs {
		out[i] = roundSignificant(metrics.Quantile7(s, q), 12)
	}
	for i := 1; i < k; i++ {
		if out[i] <= out[i-1] {
			return nil, fmt.Errorf("the data have too few distinct values for %d knots", k)
		}
	}
	return out, nil
}

// roundSignificant rounds v to digits significant digits.
func roundSignificant(v float64, digits int) float64 {
	if v == 0 || math.IsNaN(v) || math.IsInf(v, 0) {
		return v
	}
	r, err := strconv.ParseFloat(strconv.FormatFloat(v, 'g', digits, 64), 64)
	if err != nil {
		return v
	}
	return r
}

func fmtNum(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// Load reads the columns spec needs from the cohort file at path and
// builds the design and matrix of complete cases.
func Load(spec *Spec, path string, copt cohort.Options, opt Options) (*cohort.Frame, *Design, *Matrix, error) {
	fr, err := cohort.Load(path, spec.Columns(opt.Outcome), copt)
	if err != nil {
		return nil, nil, nil, err
	}
	d, m, err := Build(spec, fr, opt)
	if err != nil {
		return nil, nil, nil, err
	}
	return fr, d, m, nil
}
