package validate

import (
	"math"
	"strings"
	"testing"
)

// TestDegenerateCohortsAreLabelled: on cohorts where measures degenerate,
// each undefined measure is NaN with a note saying why, the findings say
// so in words (never "NaN"), and a criterion on an undefined measure is
// not met with the note NotEstimable.
func TestDegenerateCohortsAreLabelled(t *testing.T) {
	tiedY, tiedP := make([]float64, 200), make([]float64, 200)
	for i := range tiedP {
		tiedP[i] = 0.2
		if i < 57 {
			tiedY[i] = 1
		}
	}
	for _, c := range []struct {
		name  string
		y, p  []float64
		notes []string // in the discrimination and calibration notes
		finds []string // in the findings
		unmet []string // criteria not met as not estimable
	}{
		{"every risk tied", tiedY, tiedP,
			[]string{"not estimable (every predicted risk the same)", "every predicted risk is the same, so there is no spread of risk", "the observed event rate (28.5%)"},
			[]string{"95% CI not estimable (every predicted risk the same)", "does not tell patients with the event from those without", "0.0850 from it", "At none of the risk thresholds"},
			[]string{"auc_ci.lower", "slope"}},
		{"one event", []float64{0, 0, 0, 0, 0, 0, 0, 1, 0, 0}, []float64{0.05, 0.08, 0.11, 0.14, 0.17, 0.2, 0.23, 0.26, 0.29, 0.32},
			[]string{"not estimable (1 event): DeLong's variance needs at least two events and two non-events"},
			[]string{"AUC 0.778 (95% CI not estimable (1 event))"}, []string{"auc_ci.lower"}},
		{"separated", []float64{0, 0, 0, 1, 1, 0, 1}, []float64{0.1, 0.2, 0.3, 0.6, 0.7, 0.25, 0.8},
			[]string{"AUC 1: every event ranked above every non-event", "separate the events from the non-events completely"},
			[]string{"95% CI not estimable (AUC 1"}, []string{"auc_ci.lower", "slope"}},
		{"risks of 0 and 1 only", []float64{0, 0, 1, 1, 0, 1}, []float64{0, 0, 1, 1, 0, 1},
			[]string{"within the clamping ε", "Hosmer–Lemeshow test could not be computed"},
			[]string{"calibration-in-the-large could not be estimated"}, []string{"auc_ci.lower", "citl", "slope"}},
	} {
		perf, err := Assess(c.y, c.p, Options{})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		notes := strings.Join(append(perf.Discrimination.Notes, perf.Calibration.Notes...), "\n")
		for _, w := range c.notes {
			if !strings.Contains(notes, w) {
				t.Errorf("%s: the notes lack %q:\n%s", c.name, w, notes)
			}
		}
		var finds []string
		for _, f := range Findings(perf, perf) {
			finds = append(finds, f.Text)
		}
		text := strings.Join(finds, "\n")
		for _, w := range c.finds {
			if !strings.Contains(text, w) {
				t.Errorf("%s: the findings lack %q:\n%s", c.name, w, text)
			}
		}
		for _, bad := range []string{"NaN", "Inf"} {
			if strings.Contains(text, bad) || strings.Contains(notes, bad) {
				t.Errorf("%s: %q in\n%s\n%s", c.name, bad, text, notes)
			}
		}
		v, err := Judge(perf, DefaultCriteria())
		if err != nil {
			t.Fatal(err)
		}
		unmet := map[string]bool{}
		for _, r := range v.Criteria {
			if r.Note == NotEstimable {
				if r.Passed {
					t.Errorf("%s: %s is not estimable yet passed", c.name, r.Measure)
				}
				unmet[r.Measure] = true
			}
		}
		for _, m := range c.unmet {
			if !unmet[m] {
				t.Errorf("%s: %s not marked not estimable (%v)", c.name, m, unmet)
			}
		}
		if len(unmet) != len(c.unmet) {
			t.Errorf("%s: marked not estimable: %v, want %v", c.name, unmet, c.unmet)
		}
	}
	// The constant curve: ICI = |0.2 − 57/200| (Austin & Steyerberg's
	// measures of a curve at the event rate).
	perf, _ := Assess(tiedY, tiedP, Options{})
	if math.Abs(perf.Calibration.ICI-0.085) > 1e-12 || perf.Cohort.MinRisk != 0.2 || perf.Cohort.MaxRisk != 0.2 {
		t.Errorf("every risk tied: ICI %g, risks %g to %g", perf.Calibration.ICI, perf.Cohort.MinRisk, perf.Cohort.MaxRisk)
	}
}
