package validate

import (
	"errors"
	"fmt"
	"math"
	"strings"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/metrics"
)

// PredictorMix compares one predictor between the development data and
// the new cohort.
type PredictorMix struct {
	Column string `json:"column"`
	Kind   string `json:"kind"` // numeric or categorical
	// Numeric: means and standard deviations; categorical: the share of
	// each level (Levels) in each cohort.
	Dev    []float64 `json:"development"`
	New    []float64 `json:"new_cohort"`
	Levels []string  `json:"levels,omitempty"`
	// StdDiff is the standardised difference (new − development): for a
	// number, the difference of means over √((s²_dev + s²_new)/2); for a
	// level, the difference of shares over √((p_dev(1 − p_dev) +
	// p_new(1 − p_new))/2) (Austin 2009, Statistics in Medicine
	// 28:3083–3107). One value per level for a categorical predictor.
	StdDiff []float64 `json:"std_diff"`
	// Missing shares in each cohort, before exclusions.
	DevMissing float64 `json:"development_missing"`
	NewMissing float64 `json:"new_missing"`
	// Note explains a standardised difference that the formula leaves
	// as 0/0 or d/0: a value (or level share) that is the same constant
	// in both cohorts has difference 0 by definition; different
	// constants have none (NaN, null in JSON).
	Note string `json:"note,omitempty"`
}

// DroppedTerm is a term left out of the membership model, and why.
type DroppedTerm struct {
	Term   string `json:"term"`
	Reason string `json:"reason"`
}

// CaseMix compares the development data and the new cohort.
type CaseMix struct {
	Predictors []PredictorMix `json:"predictors"`
	// The linear predictor's mean and SD in each cohort: its spread
	// reflects case-mix heterogeneity, which drives discrimination.
	LPMeanDev float64 `json:"lp_mean_development"`
	LPSDDev   float64 `json:"lp_sd_development"`
	LPMeanNew float64 `json:"lp_mean_new"`
	LPSDNew   float64 `json:"lp_sd_new"`
	// MembershipC is the c-statistic of the membership model: a logistic
	// regression telling new-cohort rows from development rows by the
	// model's terms and the outcome (Debray et al. 2015, Journal of
	// Clinical Epidemiology 68:279–289). 0.5 means indistinguishable
	// populations; near 1, entirely different ones. NaN (null in JSON)
	// when the model could not be fitted, and then MembershipNote says
	// why.
	MembershipC float64 `json:"membership_c"`
	// MembershipDropped lists the terms left out of the membership
	// model, with the reason: constant in the stacked cohorts, or a
	// linear combination of the intercept and the terms before them, so
	// that the model could not estimate them.
	MembershipDropped []DroppedTerm `json:"membership_dropped,omitempty"`
	// MembershipNote says how the membership model was fitted when the
	// terms separate the cohorts (Firth's penalised likelihood), or why
	// it could not be fitted.
	MembershipNote string `json:"membership_note,omitempty"`
	// Interpretation says in plain words what the comparison suggests.
	Interpretation string `json:"interpretation"`
	// LPHistogram holds the linear predictors' distributions for the chart.
	LPEdges []float64 `json:"lp_edges"`
	LPDev   []float64 `json:"lp_share_development"`
	LPNew   []float64 `json:"lp_share_new"`
}

// MixInput is one cohort's side of the comparison.
type MixInput struct {
	Frame *cohort.Frame
	// Rows are the frame rows used (complete cases).
	Rows []int
	// X holds the model's terms of the used rows (intercept first), P per
	// row; Y the outcomes; LP the linear predictors.
	X     []float64
	P     int
	Y, LP []float64
	// Terms names the P columns of X (nil: "term 1", "term 2", …).
	Terms []string
}

// CompareCaseMix compares the columns named in cols (numeric or
// categorical, as read) between dev and cur, fits the membership model
// and summarises the linear predictor. The membership model is optional
// evidence: when it cannot be fitted, MembershipC is NaN with the reason
// in MembershipNote, and the comparison is returned all the same. The
// error is reserved for inconsistent input (X of the wrong size).
func CompareCaseMix(dev, cur MixInput, cols []string, perfDev, perfNew *Performance) (*CaseMix, error) {
	for _, in := range []MixInput{dev, cur} {
		if in.P < 1 || len(in.X) != len(in.Y)*in.P || len(in.LP) != len(in.Y) || in.Terms != nil && len(in.Terms) != in.P {
			return nil, fmt.Errorf("validate: case-mix input of inconsistent size (P %d, %d values of X, %d outcomes, %d linear predictors, %d terms)", in.P, len(in.X), len(in.Y), len(in.LP), len(in.Terms))
		}
	}
	if dev.P != cur.P {
		return nil, fmt.Errorf("validate: case-mix inputs with %d and %d terms", dev.P, cur.P)
	}
	cm := &CaseMix{}
	for _, name := range cols {
		a, b := dev.Frame.Column(name), cur.Frame.Column(name)
		if a == nil || b == nil {
			continue
		}
		cm.Predictors = append(cm.Predictors, comparePredictor(a, b, dev.Rows, cur.Rows, dev.Frame.Rows, cur.Frame.Rows))
	}
	cm.LPMeanDev, cm.LPSDDev = meanSD(dev.LP)
	cm.LPMeanNew, cm.LPSDNew = meanSD(cur.LP)
	cm.MembershipC, cm.MembershipDropped, cm.MembershipNote = membership(dev, cur)
	cm.LPEdges, cm.LPDev, cm.LPNew = lpHistogram(dev.LP, cur.LP, 30)
	cm.Interpretation = interpret(cm, perfDev, perfNew)
	return cm, nil
}

// stdDiff is the standardised difference (b − a)/√((va + vb)/2) of two
// means a, b with variances va, vb (Austin 2009). When both variances are
// 0 it is 0 if a = b (the same constant in both cohorts does not differ)
// and NaN otherwise (different constants: no finite difference), and the
// second result says so for the note; constant describes the value
// ("12", or "a share of 100%").
func stdDiff(a, b, va, vb float64, constant func(float64) string) (float64, string) {
	if va == 0 && vb == 0 {
		if a == b {
			return 0, fmt.Sprintf("constant (%s) in both cohorts: the standardised difference is 0 by definition", constant(a))
		}
		return math.NaN(), fmt.Sprintf("constant in each cohort but at different values (%s in development, %s in the new cohort): the standardised difference, a difference over a pooled SD of 0, is not defined", constant(a), constant(b))
	}
	return (b - a) / math.Sqrt((va+vb)/2), ""
}

func comparePredictor(a, b *cohort.Column, rowsA, rowsB []int, totalA, totalB int) PredictorMix {
	pm := PredictorMix{Column: a.Name, DevMissing: float64(a.Missing) / float64(totalA), NewMissing: float64(b.Missing) / float64(totalB)}
	if a.Kind == cohort.Numeric {
		pm.Kind = "numeric"
		va, vb := pick(a.Num, rowsA), pick(b.Num, rowsB)
		ma, sa := meanSD(va)
		mb, sb := meanSD(vb)
		pm.Dev, pm.New = []float64{ma, sa}, []float64{mb, sb}
		d, note := stdDiff(ma, mb, sa*sa, sb*sb, func(v float64) string { return fmt.Sprintf("%.6g", v) })
		pm.StdDiff, pm.Note = []float64{d}, note
		return pm
	}
	pm.Kind = "categorical"
	levels := a.SortedLevels()
	for _, l := range b.SortedLevels() {
		found := false
		for _, k := range levels {
			found = found || k == l
		}
		if !found {
			levels = append(levels, l)
		}
	}
	pm.Levels = levels
	share := func(c *cohort.Column, rows []int) []float64 {
		counts := map[string]float64{}
		for _, i := range rows {
			if c.Codes[i] >= 0 {
				counts[c.Levels[c.Codes[i]]]++
			}
		}
		out := make([]float64, len(levels))
		for j, l := range levels {
			out[j] = counts[l] / float64(len(rows))
		}
		return out
	}
	pm.Dev, pm.New = share(a, rowsA), share(b, rowsB)
	var notes []string
	for j, l := range levels {
		pa, pb := pm.Dev[j], pm.New[j]
		d, note := stdDiff(pa, pb, pa*(1-pa), pb*(1-pb), func(v float64) string { return fmt.Sprintf("a share of %.0f%%", 100*v) })
		pm.StdDiff = append(pm.StdDiff, d)
		if note != "" {
			notes = append(notes, fmt.Sprintf("level %q: %s", l, note))
		}
	}
	pm.Note = strings.Join(notes, "; ")
	return pm
}

func pick(v []float64, rows []int) []float64 {
	out := make([]float64, len(rows))
	for k, i := range rows {
		out[k] = v[i]
	}
	return out
}

func meanSD(v []float64) (float64, float64) {
	m := 0.0
	for _, x := range v {
		m += x
	}
	m /= float64(len(v))
	s := 0.0
	for _, x := range v {
		s += (x - m) * (x - m)
	}
	return m, math.Sqrt(s / float64(len(v)-1))
}

// membership fits membership ~ terms + outcome on the stacked cohorts
// (Debray et al. 2015) and returns its c-statistic, the terms it left
// out and a note. Terms that are constant in the stacked cohorts, or a
// linear combination of the intercept and the terms before them, cannot
// be estimated beside them and are left out first (aliasedColumns).
// When the remaining terms separate the cohorts (Albert & Anderson
// 1984), the maximum-likelihood fit does not exist and the model is
// fitted by Firth's penalised likelihood, whose estimates are finite,
// with a note; when that fails too, or the fit fails otherwise, the
// c-statistic is NaN and the note gives the reason.
func membership(dev, cur MixInput) (float64, []DroppedTerm, string) {
	names := append(append([]string(nil), dev.Terms...), "the outcome")
	if dev.Terms == nil {
		names = []string{"intercept"}
		for j := 1; j < dev.P; j++ {
			names = append(names, fmt.Sprintf("term %d", j))
		}
		names = append(names, "the outcome")
	}
	full := dev.P + 1
	n := len(dev.Y) + len(cur.Y)
	x := make([]float64, 0, n*full)
	y := make([]float64, 0, n)
	for _, side := range []struct {
		in MixInput
		m  float64
	}{{dev, 0}, {cur, 1}} {
		for i := range side.in.Y {
			x = append(x, side.in.X[i*side.in.P:(i+1)*side.in.P]...)
			x = append(x, side.in.Y[i])
			y = append(y, side.m)
		}
	}
	keep, why := aliasedColumns(x, n, full, names)
	var dropped []DroppedTerm
	var cols []int
	for j, k := range keep {
		if k {
			cols = append(cols, j)
		} else {
			dropped = append(dropped, DroppedTerm{Term: names[j], Reason: why[j]})
		}
	}
	p := len(cols)
	if p < full {
		sub := make([]float64, 0, n*p)
		for i := 0; i < n; i++ {
			row := x[i*full : (i+1)*full]
			for _, j := range cols {
				sub = append(sub, row[j])
			}
		}
		x = sub
	}
	data := logistic.Data{X: x, N: n, P: p, Y: y}
	note := ""
	fit, err := logistic.Fit(data, logistic.Options{})
	var sep *logistic.SeparationError
	if errors.As(err, &sep) {
		kind := "quasi-completely"
		if sep.Complete {
			kind = "completely"
		}
		var by []string
		for _, c := range sep.Columns {
			if c > 0 || len(sep.Columns) == 1 {
				by = append(by, names[cols[c]])
			}
		}
		note = fmt.Sprintf("the terms %s separate the two cohorts %s (Albert & Anderson 1984), so the maximum-likelihood membership model does not exist; it was fitted by Firth's penalised likelihood, whose estimates are finite", list(by), kind)
		if fit, err = logistic.Fit(data, logistic.Options{Firth: true}); err != nil {
			return math.NaN(), dropped, fmt.Sprintf("the terms %s separate the two cohorts %s, and neither maximum likelihood nor Firth's penalised likelihood could fit the membership model (%v)", list(by), kind, err)
		}
	}
	if err != nil {
		return math.NaN(), dropped, fmt.Sprintf("the membership model could not be fitted (%v)", err)
	}
	lp := data.LinearPredictor(fit.Coef, make([]float64, n))
	auc, _ := metrics.AUC(metrics.SortByRisk(y, lp))
	return auc.AUC, dropped, note
}

// aliasedColumns finds the columns of x (n rows of p, column 0 the
// intercept) that cannot be estimated beside the columns before them: a
// column constant over the rows (aliased with the intercept), or one
// whose part not explained by the intercept and the earlier columns kept
// is below 1e-9 of its own variation (a linear combination of them, up
// to rounding). It works on the centred cross-products C = Σ(x − x̄)(x −
// x̄)' by a Cholesky factorisation in column order that skips the
// columns it drops (the pivoted QR decomposition restricted to the
// columns' own order; Golub & Van Loan 2013, Matrix Computations, 4th
// ed., §5.4.2), so the earlier term of an aliased pair is kept. The
// second result gives each dropped column's reason, naming the kept
// columns it combines (by names).
func aliasedColumns(x []float64, n, p int, names []string) ([]bool, []string) {
	keep := make([]bool, p)
	why := make([]string, p)
	keep[0] = true
	mean := make([]float64, p)
	for i := 0; i < n; i++ {
		for j, v := range x[i*p : (i+1)*p] {
			mean[j] += v
		}
	}
	for j := range mean {
		mean[j] /= float64(n)
	}
	c := make([]float64, p*p)
	d := make([]float64, p)
	for i := 0; i < n; i++ {
		row := x[i*p : (i+1)*p]
		for j := 1; j < p; j++ {
			d[j] = row[j] - mean[j]
		}
		for a := 1; a < p; a++ {
			if d[a] == 0 {
				continue
			}
			for b := a; b < p; b++ {
				c[a*p+b] += d[a] * d[b]
			}
		}
	}
	// l holds the Cholesky factor's rows for the kept columns: for kept
	// columns a ≤ b, C[a][b] = Σ_k l[a][k] l[b][k] over kept k ≤ a.
	l := make([]float64, p*p)
	var kept []int
	for b := 1; b < p; b++ {
		cbb := c[b*p+b]
		if !(cbb > 0) {
			why[b] = fmt.Sprintf("constant (%.6g) in both cohorts, so aliased with the intercept", mean[b])
			continue
		}
		// Forward substitution: l[b][a] for the kept a, then the residual.
		res := cbb
		for _, a := range kept {
			v := c[a*p+b]
			for _, k := range kept {
				if k >= a {
					break
				}
				v -= l[a*p+k] * l[b*p+k]
			}
			v /= l[a*p+a]
			l[b*p+a] = v
			res -= v * v
		}
		if res <= 1e-9*cbb {
			why[b] = "a linear combination of " + combination(l, c, mean, kept, b, n, p, names) + " (up to rounding), so aliased with them"
			for _, a := range kept {
				l[b*p+a] = 0
			}
			continue
		}
		l[b*p+b] = math.Sqrt(res)
		keep[b] = true
		kept = append(kept, b)
	}
	return keep, why
}

// combination names the kept columns that column b (over n rows, with
// column means mean) is a combination of: those whose coefficient β_a in
// the regression of b on the kept columns (by back substitution in the
// factor l: L'β = l_b) contributes more than 1e-6 of b's variation,
// |β_a|·√C_aa > 1e-6·√C_bb, and the intercept when that regression's
// intercept is not 0.
func combination(l, c, mean []float64, kept []int, b, n, p int, names []string) string {
	beta := make([]float64, len(kept))
	for ia := len(kept) - 1; ia >= 0; ia-- {
		a := kept[ia]
		v := l[b*p+a]
		for ib := ia + 1; ib < len(kept); ib++ {
			v -= l[kept[ib]*p+a] * beta[ib]
		}
		beta[ia] = v / l[a*p+a]
	}
	var parts []string
	b0 := mean[b]
	for ia, a := range kept {
		b0 -= beta[ia] * mean[a]
		if math.Abs(beta[ia])*math.Sqrt(c[a*p+a]) > 1e-6*math.Sqrt(c[b*p+b]) {
			parts = append(parts, names[a])
		}
	}
	// The intercept of that regression, b̄ − Σ β_a ā, against b's size.
	if math.Abs(b0) > 1e-6*(math.Abs(mean[b])+math.Sqrt(c[b*p+b]/float64(n))) {
		parts = append([]string{"the intercept"}, parts...)
	}
	return list(parts)
}

// list joins words as "a", "a and b", "a, b and c".
func list(words []string) string {
	if len(words) < 2 {
		return strings.Join(words, "")
	}
	return strings.Join(words[:len(words)-1], ", ") + " and " + words[len(words)-1]
}

func lpHistogram(a, b []float64, bins int) ([]float64, []float64, []float64) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, v := range append(append([]float64(nil), a...), b...) {
		lo, hi = math.Min(lo, v), math.Max(hi, v)
	}
	if hi <= lo {
		hi = lo + 1
	}
	edges := make([]float64, bins+1)
	for i := range edges {
		edges[i] = lo + (hi-lo)*float64(i)/float64(bins)
	}
	count := func(v []float64) []float64 {
		out := make([]float64, bins)
		for _, x := range v {
			k := min(int((x-lo)/(hi-lo)*float64(bins)), bins-1)
			out[k]++
		}
		for i := range out {
			out[i] /= float64(len(v))
		}
		return out
	}
	return edges, count(a), count(b)
}

// interpret puts the comparison into words, following the reasoning of
// Debray et al. (2015): a case-mix that differs (membership c well above
// 0.5, a wider or narrower linear predictor) explains changes in
// discrimination; a change in calibration within a similar case-mix
// points to changed predictor effects, baseline risk or outcome
// definition.
func interpret(cm *CaseMix, dev, cur *Performance) string {
	c := cm.MembershipC
	similar := c < 0.6
	spread := cm.LPSDNew / cm.LPSDDev
	s := ""
	if len(cm.MembershipDropped) > 0 {
		var parts []string
		for _, d := range cm.MembershipDropped {
			parts = append(parts, d.Term+", "+d.Reason)
		}
		what := "a term"
		if len(parts) > 1 {
			what = "terms"
		}
		s += "The membership model leaves out " + what + " it could not estimate beside the others: " + strings.Join(parts, "; ") + ". "
	}
	switch {
	case math.IsNaN(c):
		s += capitalise(cm.MembershipNote) + ", so the membership model does not say how different the patients are. "
	default:
		if cm.MembershipNote != "" {
			s += capitalise(cm.MembershipNote) + ". "
		}
		s += fmt.Sprintf("The membership model tells the two cohorts apart with c = %.2f, ", c)
		switch {
		case similar:
			s += "so their patients are alike. "
		case c < 0.75:
			s += "so their patients differ moderately. "
		default:
			s += "so their patients differ strongly. "
		}
	}
	ratio := fmt.Sprintf("ratio %.2f", spread)
	if math.IsNaN(spread) || math.IsInf(spread, 0) {
		ratio = "no ratio, the development SD being 0"
	}
	s += fmt.Sprintf("The linear predictor's spread (SD) is %.2f in the new cohort against %.2f in development (%s), and its mean %.2f against %.2f. ",
		cm.LPSDNew, cm.LPSDDev, ratio, cm.LPMeanNew, cm.LPMeanDev)
	if dev == nil || cur == nil {
		return s
	}
	dAUC := cur.Discrimination.AUC - dev.Discrimination.AUC
	calOff := cur.Calibration.OECI[0] > 1 || cur.Calibration.OECI[1] < 1
	switch {
	case math.Abs(dAUC) >= 0.02 && (math.IsNaN(spread) || math.IsInf(spread, 0)):
		s += fmt.Sprintf("The AUC changed by %+.3f; with no spread of the linear predictor in development, the change cannot be set beside the case-mix spread. ", dAUC)
	case math.Abs(dAUC) >= 0.02 && math.Abs(spread-1) >= 0.1:
		s += fmt.Sprintf("The change in AUC (%+.3f) fits the change in case-mix spread: a more varied cohort is easier to rank, a more uniform one harder. ", dAUC)
	case math.Abs(dAUC) >= 0.02:
		s += fmt.Sprintf("The AUC changed by %+.3f although the spread of the linear predictor did not: predictor effects may have changed. ", dAUC)
	}
	if calOff {
		if math.IsNaN(c) {
			s += "Calibration has shifted; without the membership model it cannot be said whether the patients differ."
		} else if similar {
			s += "Calibration has shifted within a similar case-mix: this points to a changed baseline risk, changed predictor effects or a changed outcome definition rather than to different patients."
		} else {
			s += "Calibration has shifted and the patients differ: part of the miscalibration may come from case-mix; an update of the intercept (or more) on the new cohort is the usual repair, and the model revision test shows whether predictor effects changed."
		}
	} else {
		s += "Calibration in the large holds."
	}
	return s
}

// capitalise upper-cases the first letter of s.
func capitalise(s string) string {
	for i, r := range s {
		return strings.ToUpper(string(r)) + s[i+len(string(r)):]
	}
	return s
}
