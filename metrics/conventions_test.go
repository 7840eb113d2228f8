package metrics

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"testing"
	"unsafe"
)

// mustPanic runs f and fails unless it panics with a message that starts
// "metrics: " and holds want.
func mustPanic(t *testing.T, name, want string, f func()) {
	t.Helper()
	defer func() {
		t.Helper()
		r := recover()
		if r == nil {
			t.Errorf("%s: no panic, want one with %q", name, want)
			return
		}
		msg := fmt.Sprint(r)
		if !strings.HasPrefix(msg, "metrics: ") || !strings.Contains(msg, want) {
			t.Errorf("%s: panic %q, want the prefix \"metrics: \" and %q", name, msg, want)
		}
	}()
	f()
}

// TestLengthsChecked gives every function that takes outcomes beside
// risks, linear predictors or weights one slice too short.
func TestLengthsChecked(t *testing.T) {
	y := []float64{0, 1, 0, 1}
	p := []float64{0.1, 0.4, 0.35, 0.8}
	short := p[:3]
	w := []float64{1, 2, 0, 1}
	for _, c := range []struct {
		name, want string
		f          func()
	}{
		{"SortByRisk", "SortByRisk: 4 outcomes but 3 risks", func() { SortByRisk(y, short) }},
		{"AsSorted", "AsSorted: 3 outcomes but 4 risks", func() { AsSorted(y[:3], []float64{0.1, 0.2, 0.3, 0.4}) }},
		{"Brier", "Brier: 4 outcomes but 3 risks", func() { Brier(y, short) }},
		{"BrierWeighted risks", "BrierWeighted: 4 outcomes but 3 risks", func() { BrierWeighted(y, short, w) }},
		{"BrierWeighted weights", "BrierWeighted: 4 outcomes but 3 weights", func() { BrierWeighted(y, p, w[:3]) }},
		{"BrierWeighted nil weights", "BrierWeighted: 4 outcomes but 0 weights", func() { BrierWeighted(y, p, nil) }},
		{"OE", "OE: 4 outcomes but 3 risks", func() { OE(y, short) }},
		{"CalibrationInTheLarge", "CalibrationInTheLarge: 4 outcomes but 3 linear predictors", func() { CalibrationInTheLarge(y, short) }},
		{"CalibrationSlope", "CalibrationSlope: 4 outcomes but 3 linear predictors", func() { CalibrationSlope(y, short) }},
		{"CalibrationWeighted lp", "CalibrationWeighted: 4 outcomes but 3 linear predictors", func() { CalibrationWeighted(y, short, nil, 1) }},
		{"CalibrationWeighted weights", "CalibrationWeighted: 4 outcomes but 3 weights", func() { CalibrationWeighted(y, p, w[:3], 1) }},
		{"NullDeviance", "NullDeviance: 4 outcomes but 3 weights", func() { NullDeviance(y, w[:3]) }},
		{"RiskHistogram", "RiskHistogram: 4 outcomes but 3 risks", func() { RiskHistogram(y, short, 10) }},
		{"DeLongPaired", "DeLongPaired: 4 outcomes but 4 and 3 risks", func() { DeLongPaired(y, p, short) }},
		{"Lowess", "Lowess: x and y differ in length", func() { Lowess([]float64{1, 2}, []float64{1}, LowessOptions{}) }},
	} {
		mustPanic(t, c.name, c.want, c.f)
	}
}

// TestOutcomesAreZeroOrOne gives every function that takes outcomes each
// kind of value that is neither 0 nor 1.
func TestOutcomesAreZeroOrOne(t *testing.T) {
	p := []float64{0.1, 0.4, 0.35, 0.8}
	w := []float64{1, 1, 1, 1}
	for _, bad := range []float64{0.5, 2, -1, 5e-324, 1 + 0x1p-52, 1 - 0x1p-53, math.NaN(), math.Inf(1), math.Inf(-1)} {
		y := []float64{0, 1, bad, 1}
		want := fmt.Sprintf("outcome %v of row 2 is neither 0 nor 1", bad)
		for _, c := range []struct {
			name string
			f    func()
		}{
			{"SortByRisk", func() { SortByRisk(y, p) }},
			{"AsSorted", func() { AsSorted(y, []float64{0.1, 0.2, 0.3, 0.4}) }},
			{"Brier", func() { Brier(y, p) }},
			{"BrierWeighted", func() { BrierWeighted(y, p, w) }},
			{"OE", func() { OE(y, p) }},
			{"CalibrationInTheLarge", func() { CalibrationInTheLarge(y, p) }},
			{"CalibrationSlope", func() { CalibrationSlope(y, p) }},
			{"CalibrationWeighted", func() { CalibrationWeighted(y, p, nil, 1) }},
			{"NullDeviance", func() { NullDeviance(y, nil) }},
			{"RiskHistogram", func() { RiskHistogram(y, p, 10) }},
			{"DeLongPaired", func() { DeLongPaired(y, p, p) }},
		} {
			mustPanic(t, fmt.Sprintf("%s with outcome %v", c.name, bad), c.name+": "+want, c.f)
		}
	}
	// −0 equals 0: a non-event, not an error.
	s := SortByRisk([]float64{math.Copysign(0, -1), 1}, []float64{0.2, 0.7})
	if a, _ := AUC(s); a.Events != 1 || a.NonEvents != 1 || a.AUC != 1 {
		t.Errorf("−0 as an outcome: %+v, want one event, one non-event and AUC 1", a)
	}
}

// TestOtherPreconditions covers the panics that are not about lengths
// or outcomes.
func TestOtherPreconditions(t *testing.T) {
	y := []float64{0, 1, 0, 1}
	nan := math.NaN()
	for _, c := range []struct {
		name, want string
		f          func()
	}{
		{"SortByRisk NaN", "SortByRisk: risk of row 1 is NaN", func() { SortByRisk(y, []float64{0.1, nan, 0.3, 0.4}) }},
		{"AsSorted descending", "AsSorted: risks not ascending at row 2", func() { AsSorted(y, []float64{0.1, 0.3, 0.2, 0.4}) }},
		{"AsSorted NaN first", "AsSorted: risks not ascending at row 0", func() { AsSorted(y[:1], []float64{nan}) }},
		{"AsSorted NaN inside", "AsSorted: risks not ascending at row 2", func() { AsSorted(y, []float64{0.1, 0.2, nan, 0.4}) }},
		{"DeLongPaired NaN", "DeLongPaired: risk of row 3 is NaN", func() { DeLongPaired(y, []float64{0.1, 0.2, 0.3, 0.4}, []float64{0.1, 0.2, 0.3, nan}) }},
		{"HosmerLemeshow no groups", "HosmerLemeshow: fewer than one group", func() { HosmerLemeshow(Sorted{}, 0, false) }},
		{"RiskGroups no groups", "RiskGroups: fewer than one group", func() { RiskGroups(Sorted{}, 0) }},
		{"RiskHistogram no bins", "RiskHistogram: fewer than one bin", func() { RiskHistogram(y, []float64{0.1, 0.2, 0.3, 0.4}, 0) }},
		{"ClampedLogits", "ClampedLogits: risk 1.5 outside [0, 1]", func() { ClampedLogits([]float64{0.5, 1.5}, 1e-9) }},
		{"Lowess unsorted", "Lowess: x is not sorted", func() { Lowess([]float64{2, 1}, []float64{0, 1}, LowessOptions{}) }},
	} {
		mustPanic(t, c.name, c.want, c.f)
	}
}

// TestUndefinedMeasuresAreNaN checks the documented NaN (or error) of each
// measure on rows for which it does not exist.
func TestUndefinedMeasuresAreNaN(t *testing.T) {
	nan := math.IsNaN
	noEvents := SortByRisk([]float64{0, 0, 0}, []float64{0.1, 0.2, 0.3})
	oneEvent := SortByRisk([]float64{0, 1, 0}, []float64{0.1, 0.2, 0.3})
	for _, c := range []struct {
		name string
		ok   func() bool
	}{
		{"AUC without events", func() bool {
			a, d := AUC(noEvents)
			return nan(a.AUC) && nan(a.SE) && nan(a.CI[0]) && nan(a.LogitCI[1]) && a.NonEvents == 3 && d.V10 == nil
		}},
		{"AUC of no rows", func() bool { a, _ := AUC(Sorted{}); return nan(a.AUC) && a.Events == 0 }},
		{"AUC with one event: value, no SE", func() bool {
			a, _ := AUC(oneEvent)
			return a.AUC == 0.5 && nan(a.SE) && nan(a.CI[0]) && nan(a.CI[1])
		}},
		{"AUCValue without events", func() bool { return nan(AUCValue(noEvents)) }},
		{"AUCValue of no rows", func() bool { return nan(AUCValue(Sorted{})) }},
		{"ROC without events", func() bool {
			r := ROC(noEvents, 0)
			return len(r) == 1 && math.IsInf(r[0].Threshold, 1) && r[0].FPR == 0 && r[0].TPR == 0
		}},
		{"Brier of no rows", func() bool { b, s := Brier(nil, nil); return nan(b) && nan(s) }},
		{"scaled Brier without events", func() bool { b, s := Brier([]float64{0, 0}, []float64{0.1, 0.2}); return b > 0 && math.IsInf(s, -1) }},
		{"scaled Brier, perfect and all events", func() bool { b, s := Brier([]float64{1, 1}, []float64{1, 1}); return b == 0 && nan(s) }},
		{"BrierWeighted with zero weights", func() bool {
			b, s := BrierWeighted([]float64{0, 1}, []float64{0.2, 0.6}, []float64{0, 0})
			return nan(b) && nan(s)
		}},
		{"O/E without events", func() bool {
			oe, ci, o, e := OE([]float64{0, 0}, []float64{0.2, 0.3})
			return oe == 0 && nan(ci[0]) && nan(ci[1]) && o == 0 && e == 0.5
		}},
		{"O/E of no rows", func() bool { oe, ci, o, e := OE(nil, nil); return nan(oe) && nan(ci[0]) && o == 0 && e == 0 }},
		{"NullDeviance without events", func() bool { return NullDeviance([]float64{0, 0}, nil) == 0 }},
		{"Nagelkerke with no null deviance", func() bool { return nan(Nagelkerke(0, 0, 10)) }},
		{"NetBenefits of no rows", func() bool {
			nb := NetBenefits(Sorted{}, []float64{0.1})
			return nan(nb[0].Model) && nan(nb[0].TreatAll)
		}},
		{"Classify without events", func() bool {
			c := Classify(noEvents, []float64{0.15})[0]
			return nan(c.Sensitivity.Value) && c.Specificity.Value == 1.0/3 && c.Flagged == 2.0/3
		}},
		{"FlexibleCalibration of no rows", func() bool {
			cc := FlexibleCalibration(Sorted{}, LowessOptions{})
			return nan(cc.ICI) && nan(cc.E50) && nan(cc.E90) && nan(cc.Emax)
		}},
		{"HosmerLemeshow of no rows", func() bool { h := HosmerLemeshow(Sorted{}, 10, false); return h.Groups == 0 && nan(h.P) }},
		{"RiskGroups of no rows", func() bool { return len(RiskGroups(Sorted{}, 10)) == 0 }},
		{"DeLongPaired without events", func() bool {
			d := DeLongPaired([]float64{0, 0, 0}, []float64{0.1, 0.2, 0.3}, []float64{0.3, 0.2, 0.1})
			return nan(d.AUCA) && nan(d.Difference) && nan(d.DifferenceSE) && nan(d.P)
		}},
		{"DeLongPaired with one event", func() bool {
			d := DeLongPaired([]float64{0, 1, 0}, []float64{0.1, 0.2, 0.3}, []float64{0.3, 0.2, 0.1})
			return d.AUCA == 0.5 && d.AUCB == 0.5 && d.Difference == 0 && nan(d.DifferenceSE) && nan(d.Z)
		}},
		{"DeLongPaired of a risk with itself", func() bool {
			y, p := []float64{0, 1, 0, 1, 1}, []float64{0.1, 0.2, 0.3, 0.4, 0.5}
			d := DeLongPaired(y, p, p)
			return d.Difference == 0 && d.DifferenceSE == 0 && nan(d.Z) && nan(d.P)
		}},
	} {
		if !c.ok() {
			t.Errorf("%s: not as documented", c.name)
		}
	}
	for _, c := range []struct {
		name  string
		y, lp []float64
	}{
		{"no rows", nil, nil},
		{"only events", []float64{1, 1, 1}, []float64{-1, 0, 1}},
		{"only non-events", []float64{0, 0, 0}, []float64{-1, 0, 1}},
	} {
		if _, err := CalibrationInTheLarge(c.y, c.lp); err == nil {
			t.Errorf("CalibrationInTheLarge of %s: no error", c.name)
		}
		if _, _, err := CalibrationSlope(c.y, c.lp); err == nil {
			t.Errorf("CalibrationSlope of %s: no error", c.name)
		}
		if _, _, err := CalibrationWeighted(c.y, c.lp, nil, 1); err == nil {
			t.Errorf("CalibrationWeighted of %s: no error", c.name)
		}
	}
	if _, _, err := CalibrationSlope([]float64{0, 1, 0, 1}, []float64{-1, -1, -1, -1}); err == nil {
		t.Error("CalibrationSlope with one value of lp: no error")
	}
}

// TestSortByRiskKeepsTiesInRowOrder checks the Sorted convention itself:
// rows ascend by risk, tied rows keep their order, and AsSorted shares
// the caller's storage instead of copying it.
func TestSortByRiskKeepsTiesInRowOrder(t *testing.T) {
	for _, n := range []int{7, 5000} { // both the comparison and the radix sort
		y, p := make([]float64, n), make([]float64, n)
		for i := range p {
			p[i] = float64((i*7919)%13+1) / 14 // many ties, out of order
			y[i] = float64(i % 2)
		}
		s := SortByRisk(y, p)
		order := SortedOrder(p)
		for r, i := range order {
			if s.P()[r] != p[i] || s.Y()[r] != y[i] {
				t.Fatalf("n=%d: row %d of the sorted rows is not row %d of the input", n, r, i)
			}
			if r > 0 && p[order[r-1]] == p[i] && order[r-1] > i {
				t.Fatalf("n=%d: tied rows %d and %d out of row order", n, order[r-1], i)
			}
		}
		if !slices.IsSorted(s.P()) || s.Len() != n {
			t.Fatalf("n=%d: %d rows, sorted %v", n, s.Len(), slices.IsSorted(s.P()))
		}
		w := AsSorted(s.Y(), s.P())
		if unsafe.SliceData(w.P()) != unsafe.SliceData(s.P()) || unsafe.SliceData(w.Y()) != unsafe.SliceData(s.Y()) {
			t.Errorf("n=%d: AsSorted copied its input", n)
		}
		if a, b := HosmerLemeshow(s, 4, false), HosmerLemeshow(w, 4, false); a.Statistic != b.Statistic {
			t.Errorf("n=%d: the same rows give %v and %v", n, a.Statistic, b.Statistic)
		}
	}
}

// TestAUCValueMatchesAUC ties the allocation-free AUC of resampling loops
// to the AUC with DeLong's SE on rows with ties.
func TestAUCValueMatchesAUC(t *testing.T) {
	y := []float64{0, 1, 0, 1, 1, 0, 0, 1, 0, 0}
	p := []float64{0.2, 0.2, 0.1, 0.7, 0.4, 0.4, 0.3, 0.9, 0.05, 0.4}
	s := SortByRisk(y, p)
	a, _ := AUC(s)
	// By hand: 4 events, 6 non-events; the events at 0.2, 0.4, 0.7, 0.9
	// rank above 2 (+½ tie), 4 (+2·½ ties), 6 and 6 non-events:
	// (2.5 + 5 + 6 + 6)/24.
	want := (2.5 + 5 + 6 + 6) / 24
	if v := AUCValue(s); math.Abs(v-want) > 1e-15 || math.Abs(a.AUC-want) > 1e-15 {
		t.Errorf("AUCValue %v, AUC %v, by hand %v", v, a.AUC, want)
	}
}
