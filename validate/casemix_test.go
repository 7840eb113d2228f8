package validate

import (
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/reftest"
	"github.com/riskaudit/riskaudit/model"
)

// TestCaseMixMatchesReferences splits the Wisconsin rows in two halves and
// compares the membership model's c-statistic and the standardised
// differences with testdata/reference/casemix.json (statsmodels Logit,
// scikit-learn roc_auc_score; the differences by their definition).
func TestCaseMixMatchesReferences(t *testing.T) {
	var ref struct {
		Half        int                `json:"half"`
		MembershipC float64            `json:"membership_c"`
		StdDiff     map[string]float64 `json:"std_diff"`
	}
	reftest.JSON(t, "casemix.json", &ref)
	raw, err := os.ReadFile("../testdata/open/wdbc.csv")
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.SplitAfter(strings.TrimSpace(string(raw)), "\n")
	dir := t.TempDir()
	devPath, newPath := filepath.Join(dir, "a.csv"), filepath.Join(dir, "b.csv")
	os.WriteFile(devPath, []byte(strings.Join(lines[:1+ref.Half], "")), 0o644)
	os.WriteFile(newPath, []byte(lines[0]+strings.Join(lines[1+ref.Half:], "")+"\n"), 0o644)
	spec, err := model.LoadSpec("../testdata/reference/recipes/wdbc_linear.yaml")
	if err != nil {
		t.Fatal(err)
	}
	side := func(path string) MixInput {
		fr, d, m, err := model.Load(spec, path, cohort.Options{}, model.Options{Outcome: true})
		if err != nil {
			t.Fatal(err)
		}
		f, err := model.Fit(d, m, model.FitOptions{})
		if err != nil {
			t.Fatal(err)
		}
		return MixInput{Frame: fr, Rows: m.Rows, X: m.X, P: m.P, Y: m.Y, LP: model.LinearPredictors(m, f.Result.Coef)}
	}
	dev, cur := side(devPath), side(newPath)
	var cols []string
	for _, r := range spec.Columns(false) {
		cols = append(cols, r.Name)
	}
	cm, err := CompareCaseMix(dev, cur, cols, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(cm.MembershipC-ref.MembershipC) > 1e-6 {
		t.Errorf("membership c %.10g, reference %.10g", cm.MembershipC, ref.MembershipC)
	}
	for _, pm := range cm.Predictors {
		if want, ok := ref.StdDiff[pm.Column]; !ok || math.Abs(pm.StdDiff[0]-want) > 1e-9 {
			t.Errorf("%s: standardised difference %v, reference %v", pm.Column, pm.StdDiff, want)
		}
	}
	if cm.Interpretation == "" {
		t.Error("no interpretation")
	}
}

// mixSide builds one cohort's side of a case-mix comparison from CSV
// text under a frozen model.
func mixSide(t *testing.T, spec *model.Spec, name, csv string) MixInput {
	t.Helper()
	fr, err := cohort.Parse(name, []byte(csv), spec.Columns(true), cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	d, m, err := model.Build(spec, fr, model.Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	lp, err := d.FrozenLinearPredictors(m)
	if err != nil {
		t.Fatal(err)
	}
	return MixInput{Frame: fr, Rows: m.Rows, X: m.X, P: m.P, Y: m.Y, LP: lp, Terms: m.Terms}
}

// mixCSV writes n rows of age (spread by a fixed pattern, shifted by
// shift), the extra columns of each row from extra, and an outcome that
// is an event in every third row.
func mixCSV(n int, shift float64, head string, extra func(i int, age float64) string) string {
	var b strings.Builder
	b.WriteString("age," + head + ",y\n")
	for i := 0; i < n; i++ {
		age := 40 + shift + float64((i*37)%50)
		y := 0
		if i%3 == 0 {
			y = 1
		}
		fmt.Fprintf(&b, "%g,%s,%d\n", age, extra(i, age), y)
	}
	return b.String()
}

// TestCaseMixDropsAliasedTerms: a term constant in both cohorts, a term
// that is a linear function of another, and a level present in neither
// cohort cannot be estimated in the membership model; they are left out
// with the reason, and the comparison goes on (issue 11: "the membership
// model: columns are linearly dependent" aborted the audit). Different
// constants in the two cohorts separate them: the membership model is
// then Firth's, with a note, and the standardised difference, a
// difference over an SD of 0, is null with a note; the same constant has
// difference 0.
func TestCaseMixDropsAliasedTerms(t *testing.T) {
	const head = "outcome: {column: y, event: 1}\nintercept: -1\npredictors:\n  - column: age\n    coef: 0.02\n"
	for _, tc := range []struct {
		name      string
		spec      string
		cols      string
		dev, cur  func(i int, age float64) string
		dropped   map[string]string // term → a phrase of its reason
		diffNote  string            // a phrase of the note on the second predictor, "" for none
		diff      float64           // its standardised difference (NaN: none)
		sepNote   bool              // the membership model separates the cohorts
		wantExact float64           // the membership c when it is known exactly (0: not checked)
	}{
		{
			name: "constant in both", spec: head + "  - column: site\n    coef: 0.1\n", cols: "site",
			dev: func(int, float64) string { return "1" }, cur: func(int, float64) string { return "1" },
			dropped: map[string]string{"site": "constant (1) in both cohorts"}, diffNote: "constant (1) in both cohorts", diff: 0,
		},
		{
			name: "linear function of another", spec: head + "  - column: age2\n    coef: 0.01\n", cols: "age2",
			dev: func(_ int, a float64) string { return fmt.Sprint(2*a + 1) }, cur: func(_ int, a float64) string { return fmt.Sprint(2*a + 1) },
			dropped: map[string]string{"age2": "a linear combination of the intercept and age"}, diff: math.Inf(1),
		},
		{
			name: "copy of another", spec: head + "  - column: age_copy\n    coef: 0.01\n", cols: "age_copy",
			dev: func(_ int, a float64) string { return fmt.Sprint(a) }, cur: func(_ int, a float64) string { return fmt.Sprint(a) },
			dropped: map[string]string{"age_copy": "a linear combination of age (up to rounding)"}, diff: math.Inf(1),
		},
		{
			name: "level in neither cohort", spec: head + "  - column: grp\n    categorical: true\n    reference: X\n    levels: {Y: 0.3, Z: 0.2}\n", cols: "grp",
			dev: func(i int, _ float64) string { return []string{"X", "Y"}[i%2] }, cur: func(i int, _ float64) string { return []string{"X", "Y"}[i%3%2] },
			dropped: map[string]string{"grp=Z": "constant (0) in both cohorts"}, diff: math.Inf(1),
		},
		{
			name: "different constants", spec: head + "  - column: site\n    coef: 0.1\n", cols: "site",
			dev: func(int, float64) string { return "1" }, cur: func(int, float64) string { return "2" },
			diffNote: "different values (1 in development, 2 in the new cohort)", diff: math.NaN(), sepNote: true, wantExact: 1,
		},
	} {
		t.Run(tc.name, func(t *testing.T) {
			spec, err := model.ParseSpec("frozen.yaml", []byte(tc.spec))
			if err != nil {
				t.Fatal(err)
			}
			dev := mixSide(t, spec, "dev.csv", mixCSV(300, 0, tc.cols, tc.dev))
			cur := mixSide(t, spec, "new.csv", mixCSV(200, 5, tc.cols, tc.cur))
			cm, err := CompareCaseMix(dev, cur, []string{"age", tc.cols}, nil, nil)
			if err != nil {
				t.Fatalf("the comparison failed: %v", err)
			}
			if len(cm.MembershipDropped) != len(tc.dropped) {
				t.Errorf("dropped %+v, want %v", cm.MembershipDropped, tc.dropped)
			}
			for _, d := range cm.MembershipDropped {
				if want, ok := tc.dropped[d.Term]; !ok || !strings.Contains(d.Reason, want) {
					t.Errorf("dropped %s (%s), want %v", d.Term, d.Reason, tc.dropped)
				}
				if !strings.Contains(cm.Interpretation, d.Term+", "+d.Reason) {
					t.Errorf("the interpretation does not name the dropped term %s: %s", d.Term, cm.Interpretation)
				}
			}
			if math.IsNaN(cm.MembershipC) || cm.MembershipC < 0.5 || cm.MembershipC > 1 {
				t.Errorf("membership c %g (%s)", cm.MembershipC, cm.MembershipNote)
			}
			if tc.wantExact != 0 && math.Abs(cm.MembershipC-tc.wantExact) > 1e-12 {
				t.Errorf("membership c %g, want %g", cm.MembershipC, tc.wantExact)
			}
			if got := strings.Contains(cm.MembershipNote, "separate the two cohorts completely") && strings.Contains(cm.MembershipNote, "Firth"); got != tc.sepNote {
				t.Errorf("membership note %q", cm.MembershipNote)
			}
			pm := cm.Predictors[1]
			if tc.diffNote == "" {
				if pm.Note != "" {
					t.Errorf("note %q", pm.Note)
				}
			} else if !strings.Contains(pm.Note, tc.diffNote) {
				t.Errorf("note %q, want one containing %q", pm.Note, tc.diffNote)
			}
			switch d := pm.StdDiff[0]; {
			case math.IsNaN(tc.diff):
				if !math.IsNaN(d) {
					t.Errorf("standardised difference %g, want none", d)
				}
			case math.IsInf(tc.diff, 0):
				if math.IsNaN(d) || math.IsInf(d, 0) {
					t.Errorf("standardised difference %g, want a finite one", d)
				}
			case d != tc.diff:
				t.Errorf("standardised difference %g, want %g", d, tc.diff)
			}
		})
	}
}

// TestMembershipUnfittableIsANote: a membership model that cannot be
// fitted at all (a term of ±1e300, whose information overflows) leaves
// the c-statistic NaN with the reason, and the comparison is returned.
func TestMembershipUnfittableIsANote(t *testing.T) {
	spec, err := model.ParseSpec("frozen.yaml", []byte("outcome: {column: y, event: 1}\nintercept: -1\npredictors:\n  - column: age\n    coef: 0.02\n  - column: huge\n    coef: 0\n"))
	if err != nil {
		t.Fatal(err)
	}
	huge := func(i int, _ float64) string { return []string{"1e300", "-1e300", "3e299"}[i%3] }
	dev := mixSide(t, spec, "dev.csv", mixCSV(60, 0, "huge", huge))
	cur := mixSide(t, spec, "new.csv", mixCSV(60, 5, "huge", huge))
	cm, err := CompareCaseMix(dev, cur, []string{"age", "huge"}, nil, nil)
	if err != nil {
		t.Fatalf("the comparison failed: %v", err)
	}
	if !math.IsNaN(cm.MembershipC) || !strings.Contains(cm.MembershipNote, "could not be fitted") {
		t.Fatalf("membership c %g, note %q", cm.MembershipC, cm.MembershipNote)
	}
	if !strings.Contains(cm.Interpretation, "does not say how different the patients are") {
		t.Errorf("interpretation: %s", cm.Interpretation)
	}
}
