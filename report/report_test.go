package report

import (
	"bytes"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/validate"
)

func TestEscape(t *testing.T) {
	for in, want := range map[string]string{
		"plain name":      "plain name",
		"*bold* _it_":     `\*bold\* \_it\_`,
		"<b>&[x](y)|z`":   `\<b\>\&\[x\](y)\|z` + "\\`",
		"two\nlines":      "two lines",
		`back\slash #tag`: `back\\slash \#tag`,
	} {
		if got := Escape(in); got != want {
			t.Errorf("Escape(%q) = %q, want %q", in, got, want)
		}
	}
	if got := code("a`b"); got != "``a`b``" {
		t.Errorf("code = %q", got)
	}
}

func TestTableLinesUpAsText(t *testing.T) {
	var b bytes.Buffer
	tb := table{head: []string{"a", "longer head"}}
	tb.add("x", "1")
	tb.add("wide cell", "χ² 2")
	tb.write(&b)
	lines := strings.Split(strings.TrimSpace(b.String()), "\n")
	width := len([]rune(lines[0]))
	for _, l := range lines {
		if len([]rune(l)) != width {
			t.Errorf("ragged table:\n%s", b.String())
		}
	}
}

func TestReportSectionsAndCaution(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	n := 2000
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = 0.05 + 0.4*r.Float64()
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	perf, err := validate.Assess(y, p, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	a := validate.NewAudit(validate.ModelInfo{Name: "Test *model*", Source: "frozen model", Spec: "m.yaml", Outcome: "died", Event: "1"},
		validate.Provenance{Tool: "riskaudit test", CommandLine: "riskaudit audit ```x```", StartedAt: "2026-01-01T00:00:00Z",
			Inputs: []validate.InputFile{{Role: "cohort", Path: "c.csv", SHA256: "ab"}}}, perf, perf, "dev.csv")
	var b bytes.Buffer
	if err := Write(&b, a, nil); err != nil {
		t.Fatal(err)
	}
	md := b.String()
	for _, want := range []string{"# Model audit: Test \\*model\\*", "## Summary", "## Discrimination", "## Calibration",
		"## Overall accuracy", "## Clinical usefulness", "## Development data compared", "## Methods", "## Provenance",
		"## Caution", "clinical governance", "````\nriskaudit audit ```x```\n````"} {
		if !strings.Contains(md, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if strings.Index(md, "## Summary") > strings.Index(md, "## Discrimination") {
		t.Error("the summary must come first")
	}
}

// TestFailureReasonsInOrder: the bootstrap's failure reasons are listed
// in the order of their names, so the report is the same on every run
// (a map's order is not).
func TestFailureReasonsInOrder(t *testing.T) {
	perf, err := validate.Assess([]float64{0, 1, 0, 1, 1, 0}, []float64{0.1, 0.8, 0.3, 0.6, 0.9, 0.2}, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	reasons := map[string]int{"separation": 3, "a level absent from the sample": 2, "no convergence": 1, "collinear terms": 4}
	want := "(a level absent from the sample: 2; collinear terms: 4; no convergence: 1; separation: 3)"
	for run := 0; run < 20; run++ {
		a := validate.NewAudit(validate.ModelInfo{Name: "m"}, validate.Provenance{}, perf, nil, "")
		a.SetInternal(&validate.Internal{Bootstrap: 30, Failed: 10, Reasons: reasons})
		var b bytes.Buffer
		if err := Write(&b, a, nil); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), want) {
			t.Fatalf("run %d: the reasons are not listed as %s", run, want)
		}
	}
}

// TestSampleSizeNotComputable: a criterion whose size cannot be computed
// reads "cannot be computed: …" and judges nothing, and the report never
// says the cohort meets every criterion when one could not be computed.
func TestSampleSizeNotComputable(t *testing.T) {
	perf, err := validate.Assess([]float64{0, 1, 0, 1, 1, 0}, []float64{0.1, 0.8, 0.3, 0.6, 0.9, 0.2}, validate.Options{})
	if err != nil {
		t.Fatal(err)
	}
	n, e, yes, no := 120, 30, true, false
	ok := validate.SizeCriterion{Measure: "O/E", Target: "95% CI width 0.2", N: &n, Events: &e, Met: &no}
	okMet := ok
	okMet.Met = &yes
	slope := validate.SizeCriterion{Measure: "calibration slope", Target: "95% CI width 0.2", NotComputable: "the linear predictor does not vary"}
	for _, c := range []struct {
		name      string
		ss        validate.SampleSize
		want, not []string
	}{
		{"short of one, another not computable", validate.SampleSize{Criteria: []validate.SizeCriterion{ok, slope}, Required: &n, Driver: "O/E", Have: 6, Short: &yes},
			[]string{"cannot be computed: the linear predictor does not vary", "cannot be judged", "**too few**", "fall short of the 120"}, []string{"meet every criterion"}},
		{"meets those computable", validate.SampleSize{Criteria: []validate.SizeCriterion{okMet, slope}, Required: &n, Driver: "O/E", Have: 600},
			[]string{"meet the criteria that could be computed", "whether they are enough for the calibration slope cannot be judged", "enough"}, []string{"meet every criterion", "fall short"}},
		{"none computable", validate.SampleSize{Criteria: []validate.SizeCriterion{slope}, Have: 6},
			[]string{"No criterion's size could be computed"}, []string{"meet every criterion", "fall short", "largest need"}},
		{"every criterion met", validate.SampleSize{Criteria: []validate.SizeCriterion{okMet}, Required: &n, Driver: "O/E", Have: 600, Short: &no},
			[]string{"meet every criterion (the largest need is 120, for the O/E)"}, []string{"cannot"}},
	} {
		a := validate.NewAudit(validate.ModelInfo{Name: "m"}, validate.Provenance{}, perf, nil, "")
		a.SampleSize = &c.ss
		var b bytes.Buffer
		if err := Write(&b, a, nil); err != nil {
			t.Fatal(err)
		}
		md := b.String()
		sec := md[strings.Index(md, "## Was the cohort large enough?"):strings.Index(md, "## Methods")]
		for _, w := range c.want {
			if !strings.Contains(sec, w) {
				t.Errorf("%s: the section lacks %q:\n%s", c.name, w, sec)
			}
		}
		for _, w := range c.not {
			if strings.Contains(sec, w) {
				t.Errorf("%s: the section says %q:\n%s", c.name, w, sec)
			}
		}
	}
}

// TestNoNegativeZero: a value that rounds to zero prints without a
// minus sign in every number and interval of the report (a fact of
// reading, not of arithmetic: "-0.0000" reads as a negative value).
func TestNoNegativeZero(t *testing.T) {
	for _, tc := range []struct{ got, want string }{
		{num(-0.00001, "%.4f"), "0.0000"},
		{num(-0.00006, "%.4f"), "-0.0001"},
		{num(math.Copysign(0, -1), "%.3f"), "0.000"},
		{Interval([2]float64{-0.0004, -0.0001}, "%.3f", ""), "0.000 to 0.000"},
		{Interval([2]float64{-0.0006, 0.2}, "%.3f", ""), "-0.001 to 0.200"},
		{signed(-0.00001, "%+.2f"), "0.00"},
		{signed(0.5, "%+.2f"), "+0.50"},
		{pct(-0.0001), "0.0%"},
	} {
		if tc.got != tc.want {
			t.Errorf("got %q, want %q", tc.got, tc.want)
		}
	}
}
