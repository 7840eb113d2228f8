package validate

import (
	"errors"
	"reflect"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/metrics"
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
		{"10,20", nil, `"10,20": 10 is not strictly between 0 and 1 (a percentage is written with %, as 10%)`},
		{"5:50:5", nil, `"5:50:5": 5 is not strictly between 0 and 1 (a percentage is written with %, as 5%)`},
		{"", nil, `"" is not a number`},
		// Bounded: a step that would make ten million thresholds (and run
		// out of memory) is refused, as is a step that is not finite.
		{"0.0000001:0.99:0.0000001", nil, "9900000 thresholds, more than the 1000"},
		{"0.1:0.5:NaN", nil, "NaN is not a finite number"},
		{"0.1:Inf:0.1", nil, "+Inf is not a finite number"},
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
	// The finest step allowed across (0, 1): 999 thresholds, the last 0.999.
	if got, err := ParseThresholds("0.001:0.999:0.001"); err != nil || len(got) != 999 || got[998] != 0.999 {
		t.Errorf("0.001:0.999:0.001: %d thresholds, %v; want 999 ending at 0.999", len(got), err)
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

// TestDeltaOptions: the zero Delta takes the default δ for the cohort's
// size, ExactDelta gives δ = 0 and a local fit at every distinct risk,
// and a positive Delta is used as it is.
func TestDeltaOptions(t *testing.T) {
	n := 20_000
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = 0.05 + 0.9*float64(i)/float64(n)
		if i%3 == 0 {
			y[i] = 1
		}
	}
	want := metrics.DefaultDelta(p[0], p[n-1], n)
	if want <= 0 {
		t.Fatalf("the default δ for %d rows is %g: the test needs a positive one", n, want)
	}
	for _, tc := range []struct {
		delta, want float64
		fits        int
	}{{AutoDelta, want, -1}, {0, want, -1}, {ExactDelta, 0, n}, {0.05, 0.05, -1}} {
		perf, err := Assess(y, p, Options{Delta: tc.delta})
		if err != nil {
			t.Fatal(err)
		}
		c := perf.Calibration
		if c.Delta != tc.want || tc.fits > 0 && c.FitPoints != tc.fits || tc.fits < 0 && c.FitPoints >= n/2 {
			t.Errorf("Delta %g: δ %g with %d local fits, want δ %g", tc.delta, c.Delta, c.FitPoints, tc.want)
		}
	}
}
