package validate

import (
	"errors"
	"reflect"
	"strings"
	"testing"
)

func TestParseThresholds(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want []float64
		err  string
	}{
		{"0.05:0.50:0.05", []float64{0.05, 0.1, 0.15, 0.2, 0.25, 0.3, 0.35, 0.4, 0.45, 0.5}, ""},
		{"0.1:0.3:0.1", []float64{0.1, 0.2, 0.3}, ""}, // TO included despite 0.1+0.1+0.1 > 0.3 in binary
		{"0.1, 0.25,0.5", []float64{0.1, 0.25, 0.5}, ""},
		{"0.2", []float64{0.2}, ""},
		{"0:1:0.1", nil, `"0:1:0.1": 0 is not strictly between 0 and 1`},
		{"0.1:0.2", nil, "give FROM:TO:STEP"},
		{"0.1:x:0.1", nil, `"x" is not a number`},
		{"0.3:0.1:0.1", nil, "the step must be positive and TO at least FROM"},
		{"0.1:0.3:0", nil, "the step must be positive"},
		{"0.1,1", nil, "1 is not strictly between 0 and 1"},
		{"", nil, `"" is not a number`},
	} {
		got, err := ParseThresholds(tc.in)
		if tc.err != "" {
			if err == nil || !strings.Contains(err.Error(), tc.err) {
				t.Errorf("%q: error %v, want %q", tc.in, err, tc.err)
			}
			continue
		}
		if err != nil || !reflect.DeepEqual(got, tc.want) {
			t.Errorf("%q: %v, %v; want %v", tc.in, got, err, tc.want)
		}
	}
}

// TestOneOutcome: outcomes of one kind are an *OutcomesError of kind
// ErrOneOutcome.
func TestOneOutcome(t *testing.T) {
	for _, y := range [][]float64{{0, 0, 0}, {1, 1, 1}} {
		_, err := Assess(y, []float64{0.1, 0.2, 0.3}, Options{})
		var oe *OutcomesError
		if !errors.Is(err, ErrOneOutcome) || !errors.As(err, &oe) || oe.Rows != 3 {
			t.Errorf("outcomes %v: error %v", y, err)
		}
	}
}
