package audit_test

import (
	"context"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/figcheck"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"github.com/riskaudit/riskaudit/plots"
)

// runAndWrite runs the audit, writes its folder and returns the result,
// the folder and its audit.json.
func runAndWrite(t *testing.T, cfg audit.Config) (*audit.Result, string, []byte) {
	t.Helper()
	res, err := audit.Run(context.Background(), cfg)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(t.TempDir(), "out")
	if _, err := audit.Write(out, res, audit.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(filepath.Join(out, "audit.json"))
	if err != nil {
		t.Fatal(err)
	}
	return res, out, raw
}

// TestDemoFigures writes the demo audit (with subgroups and case-mix)
// and checks every figure it lists in audit.json: both files exist, the
// SVG passes figcheck (no NaN, no text outside the canvas, no
// overlapping texts), the PNG decodes at 300 dpi of the SVG's size; and
// that the data each figure draws are audit.json's numbers: the decision
// curve's model and treat-all lines (the latter down to the panel's lower
// edge), the calibration figure's smooth, band and risk groups, the
// subgroup panels' estimates.
func TestDemoFigures(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	cfg := demoAudit(d)
	cfg.Subgroups = []string{"sex", "smoker"}
	res, out, raw := runAndWrite(t, cfg)
	var js struct {
		Figures    []struct{ Title, SVG, PNG string }
		NetBenefit []struct {
			Threshold, Model float64
			TreatAll         float64 `json:"treat_all"`
		} `json:"net_benefit"`
		Curves struct {
			Calibration []struct{ Predicted, Observed, Lower, Upper float64 } `json:"calibration_curve"`
			Groups      []struct {
				MeanRisk float64 `json:"mean_risk"`
				Observed struct{ Value float64 }
			} `json:"risk_groups"`
			ROC       []struct{ FPR, TPR float64 } `json:"roc"`
			Histogram struct {
				Edges     []float64
				Events    []int
				NonEvents []int `json:"non_events"`
			} `json:"risk_histogram"`
		}
		Discrimination struct{ AUC float64 }
		CaseMix        struct {
			Edges      []float64 `json:"lp_edges"`
			Dev        []float64 `json:"lp_share_development"`
			New        []float64 `json:"lp_share_new"`
			Predictors []struct {
				StdDiff []*float64 `json:"std_diff"`
			}
		} `json:"case_mix"`
		Subgroups []struct {
			AUC, OE, CITL, Slope *float64
		}
	}
	if err := json.Unmarshal(raw, &js); err != nil {
		t.Fatal(err)
	}
	want := map[string]bool{"calibration.svg": true, "roc.svg": true, "decision_curve.svg": true, "risk_histogram.svg": true,
		"subgroups.svg": true, "casemix_lp.svg": true, "casemix_differences.svg": true}
	if len(js.Figures) != len(want) {
		t.Fatalf("audit.json lists %d figures, want %d", len(js.Figures), len(want))
	}
	for _, f := range js.Figures {
		if !want[f.SVG] {
			t.Errorf("unexpected figure %s", f.SVG)
		}
		svg, err := os.ReadFile(filepath.Join(out, f.SVG))
		if err != nil {
			t.Fatal(err)
		}
		png, err := os.ReadFile(filepath.Join(out, f.PNG))
		if err != nil {
			t.Fatal(err)
		}
		for _, p := range figcheck.Check(svg) {
			t.Errorf("%s: %s", f.SVG, p)
		}
		w, h, _, err := figcheck.Texts(svg)
		if err != nil {
			t.Fatal(err)
		}
		if err := figcheck.CheckPNG(png, w, h, plots.PNGDPI); err != nil {
			t.Errorf("%s: %v", f.PNG, err)
		}
	}
	series := map[string]map[string][]float64{} // figure → series → y values
	xs := map[string]map[string][]float64{}
	for _, f := range res.Figures {
		series[f.Name], xs[f.Name] = map[string][]float64{}, map[string][]float64{}
		for _, s := range f.Series {
			for _, p := range s.Points {
				series[f.Name][s.Name] = append(series[f.Name][s.Name], p.Y)
				xs[f.Name][s.Name] = append(xs[f.Name][s.Name], p.X)
			}
		}
	}
	same := func(what string, got, want []float64, scale float64) {
		t.Helper()
		if len(got) != len(want) {
			t.Errorf("%s: %d points drawn, audit.json has %d", what, len(got), len(want))
			return
		}
		for i := range got {
			if math.Abs(got[i]-scale*want[i]) > 1e-9*math.Max(1, math.Abs(got[i])) {
				t.Errorf("%s point %d: drawn %g, audit.json %g", what, i, got[i], scale*want[i])
			}
		}
	}
	var model, thr, all []float64
	for _, v := range js.NetBenefit {
		model, thr = append(model, v.Model), append(thr, v.Threshold)
		all = append(all, v.TreatAll)
	}
	same("decision curve: model", series["decision_curve.svg"]["model"], model, 1)
	same("decision curve: thresholds", xs["decision_curve.svg"]["model"], thr, 100)
	// Treat all: audit.json's values while they are on the panel, then one
	// point on its lower edge (a quarter of the highest net benefit below 0).
	hi := 0.01
	for i := range model {
		hi = math.Max(hi, math.Max(model[i], all[i]))
	}
	edge := -0.25 * hi
	drawn := series["decision_curve.svg"]["treat all"]
	k := 0
	for k < len(all) && all[k] >= edge {
		k++
	}
	if k == len(all) {
		t.Fatal("the demo's treat-all line never leaves the panel: the clipping is not tested")
	}
	same("decision curve: treat all", drawn[:k], all[:k], 1)
	if len(drawn) != k+1 || drawn[k] != edge {
		t.Errorf("treat all: %d points drawn ending at %g, want %d ending on the lower edge %g", len(drawn), drawn[len(drawn)-1], k+1, edge)
	}
	var pred, obs, lo, up, gm, gobs []float64
	for _, c := range js.Curves.Calibration {
		pred, obs = append(pred, c.Predicted), append(obs, c.Observed)
		lo, up = append(lo, c.Lower), append(up, c.Upper)
	}
	for _, g := range js.Curves.Groups {
		gm, gobs = append(gm, g.MeanRisk), append(gobs, g.Observed.Value)
	}
	same("calibration: smooth", series["calibration.svg"]["smooth"], obs, 100)
	same("calibration: smooth x", xs["calibration.svg"]["smooth"], pred, 100)
	same("calibration: band lower", series["calibration.svg"]["band lower"], lo, 100)
	same("calibration: band upper", series["calibration.svg"]["band upper"], up, 100)
	same("calibration: groups", series["calibration.svg"]["groups"], gobs, 100)
	same("calibration: groups x", xs["calibration.svg"]["groups"], gm, 100)
	// The ROC curve: audit.json's points in percent, and the area under
	// the drawn polygon (trapezoids) is the Mann–Whitney AUC with ties
	// counted ½ (Hanley & McNeil 1982: the two are the same number for
	// the full empirical curve), here within 1/500: audit.json's curve is
	// thinned to points at least 1/500 apart in one rate or the other
	// (metrics.ROC), and the chords over the skipped points move the area
	// slightly (3·10⁻⁴ on the demo); a curve drawn with its rates swapped
	// has area 1 − AUC.
	var fpr, tpr []float64
	for _, r := range js.Curves.ROC {
		fpr, tpr = append(fpr, r.FPR), append(tpr, r.TPR)
	}
	same("ROC: true-positive rate", series["roc.svg"]["model"], tpr, 100)
	same("ROC: false-positive rate", xs["roc.svg"]["model"], fpr, 100)
	area := 0.0
	if rx, ry := xs["roc.svg"]["model"], series["roc.svg"]["model"]; len(rx) == len(ry) {
		for i := 1; i < len(rx); i++ {
			area += (rx[i] - rx[i-1]) * (ry[i] + ry[i-1]) / 2 / 1e4
		}
	}
	if math.Abs(area-js.Discrimination.AUC) > 1.0/500 {
		t.Errorf("ROC: the drawn curve's area is %.12g, audit.json's AUC %.12g", area, js.Discrimination.AUC)
	}
	// The risk histogram: each group's share of its patients in each bin
	// (percent), drawn as steps over the bin's edges.
	for _, g := range []struct {
		name   string
		counts []int
	}{{"with the event", js.Curves.Histogram.Events}, {"without", js.Curves.Histogram.NonEvents}} {
		total := 0
		for _, c := range g.counts {
			total += c
		}
		var want, wx []float64
		for i, c := range g.counts {
			v := float64(c) / float64(total)
			want = append(want, v, v)
			wx = append(wx, js.Curves.Histogram.Edges[i], js.Curves.Histogram.Edges[i+1])
		}
		same("risk histogram: "+g.name, series["risk_histogram.svg"][g.name], want, 100)
		same("risk histogram: "+g.name+" x", xs["risk_histogram.svg"][g.name], wx, 100)
	}
	// The case-mix figures: each cohort's share of patients in each bin of
	// the linear predictor (percent) as steps over the bin's edges, and one
	// bar per predictor (a level of a categorical one) at its standardised
	// difference, top row first, none for a difference that does not exist.
	for _, g := range []struct {
		name   string
		shares []float64
	}{{"development", js.CaseMix.Dev}, {"audited", js.CaseMix.New}} {
		var want, wx []float64
		for i, v := range g.shares {
			want, wx = append(want, v, v), append(wx, js.CaseMix.Edges[i], js.CaseMix.Edges[i+1])
		}
		same("case mix: "+g.name, series["casemix_lp.svg"][g.name], want, 100)
		same("case mix: "+g.name+" x", xs["casemix_lp.svg"][g.name], wx, 1)
	}
	var diffs, diffRows []float64
	var rows int
	for _, p := range js.CaseMix.Predictors {
		rows += len(p.StdDiff)
	}
	row := 0
	for _, p := range js.CaseMix.Predictors {
		for _, d := range p.StdDiff {
			if d != nil {
				diffs, diffRows = append(diffs, *d), append(diffRows, float64(rows-1-row))
			}
			row++
		}
	}
	if len(diffs) == 0 {
		t.Fatal("the demo's case mix has no standardised difference")
	}
	same("case mix: differences", xs["casemix_differences.svg"]["differences"], diffs, 1)
	same("case mix: difference rows", series["casemix_differences.svg"]["differences"], diffRows, 1)
	for _, m := range []struct {
		panel string
		get   func(i int) *float64
	}{
		{"AUC", func(i int) *float64 { return js.Subgroups[i].AUC }},
		{"O/E", func(i int) *float64 { return js.Subgroups[i].OE }},
		{"Calibration-in-the-large", func(i int) *float64 { return js.Subgroups[i].CITL }},
		{"Calibration slope", func(i int) *float64 { return js.Subgroups[i].Slope }},
	} {
		var want, rows []float64
		for i := range js.Subgroups {
			if v := m.get(i); v != nil && !math.IsNaN(*v) {
				want, rows = append(want, *v), append(rows, float64(i))
			}
		}
		if len(want) == 0 {
			t.Fatalf("no subgroup has a %s", m.panel)
		}
		same("subgroups: "+m.panel, xs["subgroups.svg"][m.panel], want, 1)
		same("subgroups: "+m.panel+" rows", series["subgroups.svg"][m.panel], rows, 1)
	}
}
