package plots

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/internal/figcheck"
	"github.com/riskaudit/riskaudit/validate"
)

// checkLayout checks one figure with figcheck (no NaN, text inside the
// canvas, no overlapping texts) and its PNG (decodes, PNGDPI size). With
// RISKAUDIT_FIGURES=dir it also writes both files there to be looked at.
func checkLayout(t *testing.T, f Figure) {
	t.Helper()
	for _, p := range figcheck.Check(f.SVG) {
		t.Errorf("%s: %s", f.Name, p)
	}
	w, h, _, err := figcheck.Texts(f.SVG)
	if err != nil {
		t.Fatalf("%s: %v", f.Name, err)
	}
	if err := figcheck.CheckPNG(f.PNG, w, h, PNGDPI); err != nil {
		t.Errorf("%s: %v", f.Name, err)
	}
	if !strings.Contains(string(f.SVG), "font-family:"+fontFamily+";") || strings.Contains(string(f.SVG), "Serif") {
		t.Errorf("%s does not ask for the font list %s alone", f.Name, fontFamily)
	}
	// Row labels of the subgroup, case-mix and cluster charts are the one
	// text that may be cut (the report's tables give them whole).
	rows := f.Name == "subgroups.svg" || f.Name == "casemix_differences.svg" || strings.HasPrefix(f.Name, "clusters_")
	if strings.Contains(string(f.SVG), "…") && !rows {
		t.Errorf("%s cuts a text short with an ellipsis", f.Name)
	}
	if dir := os.Getenv("RISKAUDIT_FIGURES"); dir != "" {
		for name, data := range map[string][]byte{f.Name: f.SVG, f.PNGName(): f.PNG} {
			if err := os.WriteFile(filepath.Join(dir, name), data, 0o644); err != nil {
				t.Fatal(err)
			}
		}
	}
}

// stressPerformance is an invented cohort with risks piled up near 0 and
// near 1.
func stressPerformance(t *testing.T) *validate.Performance {
	t.Helper()
	r := rand.New(rand.NewPCG(7, 9))
	n := 4000
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		switch i % 3 {
		case 0:
			p[i] = 1e-6 + 1e-3*r.Float64()
		case 1:
			p[i] = 1 - 1e-6 - 1e-3*r.Float64()
		default:
			p[i] = r.Float64()
		}
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	perf, err := validate.Assess(y, p, validate.Options{Delta: validate.AutoDelta})
	if err != nil {
		t.Fatal(err)
	}
	return perf
}

const longName = "Northfold Regional Trauma and Elective Surgery Network: thirty-day readmission or death after discharge, recalibrated edition for the winter extract (version 12.4.1-rc3)"

// stressSubgroups are 40 invented subgroups with long names, some too
// small, some missing a criterion, one with intervals not estimable.
func stressSubgroups() []validate.Subgroup {
	var out []validate.Subgroup
	f := func(v float64) *float64 { return &v }
	ci := func(a, b float64) *[2]float64 { return &[2]float64{a, b} }
	for i := range 40 {
		g := validate.Subgroup{Column: "referring_department_of_the_admitting_site", Level: fmt.Sprintf("level number %d with a long description", i),
			N: 100 + 37*i, Events: 10 + 3*i}
		switch {
		case i%11 == 5:
			g.TooSmall = true
		case i == 3:
			g.AUC, g.AUCCI, g.OE, g.OECI = f(0.7), ci(math.NaN(), math.NaN()), f(1.1), ci(math.NaN(), math.NaN())
			g.CITL, g.CITLCI, g.Slope, g.SlopeCI = f(0.1), ci(math.NaN(), math.NaN()), f(0.9), ci(math.NaN(), math.NaN())
		default:
			d := float64(i%7) / 10
			g.AUC, g.AUCCI = f(0.6+d/2), ci(0.5+d/2, 0.7+d/2)
			g.OE, g.OECI = f(0.6+d*2), ci(0.4+d*2, 0.9+d*2)
			g.CITL, g.CITLCI = f(-0.5+d), ci(-0.9+d, -0.1+d)
			g.Slope, g.SlopeCI = f(0.5+d), ci(0.2+d, 0.8+d*2)
			if i%4 == 0 {
				g.Failed = []string{"oe"}
			}
		}
		out = append(out, g)
	}
	return out
}

func stressCaseMix() *validate.CaseMix {
	cm := &validate.CaseMix{LPMeanDev: -1, LPSDDev: 1, LPMeanNew: 0.5, LPSDNew: 2}
	for i := 0; i <= 30; i++ {
		cm.LPEdges = append(cm.LPEdges, -8+0.5*float64(i))
	}
	for i := range 30 {
		cm.LPDev = append(cm.LPDev, math.Exp(-math.Pow(float64(i)-12, 2)/20)/8)
		cm.LPNew = append(cm.LPNew, math.Exp(-math.Pow(float64(i)-17, 2)/60)/14)
	}
	for i := range 12 {
		cm.Predictors = append(cm.Predictors, validate.PredictorMix{Column: fmt.Sprintf("laboratory_value_with_a_long_name_%d", i), Kind: "numeric",
			StdDiff: []float64{float64(i-6) / 4}})
	}
	cm.Predictors = append(cm.Predictors, validate.PredictorMix{Column: "constant", Kind: "numeric", StdDiff: []float64{math.NaN()}},
		validate.PredictorMix{Column: "site", Kind: "categorical", Levels: []string{"a", "a very long level name that goes on and on"}, StdDiff: []float64{0.05, -0.3}})
	return cm
}

// TestFigureLayout draws every figure of an ordinary cohort and of a
// stress cohort (a long model name, 40 subgroups with long names, risks
// near 0 and 1, a comparison of two long-named models) and checks what a
// program can of each: see checkLayout.
func TestFigureLayout(t *testing.T) {
	for _, tc := range []struct {
		name  string
		perf  *validate.Performance
		label string
	}{{"ordinary", demoPerformance(t), "Ward B model"}, {"stress", stressPerformance(t), longName}} {
		t.Run(tc.name, func(t *testing.T) {
			figs, err := All(tc.perf, tc.label)
			if err != nil {
				t.Fatal(err)
			}
			fg, err := Forest(stressSubgroups()[:map[string]int{"ordinary": 4, "stress": 40}[tc.name]], tc.perf)
			if err != nil {
				t.Fatal(err)
			}
			cm, err := CaseMix(stressCaseMix())
			if err != nil {
				t.Fatal(err)
			}
			cmp := &validate.Comparison{ModelA: tc.label, ModelB: tc.label + " (updated)"}
			for _, v := range tc.perf.NetBenefit {
				cmp.NetBenefit = append(cmp.NetBenefit, validate.NetBenefitPair{Threshold: v.Threshold, A: v.Model, B: v.Model * 0.9, TreatAll: v.TreatAll})
			}
			cf, err := CompareDecision(cmp)
			if err != nil {
				t.Fatal(err)
			}
			for _, f := range append(append(figs, fg, cf), cm...) {
				checkLayout(t, f)
			}
		})
	}
}

var tickRe = regexp.MustCompile(`>(-?[0-9.]+)</text>`)

// TestDecisionCurveDrawing checks the decision curve against its data:
// the treat-all series drawn is audit's treat-all net benefit at every
// threshold down to the panel's lower edge, where it ends exactly on the
// edge (between the two thresholds whose values straddle it); the model's
// series is its net benefit; the x range starts at the first threshold;
// the y ticks are round and include 0.
func TestDecisionCurveDrawing(t *testing.T) {
	perf := demoPerformance(t)
	f, err := decisionCurve(perf, "m")
	if err != nil {
		t.Fatal(err)
	}
	nb := perf.NetBenefit
	hi := 0.0
	for _, v := range nb {
		hi = math.Max(hi, math.Max(v.Model, v.TreatAll))
	}
	edge := -0.25 * math.Max(hi, 0.01)
	var all, model []float64
	for _, s := range f.Series {
		switch s.Name {
		case "treat all":
			for i, p := range s.Points {
				if i < len(nb) && p.X == 100*nb[i].Threshold {
					if p.Y != nb[i].TreatAll {
						t.Errorf("treat all at %g%%: drawn %g, data %g", p.X, p.Y, nb[i].TreatAll)
					}
					all = append(all, p.Y)
					continue
				}
				// The one point off the grid is the crossing of the lower edge.
				if p.Y != edge || i == 0 || i >= len(nb) || !(nb[i-1].TreatAll > edge && nb[i].TreatAll < edge) {
					t.Errorf("treat all point %d (%g, %g) is neither data nor the crossing of the edge %g", i, p.X, p.Y, edge)
				}
				if i != len(s.Points)-1 {
					t.Errorf("the treat-all line goes on after the lower edge")
				}
			}
		case "model":
			for i, p := range s.Points {
				if p.X != 100*nb[i].Threshold || p.Y != nb[i].Model {
					t.Errorf("model point %d drawn (%g, %g), data (%g, %g)", i, p.X, p.Y, 100*nb[i].Threshold, nb[i].Model)
				}
				model = append(model, p.Y)
			}
		}
	}
	if len(model) != len(nb) || len(all) == 0 {
		t.Fatalf("%d model points, %d treat-all points, for %d thresholds", len(model), len(all), len(nb))
	}
	if nb[len(nb)-1].TreatAll < edge && all[len(all)-1] == nb[len(nb)-1].TreatAll {
		t.Error("the treat-all line was not clipped at the lower edge")
	}
	// The y ticks: 0 among them, every one a multiple of 1, 2 or 5 × 10^k.
	ticks := roundTicks{}.Ticks(edge, 1.1*hi)
	zero := false
	for _, tk := range ticks {
		zero = zero || tk.Value == 0
		if !strings.Contains(string(f.SVG), ">"+tk.Label+"</text>") {
			t.Errorf("tick %s not drawn", tk.Label)
		}
	}
	if !zero {
		t.Errorf("no tick at 0 among %v", ticks)
	}
	step := ticks[1].Value - ticks[0].Value
	m := step / math.Pow(10, math.Floor(math.Log10(step)+1e-9))
	if math.Abs(m-1) > 1e-9 && math.Abs(m-2) > 1e-9 && math.Abs(m-5) > 1e-9 {
		t.Errorf("tick step %g is not 1, 2 or 5 × 10^k", step)
	}
	// x starts at the first threshold: no tick label below it.
	for _, tk := range (percentTicks{}).Ticks(100*nb[0].Threshold, 100*nb[len(nb)-1].Threshold) {
		if tk.Value < 100*nb[0].Threshold {
			t.Errorf("x tick %g below the first threshold", tk.Value)
		}
	}
	_ = tickRe
	_ = strconv.Itoa
}

func TestRoundTicks(t *testing.T) {
	for _, tt := range []struct {
		min, max float64
		want     string
	}{
		{-0.025, 0.11, "-0.02 0.00 0.02 0.04 0.06 0.08 0.10"},
		{-0.3, 1.2, "0.0 0.5 1.0"},
		{0, 10, "0 2 4 6 8 10"},
	} {
		var got []string
		for _, tk := range (roundTicks{}).Ticks(tt.min, tt.max) {
			got = append(got, tk.Label)
		}
		if strings.Join(got, " ") != tt.want {
			t.Errorf("ticks of [%g, %g]: %q, want %q", tt.min, tt.max, strings.Join(got, " "), tt.want)
		}
	}
}

// TestForestTitlesFitTheirPanels: with the stress subgroups' long row
// labels the panels are narrow, and a panel title wider than its panel
// (which would run under the next panel, hidden there) is set smaller;
// checkLayout (TestFigureLayout) finds no two texts overlapping, so each
// title ends before the next panel's.
func TestForestTitlesFitTheirPanels(t *testing.T) {
	fg, err := Forest(stressSubgroups(), stressPerformance(t))
	if err != nil {
		t.Fatal(err)
	}
	_, _, texts, err := figcheck.Texts(fg.SVG)
	if err != nil {
		t.Fatal(err)
	}
	var citl, auc *figcheck.Box
	for i := range texts {
		switch texts[i].Text {
		case "Calibration-in-the-large":
			citl = &texts[i]
		case "AUC":
			auc = &texts[i]
		}
	}
	if citl == nil || auc == nil {
		t.Fatal("no panel titles found")
	}
	if h, ha := citl.MaxY-citl.MinY, auc.MaxY-auc.MinY; !(h < ha) {
		t.Errorf("the narrow panel's title is %g points high, the AUC panel's %g: not set smaller to fit", h, ha)
	}
}
