package monitor

import (
	"context"
	"encoding/csv"
	"encoding/json"
	"math"
	"os"
	"strconv"
	"testing"
	"time"
)

// monitorRef is testdata/reference/monitor.json, written by
// make_reference.py from an independent numpy transcription of the
// published formulas (Lovegrove et al. 1997; Steiner et al. 2000; Grigg &
// Spiegelhalter 2007), statsmodels' GLM (CITL), scikit-learn's
// roc_auc_score (AUC) and the Markov chain of Brook & Evans (1972)
// (in-control ARL).
type monitorRef struct {
	Change int                  `json:"change"`
	Lambda float64              `json:"lambda"`
	VLAD   []float64            `json:"vlad"`
	CUSUM  map[string][]float64 `json:"cusum"`
	EWMAZ  []float64            `json:"ewma_z"`
	EWMASD []float64            `json:"ewma_sd"`
	Blocks []struct {
		N, Events    int
		Expected, OE float64
		OECI         [2]float64 `json:"oe_ci"`
		CITL         float64
		CITLSE       float64 `json:"citl_se"`
		AUC          float64
	} `json:"blocks"`
	ARL []struct {
		R      float64 `json:"odds_ratio"`
		H      float64 `json:"h"`
		Coarse float64 `json:"markov_arl_400"`
		Fine   float64 `json:"markov_arl_1600"`
	} `json:"arl"`
}

func loadRef(t *testing.T) (monitorRef, []float64, []float64) {
	t.Helper()
	var ref monitorRef
	b, err := os.ReadFile("../testdata/reference/monitor.json")
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	f, err := os.Open("../testdata/reference/monitor_series.csv")
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var y, p []float64
	for _, r := range rows[1:] {
		a, _ := strconv.ParseFloat(r[0], 64)
		b, _ := strconv.ParseFloat(r[1], 64)
		y, p = append(y, a), append(p, b)
	}
	return ref, y, p
}

func near(a, b, rel, abs float64) bool {
	return math.Abs(a-b) <= math.Max(abs, rel*math.Max(math.Abs(a), math.Abs(b)))
}

func comparePath(t *testing.T, name string, got, want []float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("%s: %d values, reference %d", name, len(got), len(want))
	}
	for i := range got {
		if !near(got[i], want[i], 1e-9, 1e-10) {
			t.Fatalf("%s at patient %d: %.15g, reference %.15g", name, i+1, got[i], want[i])
		}
	}
}

// TestPathsAgainstReference: the VLAD, both CUSUMs and the EWMA with its
// exact standard deviation against the numpy transcription, at 1e-9.
func TestPathsAgainstReference(t *testing.T) {
	ref, y, p := loadRef(t)
	v, err := VLAD(y, p)
	if err != nil {
		t.Fatal(err)
	}
	comparePath(t, "VLAD", v, ref.VLAD)
	for name, r := range map[string]float64{"deterioration": 2, "improvement": 0.5} {
		c, err := CUSUMPath(y, p, r)
		if err != nil {
			t.Fatal(err)
		}
		comparePath(t, "CUSUM "+name, c, ref.CUSUM[name])
	}
	e, err := ComputeEWMA(y, p, ref.Lambda, 3)
	if err != nil {
		t.Fatal(err)
	}
	comparePath(t, "EWMA Z", e.Z, ref.EWMAZ)
	comparePath(t, "EWMA SD", e.SD, ref.EWMASD)
}

// TestBlocksAgainstReference: calibration by blocks of 200 against
// statsmodels (CITL: GLM with offset) and scikit-learn (AUC); O/E and its
// interval against the transcription of Debray et al.'s formula.
func TestBlocksAgainstReference(t *testing.T) {
	ref, y, p := loadRef(t)
	got, err := ByPeriod(y, p, nil, Periods{Kind: "block", Block: 200})
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != len(ref.Blocks) {
		t.Fatalf("%d blocks, reference %d", len(got), len(ref.Blocks))
	}
	for i, w := range ref.Blocks {
		g := got[i]
		if g.N != w.N || g.Events != w.Events {
			t.Errorf("block %d: n %d events %d, reference %d %d", i+1, g.N, g.Events, w.N, w.Events)
		}
		checks := []struct {
			what      string
			got, want float64
			tol       float64
		}{
			{"expected", g.Expected, w.Expected, 1e-9},
			{"O/E", g.OE, w.OE, 1e-9},
			{"O/E lower", g.OECI[0], w.OECI[0], 1e-9},
			{"O/E upper", g.OECI[1], w.OECI[1], 1e-9},
			{"CITL", g.CITL, w.CITL, 1e-6},
			{"CITL lower", g.CITLCI[0], w.CITL - 1.959963984540054*w.CITLSE, 1e-6},
			{"AUC", g.AUC, w.AUC, 1e-9},
		}
		for _, c := range checks {
			if !near(c.got, c.want, c.tol, c.tol) {
				t.Errorf("block %d %s: %.12g, reference %.12g", i+1, c.what, c.got, c.want)
			}
		}
	}
}

// TestSimulatedARLAgainstMarkovChain: the simulated in-control ARL at a
// fixed limit against the Brook–Evans Markov chain of make_reference.py,
// within three Monte Carlo standard errors plus the chain's own
// discretisation error (taken as twice the gap between 400 and 1,600
// cells).
func TestSimulatedARLAgainstMarkovChain(t *testing.T) {
	ref, _, p := loadRef(t)
	base := p[:ref.Change]
	for _, a := range ref.ARL {
		rl, err := SimulateARL(context.Background(), base, a.R, a.H, 4000, int64(Horizon*a.Fine), 7)
		if err != nil {
			t.Fatal(err)
		}
		tol := 3*rl.SE + 2*math.Abs(a.Fine-a.Coarse)
		if math.Abs(rl.Mean-a.Fine) > tol {
			t.Errorf("R=%g h=%g: simulated ARL %.1f ± %.1f, Markov chain %.1f (tolerance %.1f)", a.R, a.H, rl.Mean, rl.SE, a.Fine, tol)
		}
		if rl.Cut > 4 {
			t.Errorf("R=%g: %d of 4000 runs cut at the horizon", a.R, rl.Cut)
		}
	}
}

// TestChosenLimitReachesTarget: the limit chosen for an in-control ARL
// of 1,000, checked by independent runs (another seed): their ARL is the
// target within three combined Monte Carlo errors; and the choice does not
// depend on the number of workers.
func TestChosenLimitReachesTarget(t *testing.T) {
	ref, _, p := loadRef(t)
	base := p[:ref.Change]
	ctx := context.Background()
	opt := LimitOptions{ARL: 1000, Runs: 2000, Seed: 3, Workers: 2}
	lims, err := ChooseLimits(ctx, base, []float64{2, 0.5}, opt)
	if err != nil {
		t.Fatal(err)
	}
	opt.Workers = 1
	one, err := ChooseLimits(ctx, base, []float64{2, 0.5}, opt)
	if err != nil {
		t.Fatal(err)
	}
	for c, l := range lims {
		if l != one[c] {
			t.Errorf("limit with 2 workers %+v, with 1 %+v", l, one[c])
		}
		if !(l.H > 0 && l.HSE > 0 && l.HSE < 0.2*l.H) {
			t.Errorf("R=%g: h %g with Monte Carlo error %g", l.R, l.H, l.HSE)
		}
		check, err := SimulateARL(ctx, base, l.R, l.H, 4000, 8000, 99)
		if err != nil {
			t.Fatal(err)
		}
		tol := 3 * math.Hypot(l.ARLSE, check.SE)
		if math.Abs(check.Mean-1000) > tol {
			t.Errorf("R=%g h=%.3f: independent ARL %.1f ± %.1f, target 1000 (tolerance %.1f)", l.R, l.H, check.Mean, check.SE, tol)
		}
	}
}

// TestMonthsAndQuarters: calendar periods in UTC with their labels,
// dates and patients (a fact of the calendar, checked by hand).
func TestMonthsAndQuarters(t *testing.T) {
	day := func(s string) time.Time {
		d, err := time.Parse(time.DateOnly, s)
		if err != nil {
			t.Fatal(err)
		}
		return d
	}
	dates := []time.Time{day("2025-12-31"), day("2026-01-01"), day("2026-01-31"), day("2026-03-31"), day("2026-04-01"), day("2026-04-01")}
	y := []float64{0, 1, 0, 1, 0, 1}
	p := []float64{0.2, 0.3, 0.4, 0.5, 0.2, 0.3}
	for _, tt := range []struct {
		kind   string
		labels []string
		firsts []int
	}{
		{"month", []string{"2025-12", "2026-01", "2026-03", "2026-04"}, []int{1, 2, 4, 5}},
		{"quarter", []string{"2025-Q4", "2026-Q1", "2026-Q2"}, []int{1, 2, 5}},
	} {
		got, err := ByPeriod(y, p, DatesOf(dates), Periods{Kind: tt.kind})
		if err != nil {
			t.Fatal(err)
		}
		if len(got) != len(tt.labels) {
			t.Fatalf("%s: %d periods, want %d", tt.kind, len(got), len(tt.labels))
		}
		for i, g := range got {
			if g.Label != tt.labels[i] || g.First != tt.firsts[i] {
				t.Errorf("%s period %d: %s from patient %d; want %s from %d", tt.kind, i, g.Label, g.First, tt.labels[i], tt.firsts[i])
			}
		}
	}
	if _, err := ByPeriod(y, p, DatesOf([]time.Time{dates[1], dates[0], dates[2], dates[3], dates[4], dates[5]}), Periods{Kind: "month"}); err == nil {
		t.Error("dates out of order were accepted")
	}
}
