package validate

import (
	"math"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/internal/reftest"
)

// TestBandColumnBoundaries: cut points 65 and 75 make the half-open bands
// (−∞, 65), [65, 75) and [75, ∞): a value exactly on a cut belongs to the
// band above, the float just below it to the band below; a missing value
// (NaN) is code −1, the band MissingLevel.
func TestBandColumnBoundaries(t *testing.T) {
	below65, below75 := math.Nextafter(65, 0), math.Nextafter(75, 0)
	x := []float64{-1e300, below65, 65, 70, below75, 75, 1e300, math.NaN()}
	want := []int32{0, 0, 1, 1, 1, 2, 2, -1}
	gc, info, err := BandColumn(x, Banding{Column: "age", Cuts: []float64{65, 75}})
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(gc.Codes, want) {
		t.Errorf("codes %v, want %v", gc.Codes, want)
	}
	if !slices.Equal(gc.Levels, []string{"<65", "65-<75", ">=75"}) {
		t.Errorf("labels %q", gc.Levels)
	}
	inf := math.Inf(1)
	if !slices.Equal(gc.Bands, []Band{{-inf, 65}, {65, 75}, {75, inf}}) {
		t.Errorf("bands %v", gc.Bands)
	}
	if info.Missing != 1 || !slices.Equal(info.Cuts, []float64{65, 75}) || info.Quantiles != 0 || info.Definition != "" {
		t.Errorf("info %+v", info)
	}
	// Labels state cut points exactly, in plain decimals.
	gc, _, _ = BandColumn([]float64{1}, Banding{Column: "x", Cuts: []float64{-0.5, 0.125, 1500000}})
	if !slices.Equal(gc.Levels, []string{"<-0.5", "-0.5-<0.125", "0.125-<1500000", ">=1500000"}) {
		t.Errorf("labels %q", gc.Levels)
	}
}

// TestBandedSubgroupsKeepEmptyBands: a band no row falls in is listed,
// too small, with its interval, as is every other band; the missing band
// appears only when a row is missing.
func TestBandedSubgroupsKeepEmptyBands(t *testing.T) {
	n := 200
	y, p, x := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range n {
		p[i] = 0.1 + 0.8*float64(i)/float64(n)
		if i%3 == 0 {
			y[i] = 1
		}
		x[i] = float64(40 + i%30) // 40 … 69: nobody is 75 or older
	}
	gc, _, err := BandColumn(x, Banding{Column: "age", Cuts: []float64{65, 75}})
	if err != nil {
		t.Fatal(err)
	}
	gs := Subgroups(y, p, nil, []GroupColumn{gc}, 5, DefaultCriteria(), DefaultEpsilon)
	if len(gs) != 3 {
		t.Fatalf("%d subgroups, want 3: %+v", len(gs), gs)
	}
	last := gs[2]
	if last.Level != ">=75" || last.N != 0 || !last.TooSmall || last.Band == nil || last.Band.Lower != 75 || !math.IsInf(last.Band.Upper, 1) {
		t.Errorf("empty band %+v", last)
	}
	if gs[0].Band == nil || !math.IsInf(gs[0].Band.Lower, -1) || gs[0].Band.Upper != 65 || gs[0].N != 6*25+20 { // 40 … 64 in six full cycles of 30, then 40 … 59
		t.Errorf("first band %+v", gs[0])
	}
}

// TestBandingRefused: cut points must be finite and increase; quantile
// bands number 2 to 20; one of the two, with a column.
func TestBandingRefused(t *testing.T) {
	for _, c := range []struct {
		b    Banding
		want string
	}{
		{Banding{Column: "age", Cuts: []float64{75, 65}}, "cut points must increase, but 65 follows 75"},
		{Banding{Column: "age", Cuts: []float64{65, 65}}, "cut points must increase, but 65 follows 65"},
		{Banding{Column: "age", Cuts: []float64{math.Inf(1)}}, "is not a finite number"},
		{Banding{Column: "age", Cuts: []float64{math.NaN()}}, "is not a finite number"},
		{Banding{Column: "age", Quantiles: 1}, "1 quantile bands: give 2 to 20"},
		{Banding{Column: "age", Quantiles: 21}, "give 2 to 20"},
		{Banding{Column: "age"}, "give cut points"},
		{Banding{Column: "age", Cuts: []float64{65}, Quantiles: 4}, "not both"},
		{Banding{Cuts: []float64{65}}, "needs a column"},
	} {
		err := c.b.Check()
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: %v, want %q", c.b, err, c.want)
		}
		if _, _, err := BandColumn([]float64{1}, c.b); err == nil {
			t.Errorf("%+v: BandColumn accepted it", c.b)
		}
	}
	if _, _, err := BandColumn([]float64{math.NaN()}, Banding{Column: "age", Quantiles: 4}); err == nil {
		t.Error("quantiles of a column without values")
	}
}

// subgroupsRef is testdata/reference/subgroups.json, written by
// make_reference.py with numpy.quantile (default method: Hyndman & Fan
// type 7), scikit-learn's roc_auc_score and statsmodels' GLM on the
// invented audit of the Wisconsin data; regenerated and compared in CI.
type subgroupsRef struct {
	Quantiles map[string]map[string][]float64 `json:"quantiles"`
	Cuts      refBands                        `json:"bands_cuts"`
	Quartiles refBands                        `json:"bands_quartiles"`
	Gain      struct {
		Thresholds []float64 `json:"thresholds"`
		Least      float64   `json:"least"`
		At         float64   `json:"at"`
	} `json:"net_benefit_gain"`
}

type refBands struct {
	Cuts  []float64 `json:"cuts"`
	Bands []struct {
		N      int     `json:"n"`
		Events int     `json:"events"`
		AUC    float64 `json:"auc"`
		OE     float64 `json:"oe"`
		CITL   float64 `json:"citl"`
		Slope  float64 `json:"slope"`
	} `json:"bands"`
}

// wdbcAudit reads the reference, the invented audit's outcomes and risks
// (audit_predictions.csv) and, in the same row order, the Wisconsin
// columns mean_radius and mean_texture (testdata/open/wdbc.csv).
func wdbcAudit(t *testing.T) (subgroupsRef, []float64, []float64, map[string][]float64) {
	t.Helper()
	var ref subgroupsRef
	reftest.JSON(t, "subgroups.json", &ref)
	y, pcols := reftest.Predictions(t, "risk")
	wd, err := cohort.Load("../testdata/open/wdbc.csv",
		[]cohort.Request{{Name: "mean_radius", Kind: cohort.Numeric}, {Name: "mean_texture", Kind: cohort.Numeric}}, cohort.Options{})
	if err != nil {
		t.Fatal(err)
	}
	cols := map[string][]float64{"mean_radius": wd.Column("mean_radius").Num, "mean_texture": wd.Column("mean_texture").Num}
	capped := make([]float64, wd.Rows)
	for i, r := range cols["mean_radius"] {
		capped[i] = math.Min(math.RoundToEven(r), 12) // numpy.round rounds half to even
	}
	cols["radius_capped"] = capped
	return ref, y, pcols["risk"], cols
}

func relNear(got, want, rel float64) bool {
	return math.Abs(got-want) <= rel*math.Max(math.Abs(want), 1e-12)
}

// TestQuantileCutsMatchNumpy: the quantile cut points of a banding are
// numpy.quantile's (type 7) to 1e-11 relative (the reference keeps 12 digits) before rounding, and the
// cuts used are those rounded to 6 significant digits, coinciding ones
// merged (radius_capped: many patients at 12).
func TestQuantileCutsMatchNumpy(t *testing.T) {
	ref, _, _, cols := wdbcAudit(t)
	merged := 0
	for name, byQ := range ref.Quantiles {
		for qs, want := range byQ {
			q, _ := strconv.Atoi(qs)
			_, info, err := BandColumn(cols[name], Banding{Column: name, Quantiles: q})
			if err != nil {
				t.Fatal(err)
			}
			if len(info.QuantileValues) != len(want) {
				t.Fatalf("%s q%d: %v, numpy %v", name, q, info.QuantileValues, want)
			}
			var cuts []float64
			for k, w := range want {
				if !relNear(info.QuantileValues[k], w, 1e-11) { // the reference keeps 12 digits
					t.Errorf("%s q%d: quantile %d/%d = %.15g, numpy.quantile %.15g", name, q, k+1, q, info.QuantileValues[k], w)
				}
				r, _ := strconv.ParseFloat(strconv.FormatFloat(w, 'g', 6, 64), 64)
				if len(cuts) == 0 || r > cuts[len(cuts)-1] {
					cuts = append(cuts, r)
				}
			}
			if !slices.Equal(info.Cuts, cuts) {
				t.Errorf("%s q%d: cuts %v, want %v", name, q, info.Cuts, cuts)
			}
			if len(cuts) < q-1 {
				merged++
				if !strings.Contains(info.Note, "coincide") {
					t.Errorf("%s q%d: merged cuts without a note: %+v", name, q, info)
				}
			} else if info.Note != "" {
				t.Errorf("%s q%d: note %q without merging", name, q, info.Note)
			}
		}
	}
	if merged == 0 {
		t.Error("no tied quantiles were merged: the reference lost its tied column")
	}
}

// TestBandedSubgroupsMatchReferences: mean_radius cut at 12 and 15, and
// at its quartiles: each band's patients and events (numpy.searchsorted
// side='right', the band above for a value on a cut), AUC (scikit-learn,
// 1e-9), O/E (1e-9), CITL and slope (statsmodels GLM, 1e-6).
func TestBandedSubgroupsMatchReferences(t *testing.T) {
	ref, y, p, cols := wdbcAudit(t)
	for _, c := range []struct {
		name string
		b    Banding
		ref  refBands
	}{
		{"cuts 12, 15", Banding{Column: "mean_radius", Cuts: []float64{12, 15}}, ref.Cuts},
		{"quartiles", Banding{Column: "mean_radius", Quantiles: 4}, ref.Quartiles},
	} {
		gc, info, err := BandColumn(cols["mean_radius"], c.b)
		if err != nil {
			t.Fatal(err)
		}
		if !slices.Equal(info.Cuts, c.ref.Cuts) {
			t.Errorf("%s: cuts %v, reference %v", c.name, info.Cuts, c.ref.Cuts)
		}
		gs := Subgroups(y, p, nil, []GroupColumn{gc}, 1, nil, DefaultEpsilon)
		if len(gs) != len(c.ref.Bands) {
			t.Fatalf("%s: %d bands, reference %d", c.name, len(gs), len(c.ref.Bands))
		}
		for k, w := range c.ref.Bands {
			g := gs[k]
			if g.N != w.N || g.Events != w.Events || g.TooSmall {
				t.Errorf("%s band %s: n %d events %d, reference %d %d", c.name, g.Level, g.N, g.Events, w.N, w.Events)
				continue
			}
			for _, m := range []struct {
				what      string
				got, want float64
				rel       float64
			}{
				{"AUC vs roc_auc_score", *g.AUC, w.AUC, 1e-9},
				{"O/E", *g.OE, w.OE, 1e-9},
				{"CITL vs statsmodels GLM", *g.CITL, w.CITL, 1e-6},
				{"slope vs statsmodels GLM", *g.Slope, w.Slope, 1e-6},
			} {
				if !relNear(m.got, m.want, m.rel) {
					t.Errorf("%s band %s: %s %.12g, reference %.12g", c.name, g.Level, m.what, m.got, m.want)
				}
			}
		}
	}
}

// TestNetBenefitGainMatchesReference: the default net-benefit criterion
// on the invented Wisconsin audit, with the default decision-curve grid
// (0.05 to 0.50 by 0.05): judged at 0.05, 0.1, 0.15 and 0.2, its value
// the smallest gain of the transcribed formula (make_reference.py), to
// 1e-9.
func TestNetBenefitGainMatchesReference(t *testing.T) {
	ref, y, p, _ := wdbcAudit(t)
	ts, err := ParseThresholds("0.05:0.50:0.05")
	if err != nil {
		t.Fatal(err)
	}
	perf, err := Assess(y, p, Options{Thresholds: ts})
	if err != nil {
		t.Fatal(err)
	}
	var nb Criterion
	for _, c := range DefaultCriteria() {
		if c.Measure == NetBenefitGainName {
			nb = c
		}
	}
	v, err := Judge(perf, []Criterion{nb})
	if err != nil {
		t.Fatal(err)
	}
	r := v.Criteria[0]
	if !slices.Equal(r.Thresholds, ref.Gain.Thresholds) || r.AtThreshold == nil || *r.AtThreshold != ref.Gain.At {
		t.Errorf("judged at %v (least at %v), reference %v (%g)", r.Thresholds, r.AtThreshold, ref.Gain.Thresholds, ref.Gain.At)
	}
	if !relNear(r.Value, ref.Gain.Least, 1e-9) || !r.Passed {
		t.Errorf("least gain %.12g (passed %v), reference %.12g", r.Value, r.Passed, ref.Gain.Least)
	}
}
