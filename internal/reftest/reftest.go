// Package reftest reads the outside reference values of
// testdata/reference (written by make_reference.py from statsmodels,
// scikit-learn, scipy and numpy, and regenerated in CI) for the tests of
// several packages, so that no test package copies another's readers.
// It is imported by tests only.
package reftest

import (
	"encoding/json"
	"os"
	"path/filepath"
	"runtime"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
)

// Dir is the folder of the reference values, found from this file's own
// place in the module so that a test in any package reads the same files.
func Dir() string {
	_, file, _, _ := runtime.Caller(0)
	return filepath.Join(filepath.Dir(file), "..", "..", "testdata", "reference")
}

// Path is the path of a file in the reference folder (or in a folder
// below it, given with slashes).
func Path(name string) string {
	return filepath.Join(Dir(), filepath.FromSlash(name))
}

// JSON decodes the reference file name (for example "extra.json") into v
// and stops the test if it cannot be read or decoded.
func JSON(t testing.TB, name string, v any) {
	t.Helper()
	b, err := os.ReadFile(Path(name))
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", name, err)
	}
}

// Predictions reads audit_predictions.csv, the invented audit of the
// Wisconsin breast-cancer data that the reference scripts measure: the
// outcome (diagnosis M = 1, B = 0) and the numeric columns asked for
// (risk, risk_b), in file order.
func Predictions(t testing.TB, columns ...string) (y []float64, cols map[string][]float64) {
	t.Helper()
	req := []cohort.Request{{Name: "diagnosis", Kind: cohort.Categorical}}
	for _, c := range columns {
		req = append(req, cohort.Request{Name: c, Kind: cohort.Numeric})
	}
	fr, err := cohort.Load(Path("audit_predictions.csv"), req, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	d := fr.Column("diagnosis")
	y = make([]float64, fr.Rows)
	for i, c := range d.Codes {
		if d.Levels[c] == "M" {
			y[i] = 1
		}
	}
	cols = map[string][]float64{}
	for _, c := range columns {
		cols[c] = fr.Column(c).Num
	}
	return y, cols
}
