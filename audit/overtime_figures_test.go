package audit_test

import (
	"encoding/json"
	"math"
	"testing"

	"github.com/riskaudit/riskaudit/audit"
	"github.com/riskaudit/riskaudit/internal/fixture"
	"gonum.org/v1/plot/plotter"
)

// TestOverTimeFigureData checks the data the four charts in date order
// draw against audit.json's over_time, for the demo's later extract in
// admission order: the cumulative expected − observed path reaches the
// record's lowest and highest values; each CUSUM's limit is drawn at ±h,
// its signals are the record's count with the first at the record's
// patient; the EWMA's first crossings are at the record's patients; and
// every period's O/E, calibration-in-the-large and AUC with their 95%
// intervals are the record's.
func TestOverTimeFigureData(t *testing.T) {
	d := fixture.WriteDemo(t, t.TempDir())
	cfg := demoAudit(d)
	cfg.OverTime = audit.OverTime{DateColumn: "admission_date", ARL: 2000}
	res, _, raw := runAndWrite(t, cfg)
	type ci [2]*float64
	var js struct {
		OverTime struct {
			VLADMin float64 `json:"vlad_min"`
			VLADMax float64 `json:"vlad_max"`
			CUSUM   []struct {
				Name  string
				Limit struct{ H float64 }
				// Signals is the count of signals.
				Signals     int
				FirstSignal struct{ Patient int } `json:"first_signal"`
			} `json:"cusum"`
			EWMA struct {
				FirstAbove struct{ Patient int } `json:"first_above"`
				FirstBelow struct{ Patient int } `json:"first_below"`
			} `json:"ewma"`
			Periods []struct {
				OE     *float64
				OECI   ci `json:"oe_ci"`
				CITL   *float64
				CITLCI ci `json:"citl_ci"`
				AUC    *float64
				AUCCI  ci `json:"auc_ci"`
			}
		} `json:"over_time"`
	}
	if err := json.Unmarshal(raw, &js); err != nil {
		t.Fatal(err)
	}
	ot := js.OverTime
	series := map[string]map[string]plotter.XYs{}
	for _, f := range res.Figures {
		series[f.Name] = map[string]plotter.XYs{}
		for _, s := range f.Series {
			series[f.Name][s.Name] = s.Points
		}
	}
	near := func(what string, got, want float64) {
		t.Helper()
		if math.Abs(got-want) > 1e-9*math.Max(1, math.Abs(want)) {
			t.Errorf("%s: drawn %.10g, audit.json %.10g", what, got, want)
		}
	}
	vlad := series["over_time_vlad.svg"]["expected − observed"]
	if len(vlad) == 0 {
		t.Fatal("the cumulative chart draws no path")
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, p := range vlad {
		lo, hi = math.Min(lo, p.Y), math.Max(hi, p.Y)
	}
	near("cumulative expected − observed: lowest", lo, ot.VLADMin)
	near("cumulative expected − observed: highest", hi, ot.VLADMax)
	cusum := series["over_time_cusum.svg"]
	if len(ot.CUSUM) != 2 {
		t.Fatalf("%d CUSUMs in audit.json", len(ot.CUSUM))
	}
	signalled := false
	for k, c := range ot.CUSUM {
		sign := 1.0
		if k == 1 {
			sign = -1 // the improvement chart is drawn downwards
		}
		lim := cusum[c.Name+" limit"]
		if len(lim) != 2 {
			t.Fatalf("%s: no limit drawn", c.Name)
		}
		near(c.Name+" limit", lim[0].Y, sign*c.Limit.H)
		near(c.Name+" limit", lim[1].Y, sign*c.Limit.H)
		sig := cusum[c.Name+" signals"]
		if len(sig) != c.Signals {
			t.Errorf("%s: %d signals drawn, audit.json has %d", c.Name, len(sig), c.Signals)
			continue
		}
		if c.Signals > 0 {
			signalled = true
			near(c.Name+" first signal's patient", sig[0].X, float64(c.FirstSignal.Patient))
			near(c.Name+" first signal's height (at the limit or above)", math.Max(math.Abs(sig[0].Y), c.Limit.H), math.Abs(sig[0].Y))
		}
	}
	if !signalled {
		t.Error("no CUSUM of the demo signalled: the marks are not tested")
	}
	ewma := series["over_time_ewma.svg"]
	for _, m := range []struct {
		name    string
		patient int
	}{{"first above the upper limit", ot.EWMA.FirstAbove.Patient}, {"first below the lower limit", ot.EWMA.FirstBelow.Patient}} {
		pts := ewma[m.name]
		switch {
		case m.patient == 0 && len(pts) != 0:
			t.Errorf("EWMA %s drawn at %v, audit.json has none", m.name, pts)
		case m.patient > 0 && len(pts) != 1:
			t.Errorf("EWMA %s: %d marks drawn, audit.json has patient %d", m.name, len(pts), m.patient)
		case m.patient > 0:
			near("EWMA "+m.name, pts[0].X, float64(m.patient))
		}
	}
	if ot.EWMA.FirstAbove.Patient == 0 {
		t.Error("the demo's EWMA never crossed its upper limit: the marks are not tested")
	}
	periods := series["over_time_periods.svg"]
	for _, pn := range []struct {
		name string
		get  func(i int) (*float64, ci)
	}{
		{"O/E", func(i int) (*float64, ci) { return ot.Periods[i].OE, ot.Periods[i].OECI }},
		{"calibration-in-the-large", func(i int) (*float64, ci) { return ot.Periods[i].CITL, ot.Periods[i].CITLCI }},
		{"AUC", func(i int) (*float64, ci) { return ot.Periods[i].AUC, ot.Periods[i].AUCCI }},
	} {
		var want, ends plotter.XYs
		for i := range ot.Periods {
			v, c := pn.get(i)
			if v == nil {
				continue
			}
			want = append(want, plotter.XY{X: float64(i + 1), Y: *v})
			if c[0] != nil && c[1] != nil {
				ends = append(ends, plotter.XY{X: float64(i + 1), Y: *c[0]}, plotter.XY{X: float64(i + 1), Y: *c[1]})
			} else {
				ends = append(ends, plotter.XY{X: float64(i + 1), Y: *v}, plotter.XY{X: float64(i + 1), Y: *v})
			}
		}
		for _, w := range []struct {
			name string
			want plotter.XYs
		}{{pn.name, want}, {pn.name + " interval", ends}} {
			got := periods[w.name]
			if len(got) != len(w.want) || len(got) == 0 {
				t.Errorf("periods %s: %d points drawn, audit.json gives %d", w.name, len(got), len(w.want))
				continue
			}
			for i := range got {
				near("periods "+w.name+" x", got[i].X, w.want[i].X)
				near("periods "+w.name, got[i].Y, w.want[i].Y)
			}
		}
	}
}
