package audit

import (
	"fmt"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
	"github.com/riskaudit/riskaudit/validate"
)

// rangeFrame reads the values as column x of a CSV file (line 2 holds
// the first value) and returns its frame and every row.
func rangeFrame(t *testing.T, values []float64) (*cohort.Frame, []int) {
	t.Helper()
	var b strings.Builder
	b.WriteString("x\n")
	rows := make([]int, len(values))
	for i, v := range values {
		fmt.Fprintf(&b, "%g\n", v)
		rows[i] = i
	}
	fr, err := cohort.Parse("c.csv", []byte(b.String()), []cohort.Request{{Name: "x", Kind: cohort.Numeric}}, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return fr, rows
}

// ints is lo, lo+1, …, hi.
func ints(lo, hi float64) []float64 {
	var s []float64
	for v := lo; v <= hi; v++ {
		s = append(s, v)
	}
	return s
}

// brief is a warning without its text: what the tests check by hand.
type brief struct {
	basis, side string
	bound       float64
	rows        int
	value       float64
	line        int
}

func briefs(ws []validate.OutOfRange) []brief {
	var out []brief
	for _, w := range ws {
		out = append(out, brief{w.Basis, w.Side, w.Bound, w.Rows, w.Value, w.Line})
	}
	return out
}

// TestOutOfRange: each column of values, checked against a stated
// development range or, without one, for missing-value codes, gives the
// warnings counted by hand (lines are the value's position + 2: the
// header is line 1).
func TestOutOfRange(t *testing.T) {
	const dev, code = validate.BasisDevelopmentRange, validate.BasisMissingCode
	ages := ints(18, 97) // 80 values on lines 2–81
	for _, tc := range []struct {
		name   string
		values []float64
		rng    *model.Range
		want   []brief
	}{
		{"inside the range: nothing", ages, &model.Range{Min: 18, Max: 97}, nil},
		{"the range's ends are inside", []float64{18, 97, 50}, &model.Range{Min: 18, Max: 97}, nil},
		{"above: counted, the largest and its first line", append(append([]float64{}, ages...), 999, 120, 999), &model.Range{Min: 18, Max: 96},
			[]brief{{dev, "above", 96, 4, 999, 82}}},
		{"below and above, each side its own", append([]float64{-1, 5}, ages...), &model.Range{Min: 18, Max: 200},
			[]brief{{dev, "below", 18, 2, -1, 2}}},
		{"no range: 999 far above ages 18–97 is a code", append(append([]float64{}, ages...), 999, 999), nil,
			[]brief{{code, "above", 97, 2, 999, 82}}},
		{"no range: 99 among ages up to 97 is not far (2 < span 79)", append(append([]float64{}, ages...), 99), nil, nil},
		{"no range: 9 among values 2 to 15 is inside", append(ints(2, 15), 9), nil, nil},
		{"no range: −1 below counts 30 to 40 by more than their span 10", append(ints(30, 40), -1), nil,
			[]brief{{code, "below", 30, 1, -1, 13}}},
		{"no range: −1 below 0 to 5 by less than their span", append(ints(0, 5), -1), nil, nil},
		{"no range: two codes, each named", append(append(ints(20, 30), 999), -99), nil,
			[]brief{{code, "above", 30, 1, 999, 13}, {code, "below", 20, 1, -99, 14}}},
		{"no range: 998 is no code", append(ints(20, 30), 998), nil, nil},
		{"no range: 999.5 is no code", append(ints(20, 30), 999.5), nil, nil},
		{"no range: only codes, nothing to compare with", []float64{999, 999}, nil, nil},
	} {
		t.Run(tc.name, func(t *testing.T) {
			fr, rows := rangeFrame(t, tc.values)
			spec := &model.Spec{Predictors: []model.Predictor{{Column: "x", Scale: 1, Range: tc.rng}}}
			got := briefs(outOfRange(spec, fr, rows))
			if fmt.Sprint(got) != fmt.Sprint(tc.want) {
				t.Errorf("got  %v\nwant %v", got, tc.want)
			}
		})
	}
}

// TestOutOfRangeText: the warnings read as the report and stderr give
// them, and only the scored rows count.
func TestOutOfRangeText(t *testing.T) {
	values := append(append(ints(18, 97), 999), 999, 12)
	fr, rows := rangeFrame(t, values)
	spec := &model.Spec{Predictors: []model.Predictor{{Column: "x", Scale: 1, Range: &model.Range{Min: 18, Max: 96}}}}
	var texts []string
	for _, w := range outOfRange(spec, fr, rows) {
		texts = append(texts, w.Text)
	}
	want := []string{
		"x: 3 rows above the development maximum 96, e.g. 999 on line 82 of c.csv (if 999 is a missing-value code, list it with --na-values)",
		"x: 1 row below the development minimum 18, e.g. 12 on line 84 of c.csv",
	}
	if strings.Join(texts, "\n") != strings.Join(want, "\n") {
		t.Errorf("got\n%s\nwant\n%s", strings.Join(texts, "\n"), strings.Join(want, "\n"))
	}
	// The row left out (the first 999, line 82) is not counted, and the
	// first line of 999 among the scored rows is 83.
	scored := append(append([]int{}, rows[:80]...), rows[81:]...)
	ws := outOfRange(&model.Spec{Predictors: []model.Predictor{{Column: "x", Scale: 1}}}, fr, scored)
	if len(ws) != 1 || ws[0].Text != "x: 1 row hold 999, far above the column's other values (at most 97), first on line 83 of c.csv: if 999 is a missing-value code, list it with --na-values" {
		t.Errorf("got %+v", ws)
	}
}

// TestCodeIndex: every code is found at its place in missingCodes, and
// values near codes are not codes.
func TestCodeIndex(t *testing.T) {
	for k, c := range missingCodes {
		if got := codeIndex(c); got != k {
			t.Errorf("codeIndex(%g) = %d, want %d", c, got, k)
		}
	}
	for _, v := range []float64{0, 1, 8, 10, 98, 100, 998, 9998, 10000, 99999, -2, -10, -100, -1000, -9999, 9.5, 99.0001, 1e300, -1e300} {
		if got := codeIndex(v); got != -1 {
			t.Errorf("codeIndex(%g) = %d, want -1 (not a code)", v, got)
		}
	}
}
