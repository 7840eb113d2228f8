package resample

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"sort"
	"testing"

	"github.com/riskaudit/riskaudit/cohort"
	"github.com/riskaudit/riskaudit/logistic"
	"github.com/riskaudit/riskaudit/metrics"
	"github.com/riskaudit/riskaudit/model"
)

const refLog = "../testdata/reference/bootstrap_wdbc.log"

// wdbcProblem is the four-predictor recipe on the Wisconsin data.
func wdbcProblem(t testing.TB) Problem {
	t.Helper()
	spec, err := model.LoadSpec("../testdata/reference/recipes/wdbc_linear.yaml")
	if err != nil {
		t.Fatal(err)
	}
	_, d, m, err := model.Load(spec, "../testdata/open/wdbc.csv", cohort.Options{}, model.Options{Outcome: true})
	if err != nil {
		t.Fatal(err)
	}
	f, err := model.Fit(d, m, model.FitOptions{})
	if err != nil {
		t.Fatal(err)
	}
	return Problem{X: m.X, N: m.N, P: m.P, Y: m.Y, Coef: f.Result.Coef}
}

type refOptimism struct {
	Apparent map[string]float64 `json:"apparent"`
	Optimism map[string]float64 `json:"optimism"`
	Failed   int                `json:"failed"`
}

// TestOptimismMatchesStatsmodels runs 20 replicates on the Wisconsin data,
// checks the resample log against the committed one, and compares every
// apparent value and optimism with testdata/reference/bootstrap.json,
// which make_reference.py computes from that log by refitting every
// replicate with statsmodels' Logit and measuring with scikit-learn
// (roc_auc_score, brier_score_loss), statsmodels (GLM with offset,
// lowess) and the Nagelkerke formula; agreement to 1e-6.
func TestOptimismMatchesStatsmodels(t *testing.T) {
	pr := wdbcProblem(t)
	var log bytes.Buffer
	res, err := Optimism(context.Background(), pr, Options{B: 20, Seed: 1, Log: &log, Workers: 2, ICIDelta: 0.05})
	if err != nil {
		t.Fatal(err)
	}
	if os.Getenv("RISKAUDIT_UPDATE_LOG") != "" {
		if err := os.WriteFile(refLog, log.Bytes(), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(refLog)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(want, log.Bytes()) {
		t.Fatal("the resample log differs from the committed one: the random streams changed")
	}
	b, err := os.ReadFile("../testdata/reference/bootstrap.json")
	if err != nil {
		t.Fatal(err)
	}
	var ref refOptimism
	if err := json.Unmarshal(b, &ref); err != nil {
		t.Fatal(err)
	}
	if res.Failed != ref.Failed {
		t.Errorf("%d failed, reference %d", res.Failed, ref.Failed)
	}
	for name, got := range map[string][2]float64{
		"auc": {res.Apparent.AUC, res.Optimism.AUC}, "slope": {res.Apparent.Slope, res.Optimism.Slope},
		"citl": {res.Apparent.CITL, res.Optimism.CITL}, "brier": {res.Apparent.Brier, res.Optimism.Brier},
		"scaled_brier":  {res.Apparent.ScaledBrier, res.Optimism.ScaledBrier},
		"nagelkerke_r2": {res.Apparent.R2, res.Optimism.R2}, "ici": {res.Apparent.ICI, res.Optimism.ICI},
	} {
		if math.Abs(got[0]-ref.Apparent[name]) > 1e-6 {
			t.Errorf("apparent %s = %.10g, reference %.10g", name, got[0], ref.Apparent[name])
		}
		if math.Abs(got[1]-ref.Optimism[name]) > 1e-6 {
			t.Errorf("optimism %s = %.10g, reference %.10g", name, got[1], ref.Optimism[name])
		}
	}
}

func TestSameResultWhateverTheWorkers(t *testing.T) {
	pr := wdbcProblem(t)
	var a, b bytes.Buffer
	r1, err := Optimism(context.Background(), pr, Options{B: 30, Seed: 7, Workers: 1, Log: &a})
	if err != nil {
		t.Fatal(err)
	}
	r2, err := Optimism(context.Background(), pr, Options{B: 30, Seed: 7, Workers: 3, Log: &b})
	if err != nil {
		t.Fatal(err)
	}
	if r1.Optimism != r2.Optimism || !bytes.Equal(a.Bytes(), b.Bytes()) {
		t.Errorf("1 worker %+v, 3 workers %+v", r1.Optimism, r2.Optimism)
	}
}

// noisy simulates few events and many noise predictors.
func noisy(n, noise int, seed uint64) Problem {
	r := rand.New(rand.NewPCG(seed, 5))
	p := noise + 2
	pr := Problem{N: n, P: p, X: make([]float64, n*p), Y: make([]float64, n)}
	for i := 0; i < n; i++ {
		x := pr.X[i*p : (i+1)*p]
		x[0] = 1
		for j := 1; j < p; j++ {
			x[j] = r.NormFloat64()
		}
		if r.Float64() < logistic.Expit(-1.5+0.8*x[1]) {
			pr.Y[i] = 1
		}
	}
	return pr
}

// TestOverfittedModelIsOptimistic: with few events and many noise
// predictors the AUC optimism is positive and the shrinkage factor (the
// corrected slope) below 1 — the behaviour the method exists to show
// (Harrell, Lee & Mark 1996; Steyerberg 2019, Clinical Prediction Models,
// ch. 5; common practice).
func TestOverfittedModelIsOptimistic(t *testing.T) {
	pr := noisy(200, 15, 3)
	fit, err := logistic.Fit(logistic.Data{X: pr.X, N: pr.N, P: pr.P, Y: pr.Y}, logistic.Options{})
	if err != nil {
		t.Fatal(err)
	}
	pr.Coef = fit.Coef
	res, err := Optimism(context.Background(), pr, Options{B: 100, Seed: 11})
	if err != nil {
		t.Fatal(err)
	}
	if res.Optimism.AUC <= 0 {
		t.Errorf("AUC optimism %v should be positive", res.Optimism.AUC)
	}
	if res.Corrected.Slope >= 1 {
		t.Errorf("shrinkage factor %v should be below 1", res.Corrected.Slope)
	}
	if res.Corrected.AUC >= res.Apparent.AUC {
		t.Errorf("corrected AUC %v should be below apparent %v", res.Corrected.AUC, res.Apparent.AUC)
	}
}

// BenchmarkOptimism: B = 1000 replicates, n = 10,000 rows, 8 predictors,
// every measure, on one worker and on all.
func BenchmarkOptimism(b *testing.B) {
	pr := noisy(10000, 7, 9)
	fit, err := logistic.Fit(logistic.Data{X: pr.X, N: pr.N, P: pr.P, Y: pr.Y}, logistic.Options{})
	if err != nil {
		b.Fatal(err)
	}
	pr.Coef = fit.Coef
	for _, w := range []int{1, 2} {
		b.Run(map[int]string{1: "workers=1", 2: "workers=2"}[w], func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if _, err := Optimism(context.Background(), pr, Options{B: 1000, Seed: 1, Workers: w}); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func TestPercentileIntervals(t *testing.T) {
	r := rand.New(rand.NewPCG(2, 3))
	n := 3000
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = 0.02 + 0.4*r.Float64()
		if r.Float64() < 1.2*p[i] {
			y[i] = 1
		}
	}
	ts := []float64{0.1, 0.2}
	a, err := PercentileIntervals(context.Background(), y, p, CIOptions{B: 60, Seed: 4, Workers: 1, Thresholds: ts})
	if err != nil {
		t.Fatal(err)
	}
	b, err := PercentileIntervals(context.Background(), y, p, CIOptions{B: 60, Seed: 4, Workers: 3, Thresholds: ts})
	if err != nil {
		t.Fatal(err)
	}
	if a.ICI != b.ICI || a.NetBenefit[1] != b.NetBenefit[1] {
		t.Errorf("workers changed the intervals: %v vs %v", a, b)
	}
	_, sb := metrics.Brier(y, p)
	if !(a.ScaledBrier[0] < sb && sb < a.ScaledBrier[1]) {
		t.Errorf("scaled Brier %v outside its interval %v", sb, a.ScaledBrier)
	}
	nb := metrics.NetBenefits(metrics.SortByRisk(y, p), ts)
	for j := range ts {
		if !(a.NetBenefit[j][0] < nb[j].Model && nb[j].Model < a.NetBenefit[j][1]) {
			t.Errorf("net benefit %v outside %v", nb[j].Model, a.NetBenefit[j])
		}
	}
	if !(a.ICI[0] < a.ICI[1] && a.ICI[0] >= 0) {
		t.Errorf("ICI interval %v", a.ICI)
	}
}

// TestFailedReplicatesAreCounted: a rare level missing from many
// bootstrap samples makes those refits fail; they are counted by reason
// and left out, and the rest still give a result.
func TestFailedReplicatesAreCounted(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 9))
	n, p := 150, 3
	pr := Problem{N: n, P: p, X: make([]float64, n*p), Y: make([]float64, n)}
	for i := 0; i < n; i++ {
		x := pr.X[i*p : (i+1)*p]
		x[0], x[1] = 1, r.NormFloat64()
		if i < 2 { // a level held by two rows only
			x[2] = 1
		}
		if r.Float64() < logistic.Expit(-0.5+x[1]) {
			pr.Y[i] = 1
		}
	}
	pr.Y[0], pr.Y[1] = 1, 0
	fit, err := logistic.Fit(logistic.Data{X: pr.X, N: n, P: p, Y: pr.Y}, logistic.Options{})
	if err != nil {
		t.Fatal(err)
	}
	pr.Coef = fit.Coef
	res, err := Optimism(context.Background(), pr, Options{B: 60, Seed: 2})
	if err != nil {
		t.Fatal(err)
	}
	if res.Failed == 0 || res.Failed == res.B {
		t.Fatalf("%d of %d failed; expected some", res.Failed, res.B)
	}
	total := 0
	for _, k := range res.Reasons {
		total += k
	}
	if total != res.Failed {
		t.Errorf("reasons %v do not add up to %d", res.Reasons, res.Failed)
	}
	if res.FailedShare() <= 0.10 {
		t.Logf("failed share %.2f", res.FailedShare())
	}
}

// TestPercentileGainRecomputed draws every replicate again from its
// stream, computes the net benefit of the model and of treating everyone
// straight from their definition (Vickers & Elkin 2006: TP/n − FP/n ·
// t/(1 − t), treating risks ≥ t) by a plain loop over the drawn rows,
// and takes the 2.5th and 97.5th percentiles (Hyndman & Fan definition
// 7, as numpy.quantile's default) of the gain over the better default
// strategy: the intervals must be the same.
func TestPercentileGainRecomputed(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 9))
	n := 800
	y, p := make([]float64, n), make([]float64, n)
	for i := range p {
		p[i] = 0.01 + 0.5*r.Float64()
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	ts := []float64{0.05, 0.15, 0.3}
	const B, seed = 200, 11
	got, err := PercentileIntervals(context.Background(), y, p, CIOptions{B: B, Seed: seed, Workers: 2, Thresholds: ts})
	if err != nil {
		t.Fatal(err)
	}
	order := metrics.SortedOrder(p)
	for j, th := range ts {
		var gains, nbs []float64
		for b := 0; b < B; b++ {
			s := Stream(seed, b)
			counts := make([]int, n)
			for k := 0; k < n; k++ {
				counts[s.IntN(n)]++
			}
			var tp, fp, events float64
			for _, i := range order {
				c := float64(counts[i])
				events += c * y[i]
				if p[i] >= th {
					tp += c * y[i]
					fp += c * (1 - y[i])
				}
			}
			odds := th / (1 - th)
			model := tp/float64(n) - fp/float64(n)*odds
			all := events/float64(n) - (float64(n)-events)/float64(n)*odds
			nbs = append(nbs, model)
			gains = append(gains, model-math.Max(all, 0))
		}
		q := func(v []float64, at float64) float64 {
			sort.Float64s(v)
			h := at * float64(len(v)-1)
			lo := math.Floor(h)
			if int(lo)+1 >= len(v) {
				return v[len(v)-1]
			}
			return v[int(lo)] + (h-lo)*(v[int(lo)+1]-v[int(lo)])
		}
		wantNB := [2]float64{q(nbs, 0.025), q(nbs, 0.975)}
		wantGain := [2]float64{q(gains, 0.025), q(gains, 0.975)}
		for k := 0; k < 2; k++ {
			if math.Abs(got.NetBenefit[j][k]-wantNB[k]) > 1e-12 || math.Abs(got.NetBenefitGain[j][k]-wantGain[k]) > 1e-12 {
				t.Errorf("threshold %g: net benefit %v gain %v, recomputed %v and %v", th, got.NetBenefit[j], got.NetBenefitGain[j], wantNB, wantGain)
			}
		}
	}
}
