package report

import (
	"bytes"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/validate"
)

// TestPooledCriteriaAndChecklist: an audit across two clusters judges a
// criterion on the pooled estimate, and one on its prediction interval
// that two clusters cannot give; the verdict table shows both rows, the
// second not met with the reason (fewer than 3 clusters), and the
// reporting checklist's items on heterogeneity across clusters (12d,
// 23b) point to the section across clusters when it ran, and to nothing
// when it did not.
func TestPooledCriteriaAndChecklist(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	n := 1200
	y, p := make([]float64, n), make([]float64, n)
	col := validate.GroupColumn{Name: "site", Levels: []string{"north", "south"}, Codes: make([]int32, n)}
	for i := range p {
		p[i] = 0.05 + 0.5*r.Float64()
		if r.Float64() < p[i] {
			y[i] = 1
		}
		col.Codes[i] = int32(i % 2)
	}
	perf, err := validate.Assess(y, p, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	row := func(md, first string) string {
		for _, line := range strings.Split(md, "\n") {
			if strings.HasPrefix(line, "| "+first+" ") {
				return line
			}
		}
		return ""
	}
	for _, across := range []bool{true, false} {
		a := validate.NewAudit(validate.ModelInfo{Name: "m"}, validate.Provenance{}, perf, nil, "")
		if across {
			cl, err := validate.MeasureClusters(y, p, nil, col, validate.ClusterOptions{Column: "site"})
			if err != nil {
				t.Fatal(err)
			}
			a.Clusters = cl
			perf.Pooled = &cl.Pooled
			lo, one := 0.5, 1.0
			if a.Verdict, err = validate.Judge(perf, []validate.Criterion{
				{Measure: "pooled.auc", AtLeast: &lo},
				{Measure: "pooled.oe_pi", Contains: &one, Severity: "review"},
			}); err != nil {
				t.Fatal(err)
			}
		}
		var b bytes.Buffer
		if err := Write(&b, a, nil); err != nil {
			t.Fatal(err)
		}
		md := b.String()
		for _, item := range []string{"12d", "23b"} {
			got := row(md, item)
			points := strings.Contains(got, "| Across `site`: ")
			if got == "" || points != across {
				t.Errorf("across clusters %v: checklist row %s is %q", across, item, got)
			}
		}
		if !across {
			continue
		}
		if got := cells(row(md, "`pooled.auc`")); len(got) != 5 || got[2] != validate.FormatMeasure("pooled.auc", cl(a).AUC.Estimate) || got[3] != "met" {
			t.Errorf("verdict row of pooled.auc: %q (pooled AUC %g)", got, cl(a).AUC.Estimate)
		}
		if got := row(md, "`pooled.oe_pi`"); !strings.Contains(got, "**not met** (cannot be judged: 2 clusters with this measure, at least 3 needed for a prediction interval)") {
			t.Errorf("verdict row of pooled.oe_pi: %q", got)
		}
		if a.Verdict.Status != "review" {
			t.Errorf("verdict %s; want review (only the review criterion on the prediction interval not met)", a.Verdict.Status)
		}
	}
}

// cells are the trimmed cells of a Markdown table row.
func cells(line string) []string {
	parts := strings.Split(strings.Trim(line, "|"), "|")
	for i := range parts {
		parts[i] = strings.TrimSpace(parts[i])
	}
	return parts
}

func cl(a *validate.Audit) *validate.PooledMeasures { return &a.Clusters.Pooled }
