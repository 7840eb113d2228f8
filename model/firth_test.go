package model

import (
	"bytes"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/metrics"
)

// fitText fits recipe (YAML) to csv (text) and returns the fit.
func fitText(t *testing.T, recipe, csv string, opt FitOptions) *Fitted {
	t.Helper()
	spec, err := ParseSpec("recipe.yaml", []byte(recipe))
	if err != nil {
		t.Fatal(err)
	}
	fr, err := cohort.Parse("data.csv", []byte(csv), spec.Columns(true), cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	d, m, err := Build(spec, fr, Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	f, err := Fit(d, m, opt)
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// TestFirthOverflowIsLabelled: on 8,000 rows completely separated by x,
// Firth's estimate of the slope exceeds ln(MaxFloat64) ≈ 709.78, so its
// odds ratio and interval overflow float64: they are null in the JSON
// (which is written), the interval stays finite on the log scale
// (coef_ci), and notes name each null; the Hosmer–Lemeshow test, whose
// groups hold risks of exactly 0 and 1, is labelled not computed. Before,
// such a fit left NaN and +Inf unexplained.
func TestFirthOverflowIsLabelled(t *testing.T) {
	r := rand.New(rand.NewPCG(21, 1))
	var b strings.Builder
	b.WriteString("x,y\n")
	for i := 0; i < 8000; i++ {
		x := r.Float64()*6 - 3
		y := 0
		if x > 0 {
			y = 1
		}
		fmt.Fprintf(&b, "%.4f,%d\n", x, y)
	}
	f := fitText(t, "outcome: {column: y, event: 1}\npredictors:\n  - column: x\n", b.String(), FitOptions{Firth: true})
	x := f.Stats.Terms[1]
	if !(x.Coef > 710) {
		t.Fatalf("slope %g: the data no longer overflow the odds ratio", x.Coef)
	}
	if !math.IsInf(x.OddsRatio, 1) {
		t.Errorf("odds ratio %g", x.OddsRatio)
	}
	for k, c := range x.CoefCI {
		if math.IsNaN(c) || math.IsInf(c, 0) {
			t.Errorf("coef_ci[%d] = %g, want a finite profile end", k, c)
		}
	}
	if !(x.CoefCI[0] < x.Coef && x.Coef < x.CoefCI[1]) {
		t.Errorf("interval %v does not contain %g", x.CoefCI, x.Coef)
	}
	notes := strings.Join(x.Notes, "\n")
	for _, want := range []string{"odds_ratio: exp(", "or_ci: the upper end"} {
		if !strings.Contains(notes, want) {
			t.Errorf("notes %q lack %q", x.Notes, want)
		}
	}
	if math.IsNaN(x.P) {
		t.Errorf("the penalised LR test was not computed: %q", x.Notes)
	}
	if len(f.Stats.Notes) != 1 || !strings.HasPrefix(f.Stats.Notes[0], "hosmer_lemeshow: not computed: ") || !math.IsNaN(f.Stats.HL.Statistic) {
		t.Errorf("Hosmer–Lemeshow %g with notes %q", f.Stats.HL.Statistic, f.Stats.Notes)
	}
	out, err := jsonout.Marshal(&FitReport{Schema: FitSchema, FitStats: f.Stats})
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(out, []byte(`"odds_ratio": null`)) || !bytes.Contains(out, []byte(`"notes": [`)) {
		t.Errorf("the JSON lacks the null odds ratio or its notes:\n%s", out)
	}
}

// TestHLNote: a Hosmer–Lemeshow test on the fitting data gets a note
// exactly when it has no statistic or no p-value, with the reason.
func TestHLNote(t *testing.T) {
	for _, tc := range []struct {
		name string
		y, p []float64
		want string // "" for no note
	}{
		{"ordinary", []float64{0, 1, 0, 1, 1, 0, 0, 1, 0, 1, 1, 0}, []float64{0.1, 0.2, 0.25, 0.3, 0.4, 0.45, 0.5, 0.55, 0.6, 0.7, 0.8, 0.9}, ""},
		{"risks of exactly 0 and 1", []float64{0, 0, 0, 1, 1, 1}, []float64{0, 0, 0, 1, 1, 1}, "every predicted risk is 0 or 1"},
		{"two distinct risks", []float64{0, 1, 0, 1, 1, 0}, []float64{0.3, 0.3, 0.3, 0.6, 0.6, 0.6}, "too few distinct values for more than 2 risk groups, which leave 0 degrees of freedom"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			hl := metrics.HosmerLemeshow(metrics.SortByRisk(tc.y, tc.p), 10, true)
			got := hlNote(hl)
			if tc.want == "" {
				if got != "" {
					t.Errorf("note %q for %+v", got, hl)
				}
				return
			}
			if !strings.HasPrefix(got, "hosmer_lemeshow: not computed: ") || !strings.Contains(got, tc.want) {
				t.Errorf("note %q, want one containing %q (test %+v)", got, tc.want, hl)
			}
		})
	}
}

// TestNoteOverflow: odds ratios and interval ends that exp overflows
// (to +Inf or 0) get notes; finite ones and ends already not found do
// not.
func TestNoteOverflow(t *testing.T) {
	st := FitStats{Terms: []TermStat{
		{Term: "small", Coef: 1, OddsRatio: math.E, CoefCI: [2]float64{0, 2}, ORCI: [2]float64{1, math.Exp(2)}},
		{Term: "large", Coef: 800, OddsRatio: math.Inf(1), CoefCI: [2]float64{-750, 900}, ORCI: [2]float64{0, math.Inf(1)}},
		{Term: "unfound", Coef: 2, OddsRatio: math.Exp(2), CoefCI: [2]float64{math.NaN(), 3}, ORCI: [2]float64{math.NaN(), math.Exp(3)}},
	}}
	noteOverflow(&st)
	if n := st.Terms[0].Notes; len(n) != 0 {
		t.Errorf("small: notes %q", n)
	}
	if n := st.Terms[1].Notes; len(n) != 3 || !strings.HasPrefix(n[0], "odds_ratio: ") || !strings.Contains(n[1], "lower end, exp(-750)") || !strings.Contains(n[2], "upper end, exp(900)") {
		t.Errorf("large: notes %q", n)
	}
	if n := st.Terms[2].Notes; len(n) != 0 {
		t.Errorf("unfound: notes %q (the profile search writes its own)", n)
	}
}
