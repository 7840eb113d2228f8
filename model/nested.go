package model

import (
	"errors"
	"fmt"
	"slices"
)

// ErrNotNested is the kind of the errors of CompareNested: models fitted
// to different rows, outcomes or methods, or a reduced model whose terms
// are not all terms of the full model, coded alike.
var ErrNotNested = errors.New("model: the models are not nested")

// notNested is an error of kind ErrNotNested; its message is msg alone.
type notNested struct{ msg string }

func (e *notNested) Error() string { return e.msg }

// Is reports whether target is ErrNotNested.
func (e *notNested) Is(target error) bool { return target == ErrNotNested }

func notNestedf(format string, args ...any) error {
	return &notNested{fmt.Sprintf(format, args...)}
}

// NestedTest compares two nested models fitted to the same rows by the
// likelihood-ratio test: LR = D_reduced − D_full, referred to a chi-square
// distribution with DF = (terms of full) − (terms of reduced) degrees of
// freedom (Wilks 1938, Annals of Mathematical Statistics 9:60–62).
type NestedTest struct {
	FullTerms    int     `json:"full_terms"`
	ReducedTerms int     `json:"reduced_terms"`
	Rows         int     `json:"rows"`
	LRChi2       float64 `json:"lr_chi2"`
	DF           int     `json:"df"`
	P            float64 `json:"p"`
	// AICDifference is AIC(full) − AIC(reduced): negative favours the
	// full model.
	AICDifference float64 `json:"aic_difference"`
	// Added lists the terms of the full model the reduced one lacks.
	Added []string `json:"added_terms"`
}

// CompareNested tests the reduced model against the full one. Both must
// be fitted to the same rows with the same outcome, and every term of the
// reduced model must be a term of the full model with the same coding;
// otherwise the error is of kind ErrNotNested.
func CompareNested(full, reduced *Fitted) (*NestedTest, error) {
	if !slices.Equal(full.Matrix.Rows, reduced.Matrix.Rows) {
		return nil, notNestedf("the two models were fitted to different rows (%d and %d); fit them on the same complete cases", full.Matrix.N, reduced.Matrix.N)
	}
	fo, ro := full.Design.Spec.Outcome, reduced.Design.Spec.Outcome
	if fo.Column != ro.Column || fo.Event.Text != ro.Event.Text {
		return nil, notNestedf("the two models have different outcomes")
	}
	if err := nestedIn(reduced.Design, full.Design); err != nil {
		return nil, err
	}
	if full.Stats.Method != reduced.Stats.Method {
		return nil, notNestedf("the two models were fitted by different methods")
	}
	t := &NestedTest{FullTerms: len(full.Matrix.Terms), ReducedTerms: len(reduced.Matrix.Terms), Rows: full.Matrix.N}
	t.DF = t.FullTerms - t.ReducedTerms
	t.LRChi2 = reduced.Stats.Neg2LL - full.Stats.Neg2LL
	t.P = ChiSquareP(t.LRChi2, t.DF)
	t.AICDifference = full.Stats.AIC - reduced.Stats.AIC
	for _, term := range full.Matrix.Terms {
		if !slices.Contains(reduced.Matrix.Terms, term) {
			t.Added = append(t.Added, term)
		}
	}
	return t, nil
}

// nestedIn checks that every term of a is a term of b, coded alike.
func nestedIn(a, b *Design) error {
	if len(a.Terms) >= len(b.Terms) {
		return notNestedf("the reduced model has %d terms and the full one %d: the reduced model must have fewer", len(a.Terms), len(b.Terms))
	}
	for _, t := range a.Terms {
		if !slices.Contains(b.Terms, t) {
			return notNestedf("the models are not nested: term %q of the reduced model is not in the full model", t)
		}
	}
	for i := range a.entries {
		ea := &a.entries[i]
		for j := range b.entries {
			eb := &b.entries[j]
			if ea.pred.Column == "" || ea.pred.Column != eb.pred.Column || ea.kind != eb.kind {
				continue
			}
			same := slices.Equal(ea.knots, eb.knots) && ea.norm == eb.norm && ea.reference == eb.reference &&
				slices.Equal(ea.pred.Powers, eb.pred.Powers)
			if ea.kind != linear && (ea.pred.Center != eb.pred.Center || ea.pred.Scale != eb.pred.Scale) {
				same = false
			}
			if !same {
				return notNestedf("the models are not nested: predictor %q is coded differently in the two models", ea.pred.Column)
			}
		}
	}
	return nil
}
