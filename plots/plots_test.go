package plots

import (
	"bytes"
	"encoding/xml"
	"io"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/validate"
)

func demoPerformance(t *testing.T) *validate.Performance {
	t.Helper()
	r := rand.New(rand.NewPCG(1, 2))
	n := 3000
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = 1 / (1 + 1/(0.02+r.Float64()*0.5))
		if r.Float64() < p[i]*1.2 {
			y[i] = 1
		}
	}
	perf, err := validate.Assess(y, p, validate.Options{Delta: validate.AutoDelta})
	if err != nil {
		t.Fatal(err)
	}
	return perf
}

// TestFiguresAreWellFormedSVG draws every figure with a label full of
// markup characters and checks that each file parses as XML and shows
// the label escaped.
func TestFiguresAreWellFormedSVG(t *testing.T) {
	label := `Ward <7> & "B" model`
	figs, err := All(demoPerformance(t), label)
	if err != nil {
		t.Fatal(err)
	}
	if len(figs) != 4 {
		t.Fatalf("%d figures", len(figs))
	}
	for _, f := range figs {
		d := xml.NewDecoder(bytes.NewReader(f.SVG))
		for {
			_, err := d.Token()
			if err == io.EOF {
				break
			}
			if err != nil {
				t.Fatalf("%s is not well-formed XML: %v", f.Name, err)
			}
		}
		if strings.Contains(string(f.SVG), "<7>") {
			t.Errorf("%s holds the label unescaped", f.Name)
		}
		if !strings.HasPrefix(strings.TrimSpace(string(f.SVG)), "<?xml") && !strings.Contains(string(f.SVG[:200]), "<svg") {
			t.Errorf("%s does not start as SVG", f.Name)
		}
	}
}
