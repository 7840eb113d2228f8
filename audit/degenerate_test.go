package audit_test

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/jsonout"
	"github.com/riskaudit/riskaudit/report"
)

// TestPlanSizeRefusesWhatCannotBeComputed: a plan one of whose criteria
// cannot be computed is refused with the reason, not printed with a
// meaningless size.
func TestPlanSizeRefusesWhatCannotBeComputed(t *testing.T) {
	// Risks about expit(−10): none reaches a threshold of 0.5.
	_, err := audit.PlanSize(context.Background(), audit.SizeConfig{LPMean: -10, LPSD: 0.01, Threshold: 0.5})
	var ce *audit.ConfigError
	if !errors.As(err, &ce) || !strings.Contains(err.Error(), "net benefit at 0.5 criterion cannot be computed: no anticipated risk reaches") {
		t.Fatalf("got %v", err)
	}
	if _, err := audit.PlanSize(context.Background(), audit.SizeConfig{LPMean: -2, LPSD: 1, Threshold: 0.1}); err != nil {
		t.Errorf("an ordinary plan: %v", err)
	}
}

// degenerateCohort is an invented cohort written as CSV: risk, outcome
// and a site column for subgroups.
type degenerateCohort struct {
	name string
	risk []float64
	died []bool
	// want are texts the report must hold.
	want []string
}

func (c degenerateCohort) csv() string {
	var b strings.Builder
	b.WriteString("risk,died,site,x\n")
	for i, p := range c.risk {
		out := "no"
		if c.died[i] {
			out = "yes"
		}
		fmt.Fprintf(&b, "%g,%s,%s,1\n", p, out, []string{"north", "south"}[i%2])
	}
	return b.String()
}

// degenerateCohorts are the cohorts of issue 11 whose measures degenerate.
func degenerateCohorts() []degenerateCohort {
	var cs []degenerateCohort
	add := func(name string, want []string, rows func(i int) (float64, bool), n int) {
		c := degenerateCohort{name: name, want: want}
		for i := 0; i < n; i++ {
			p, d := rows(i)
			c.risk, c.died = append(c.risk, p), append(c.died, d)
		}
		cs = append(cs, c)
	}
	add("every risk tied", []string{"cannot be computed:", "not estimable (every predicted risk the same)", "ICI | 0.0850"},
		func(i int) (float64, bool) { return 0.2, i < 57 }, 200)
	add("AUC 1", []string{"not estimable (AUC 1: every event ranked above every non-event)"},
		func(i int) (float64, bool) {
			if i < 100 {
				return 0.05 + 0.004*float64(i), false
			}
			return 0.5 + 0.01*float64(i-100), true
		}, 130)
	add("AUC 0", []string{"not estimable (AUC 0: every event ranked below every non-event)"},
		func(i int) (float64, bool) {
			if i < 100 {
				return 0.5 + 0.004*float64(i), false
			}
			return 0.05 + 0.01*float64(i-100), true
		}, 130)
	add("10 rows, 1 event", []string{"AUC 0.778 (95% CI not estimable (1 event))", "logit-scale interval | 0.778 | not estimable (1 event)"},
		func(i int) (float64, bool) { return 0.05 + 0.03*float64(i), i == 7 }, 10)
	add("1 non-event", []string{"not estimable (1 non-event)"},
		func(i int) (float64, bool) { return 0.5 + 0.02*float64(i), i != 4 }, 20)
	add("two rows", []string{"not estimable (1 event)"},
		func(i int) (float64, bool) { return 0.3 - 0.1*float64(i), i == 0 }, 2)
	add("slope not estimable", []string{"the calibration slope could not be estimated: the predicted risks separate the events from the non-events completely"},
		func(i int) (float64, bool) {
			if i < 30 {
				return 0.1, false
			}
			return 0.3, true
		}, 40)
	add("risks of exactly 0 and 1", []string{"within the clamping ε", "the Hosmer–Lemeshow test could not be computed"},
		func(i int) (float64, bool) { return float64(i % 3 / 2), i%3 == 2 }, 30)
	add("risks of 0 and 1 among others", nil,
		func(i int) (float64, bool) {
			switch {
			case i < 10:
				return 0, i == 0
			case i < 20:
				return 1, i != 10
			}
			p := 0.05 + 0.9*float64(i-20)/180
			return p, (i*7919)%100 < int(100*p)
		}, 200)
	return cs
}

// TestDegenerateCohortsEndToEnd runs every degenerate cohort of issue 11
// through the whole audit (Run, Write and the command line's summary)
// with subgroups and bootstrap intervals, and fails if report.md or the
// summary shows a number that does not exist ("NaN", "Inf", an integer
// wrapped round from one) or audit.json is not valid JSON. Before, the
// tied cohort's sample-size table read −9223372036854775808 patients,
// the one-event cohort "95% CI NaN to NaN", and the rest likewise.
func TestDegenerateCohortsEndToEnd(t *testing.T) {
	for _, c := range degenerateCohorts() {
		dir := t.TempDir()
		file := filepath.Join(dir, "cohort.csv")
		if err := os.WriteFile(file, []byte(c.csv()), 0o644); err != nil {
			t.Fatal(err)
		}
		cfg := audit.Config{Predicted: &audit.Predicted{Column: "risk", Outcome: "died", Event: "yes"},
			Cohort: audit.Input{Path: file}, Subgroups: []string{"site"}, MinSubgroupEvents: 1, CIBootstrap: 20, Seed: 1, Tool: "riskaudit test"}
		res, err := audit.Run(context.Background(), cfg)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		out := filepath.Join(dir, "audit")
		if _, err := audit.Write(out, res, audit.WriteOptions{}); err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		md, err := os.ReadFile(filepath.Join(out, "report.md"))
		if err != nil {
			t.Fatal(err)
		}
		// Tables are padded to line up as text: compare with runs of
		// spaces closed up.
		squeezed := regexp.MustCompile(` +\|`).ReplaceAllString(string(md), " |")
		var stdout bytes.Buffer
		if err := report.WriteSummary(&stdout, res.Audit, out, len(res.Figures)); err != nil {
			t.Fatal(err)
		}
		for what, text := range map[string]string{"report.md": string(md), "the summary": stdout.String()} {
			for _, bad := range []string{"NaN", "Inf", "9223372036854775808"} {
				if i := strings.Index(text, bad); i >= 0 {
					t.Errorf("%s: %s shows %q: …%s…", c.name, what, bad, text[max(0, i-80):min(len(text), i+40)])
				}
			}
		}
		for _, f := range res.Figures {
			if strings.Contains(string(f.SVG), "NaN") {
				t.Errorf("%s: %s shows NaN", c.name, f.Name)
			}
		}
		for _, w := range c.want {
			if !strings.Contains(squeezed, w) {
				t.Errorf("%s: report.md lacks %q", c.name, w)
			}
		}
		js, err := os.ReadFile(filepath.Join(out, "audit.json"))
		if err != nil {
			t.Fatal(err)
		}
		var doc map[string]any
		if err := json.Unmarshal(js, &doc); err != nil {
			t.Errorf("%s: audit.json: %v", c.name, err)
		}
		if strings.Contains(string(js), "9223372036854775808") {
			t.Errorf("%s: audit.json holds a wrapped-round integer", c.name)
		}
	}
}

// TestDegenerateJSON checks the JSON of two of those cohorts: what does
// not exist is null, with the reason beside it.
func TestDegenerateJSON(t *testing.T) {
	cs := degenerateCohorts()
	get := func(c degenerateCohort) map[string]any {
		t.Helper()
		dir := t.TempDir()
		file := filepath.Join(dir, "cohort.csv")
		if err := os.WriteFile(file, []byte(c.csv()), 0o644); err != nil {
			t.Fatal(err)
		}
		res, err := audit.Run(context.Background(), audit.Config{Predicted: &audit.Predicted{Column: "risk", Outcome: "died", Event: "yes"}, Cohort: audit.Input{Path: file}})
		if err != nil {
			t.Fatal(err)
		}
		b, err := jsonout.Marshal(res.Audit)
		if err != nil {
			t.Fatal(err)
		}
		var m map[string]any
		if err := json.Unmarshal(b, &m); err != nil {
			t.Fatal(err)
		}
		return m
	}
	tied := get(cs[0])
	ss := tied["sample_size"].(map[string]any)
	for _, cr := range ss["criteria"].([]any) {
		cr := cr.(map[string]any)
		if cr["n"] != nil || cr["events"] != nil || cr["met"] != nil || cr["not_computable"] == "" {
			t.Errorf("every risk tied: criterion %v: n %v, events %v, met %v, reason %v", cr["measure"], cr["n"], cr["events"], cr["met"], cr["not_computable"])
		}
	}
	if ss["required_n"] != nil || ss["short"] != nil {
		t.Errorf("every risk tied: required_n %v, short %v; want null, null", ss["required_n"], ss["short"])
	}
	disc := tied["discrimination"].(map[string]any)
	if disc["auc_se"] != nil || disc["auc_ci"].([]any)[0] != nil || disc["auc_logit_ci"].([]any)[1] != nil || disc["notes"] == nil {
		t.Errorf("every risk tied: discrimination %v", disc)
	}
	// |mean risk − event rate| = |0.2 − 57/200|, the ICI of a constant
	// calibration curve.
	if ici := tied["calibration"].(map[string]any)["ici"].(float64); math.Abs(ici-0.085) > 1e-12 {
		t.Errorf("every risk tied: ICI %g, want 0.085", ici)
	}
	one := get(cs[3])["discrimination"].(map[string]any)
	if one["auc_logit_ci"].([]any)[0] != nil || one["auc"].(float64) != 7.0/9 {
		t.Errorf("one event: %v", one)
	}
}
