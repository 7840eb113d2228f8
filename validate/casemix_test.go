package validate

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/model"
)

// TestCaseMixMatchesReferences splits the Wisconsin rows in two halves and
// compares the membership model's c-statistic and the standardised
// differences with testdata/reference/casemix.json (statsmodels Logit,
// scikit-learn roc_auc_score; the differences by their definition).
func TestCaseMixMatchesReferences(t *testing.T) {
	b, err := os.ReadFile("../testdata/reference/casemix.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref struct {
		Half        int                `json:"half"`
		MembershipC float64            `json:"membership_c"`
		StdDiff     map[string]float64 `json:"std_diff"`
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
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
