package model

import (
	"math"
	"strconv"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/reftest"
)

// TestDefaultKnotsMatchNumpy: the default knots for 3 to 7 knots of the
// Wisconsin mean texture against numpy.quantile (method "linear", type 7)
// at the stated quantile table (testdata/reference/extra.json; the table
// is recalled from Harrell 2015, §2.4.6, and typed separately in the
// reference script).
func TestDefaultKnotsMatchNumpy(t *testing.T) {
	var r struct {
		Knots map[string][]float64 `json:"knots"`
	}
	reftest.JSON(t, "extra.json", &r)
	fr, err := cohort.Load("../testdata/open/wdbc.csv", []cohort.Request{{Name: "mean_texture", Kind: cohort.Numeric}}, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	z := fr.Column("mean_texture").Num
	for k := 3; k <= 7; k++ {
		want := r.Knots[strconv.Itoa(k)]
		got, err := DefaultKnots(z, k)
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != len(want) {
			t.Fatalf("%d knots: %v, numpy %v", k, got, want)
		}
		for i := range got {
			if math.Abs(got[i]-want[i]) > 1e-9*math.Abs(want[i]) {
				t.Errorf("%d knots: knot %d = %.12g, numpy %.12g", k, i+1, got[i], want[i])
			}
		}
	}
}
