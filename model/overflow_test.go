package model

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
)

// TestFrozenLPOverflow: a frozen model whose linear predictor is not
// finite for a row is refused as the model's fault, naming the model
// file, the term, its coefficient and value, and the data row (issue 11:
// the audit blamed the cohort with "predicted risk NaN of row 24"); a
// finite linear predictor, however large, is kept. Both with and without
// a design matrix.
func TestFrozenLPOverflow(t *testing.T) {
	for _, tc := range []struct {
		name, coefs string
		data        string  // rows of x, z, y after the header
		term        string  // the term named ("" when the predictor is finite)
		opposite    string  // the term of the opposite infinite product
		lp          float64 // the first bad row's linear predictor
		line        int     // its line in the data
	}{
		{"a product beyond the range", "x: 1e308\n  z: 0.5", "0.5,1,0\n3,1,1\n", "x", "", math.Inf(1), 3},
		{"infinite products of opposite signs", "x: 1e308\n  z: -1e308", "0.5,0.5,1\n2,2,0\n", "x", "z", math.NaN(), 3},
		{"finite products whose sum overflows", "x: 1e308\n  z: 1e308", "0.5,0.25,1\n1,1.5,0\n", "z", "", math.Inf(1), 3},
		{"a large but finite predictor", "x: 800\n  z: 300", "1,2,1\n0.5,1,0\n3,1,1\n", "", "", 0, 0},
	} {
		for _, noMatrix := range []bool{false, true} {
			t.Run(fmt.Sprintf("%s, no matrix %v", tc.name, noMatrix), func(t *testing.T) {
				// The coefficients as two single-term predictors.
				lines := strings.Split(tc.coefs, "\n  ")
				spec, err := ParseSpec("frozen.yaml", []byte("outcome: {column: y, event: 1}\nintercept: 0\npredictors:\n  - column: x\n    coef: "+
					strings.TrimPrefix(lines[0], "x: ")+"\n  - column: z\n    coef: "+strings.TrimPrefix(lines[1], "z: ")+"\n"))
				if err != nil {
					t.Fatal(err)
				}
				fr, err := cohort.Parse("cohort.csv", []byte("x,z,y\n"+tc.data), spec.Columns(true), cohort.Options{})
				if err != nil {
					t.Fatal(err)
				}
				d, m, err := Build(spec, fr, Options{Outcome: true, NoMatrix: noMatrix})
				if err != nil {
					t.Fatal(err)
				}
				lp, err := d.FrozenLinearPredictors(m)
				// FrozenScores gives the same linear predictors or the
				// same error, with each risk 1/(1 + e^−lp) (math.Exp).
				slp, sp, serr := d.FrozenScores(m)
				if fmt.Sprint(serr) != fmt.Sprint(err) {
					t.Errorf("FrozenScores: error %v, FrozenLinearPredictors %v", serr, err)
				}
				for r := range lp {
					if slp[r] != lp[r] || sp[r] != 1/(1+math.Exp(-lp[r])) {
						t.Errorf("FrozenScores row %d: lp %v risk %v, want %v and 1/(1+e^-lp)", r, slp[r], sp[r], lp[r])
					}
				}
				if tc.term == "" {
					if err != nil {
						t.Fatal(err)
					}
					if lp[2] != 3*800+300 || Risk(lp[2]) != 1 {
						t.Errorf("linear predictors %v", lp)
					}
					return
				}
				var se *SpecError
				var oe *LPOverflowError
				if !errors.Is(err, ErrLPOverflow) || !errors.As(err, &se) || !errors.As(err, &oe) {
					t.Fatalf("want an overflow error, got %v", err)
				}
				if se.File != "frozen.yaml" || se.Line == 0 || oe.Data != "cohort.csv" || oe.Line != tc.line || oe.Row ||
					oe.Term != tc.term || oe.Opposite != tc.opposite || !(math.IsNaN(tc.lp) && math.IsNaN(oe.LP) || oe.LP == tc.lp) {
					t.Errorf("%+v (spec line %d)", oe, se.Line)
				}
				msg := err.Error()
				for _, want := range []string{"frozen.yaml", "linear predictor overflowed", "line " + strconv.Itoa(tc.line) + " of cohort.csv", "term " + tc.term} {
					if !strings.Contains(msg, want) {
						t.Errorf("%q lacks %q", msg, want)
					}
				}
				if strings.Contains(msg, "predicted risk") {
					t.Errorf("%q blames the risk", msg)
				}
			})
		}
	}
}
