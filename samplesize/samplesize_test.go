package samplesize

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/riskaudit/riskaudit/metrics"
)

// simulate draws n patients with LP ~ Normal(mu, sd) and outcomes from
// expit(LP), and returns ln(O/E), the calibration slope's SE, the AUC's
// DeLong SE and the standardised net benefit at threshold t.
func simulate(r *rand.Rand, n int, mu, sd, t float64) (lnOE, slopeSE, cSE, snb float64) {
	y, p, lp := make([]float64, n), make([]float64, n), make([]float64, n)
	for i := range y {
		lp[i] = mu + sd*r.NormFloat64()
		p[i] = expit(lp[i])
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	oe, _, _, _ := metrics.OE(y, p)
	slope, _, err := metrics.CalibrationSlope(y, lp)
	if err != nil {
		return math.NaN(), math.NaN(), math.NaN(), math.NaN()
	}
	sorted := metrics.SortByRisk(y, p)
	auc, _ := metrics.AUC(sorted)
	nb := metrics.NetBenefits(sorted, []float64{t})[0].Model
	ybar := 0.0
	for _, v := range y {
		ybar += v
	}
	ybar /= float64(n)
	return math.Log(oe), slope.SE, auc.SE, nb / ybar
}

// TestSizesGiveTheirTargets checks each criterion by simulation: cohorts
// of the size a criterion asks for, drawn from the anticipated population,
// give standard errors (empirical, or from the fitted models, which are
// checked against statsmodels elsewhere) close to the target. This checks
// the formulas against their purpose; the published worked example of
// Riley et al. (2021) is not checked (its inputs are not at hand; see
// DEVELOPERS.md, "Reference values").
func TestSizesGiveTheirTargets(t *testing.T) {
	mu, sd, thr := -2.2, 0.9, 0.1
	res, err := Compute(Anticipated{Normal: &NormalLP{mu, sd}, Threshold: thr}, DefaultTargets())
	if err != nil {
		t.Fatal(err)
	}
	byName := map[string]Criterion{}
	for _, c := range res.Criteria {
		byName[c.Measure] = c
	}
	r := rand.New(rand.NewPCG(1, 2))
	check := func(name string, got, want, tol float64) {
		t.Helper()
		if math.Abs(got/want-1) > tol {
			t.Errorf("%s: SE %.4f at the required n, target %.4f", name, got, want)
		}
	}
	// O/E and net benefit: the spread of the estimates over 400 cohorts.
	for _, m := range []string{"O/E", "standardised net benefit at 0.1"} {
		c := byName[m]
		var vals []float64
		for k := 0; k < 400; k++ {
			lnOE, _, _, snb := simulate(r, c.N, mu, sd, thr)
			if m == "O/E" {
				vals = append(vals, lnOE)
			} else {
				vals = append(vals, snb)
			}
		}
		m0, s := 0.0, 0.0
		for _, v := range vals {
			m0 += v
		}
		m0 /= float64(len(vals))
		for _, v := range vals {
			s += (v - m0) * (v - m0)
		}
		check(m, math.Sqrt(s/float64(len(vals)-1)), c.SE, 0.12)
	}
	// The slope and C: the model-based SEs of cohorts of that size.
	for _, m := range []string{"calibration slope", "C-statistic"} {
		c := byName[m]
		sum := 0.0
		for k := 0; k < 20; k++ {
			_, sse, cse, _ := simulate(r, c.N, mu, sd, thr)
			if m == "calibration slope" {
				sum += sse
			} else {
				sum += cse
			}
		}
		check(m, sum/20, c.SE, 0.10)
	}
	if res.Driver == "" || res.N < byName["O/E"].N {
		t.Errorf("driver %q n %d", res.Driver, res.N)
	}
}

func TestImpliedCAndEventRate(t *testing.T) {
	res, err := Compute(Anticipated{LP: Normal(-2, 1, 20000)}, DefaultTargets())
	if err != nil {
		t.Fatal(err)
	}
	// A simulated cohort from the same population has about that AUC.
	r := rand.New(rand.NewPCG(3, 4))
	n := 200000
	y, p := make([]float64, n), make([]float64, n)
	for i := range y {
		p[i] = expit(-2 + r.NormFloat64())
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	auc, _ := metrics.AUC(metrics.SortByRisk(y, p))
	if math.Abs(auc.AUC-res.C) > 0.005 {
		t.Errorf("implied C %.4f, simulated %.4f", res.C, auc.AUC)
	}
}

// TestCStatisticEventsAgainstPavlou2021 checks the C-statistic criterion
// against the published summary of Pavlou et al. (2021, Statistical
// Methods in Medical Research, doi:10.1177/09622802211007522, abstract):
// a standard error
// below 0.025 for the C-statistic needs 60–170 events when the C-statistic
// is between 0.64 and 0.85 and the event proportion between 0.05 and 0.3.
// Their estimator differs from Newcombe's variance used here, and the
// range is quoted to two figures, so the four corners must fall within 5%
// of that range and span most of it.
func TestCStatisticEventsAgainstPavlou2021(t *testing.T) {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, c := range []float64{0.64, 0.85} {
		for _, phi := range []float64{0.05, 0.3} {
			mu, sd, err := NormalFor(phi, c)
			if err != nil {
				t.Fatal(err)
			}
			res, err := Compute(Anticipated{Normal: &NormalLP{mu, sd}, C: c}, Targets{CWidth: 2 * z * 0.025})
			if err != nil {
				t.Fatal(err)
			}
			for _, cr := range res.Criteria {
				if cr.Measure == "C-statistic" {
					e := float64(cr.Events)
					lo, hi = math.Min(lo, e), math.Max(hi, e)
				}
			}
		}
	}
	if lo < 60*0.95 || hi > 170*1.05 || hi-lo < 0.8*(170-60) {
		t.Errorf("events needed range from %g to %g; Pavlou et al. report 60–170", lo, hi)
	}
}

// TestImpliedOE: without an anticipated O/E, the calibration gives it
// (mean true risk over mean predicted risk), and the O/E criterion's
// log-scale SE is the one whose interval exp(ln OE ± z·SE) has the target
// width.
func TestImpliedOE(t *testing.T) {
	lp := Normal(-3, 1, 20000)
	res, err := Compute(Anticipated{LP: lp, CalIntercept: 0.3, CalSlope: 0.8}, DefaultTargets())
	if err != nil {
		t.Fatal(err)
	}
	var obs, exp float64
	for _, v := range lp {
		obs += expit(0.3 + 0.8*v)
		exp += expit(v)
	}
	if oe := obs / exp; math.Abs(res.OE-oe) > 1e-12 || oe < 1.2 {
		t.Fatalf("O/E %.6f, want %.6f", res.OE, oe)
	}
	se := res.Criteria[0].SE
	if w := res.OE*math.Exp(z*se) - res.OE*math.Exp(-z*se); math.Abs(w-0.2) > 1e-12 {
		t.Errorf("interval width %.6f at the target SE, want 0.2", w)
	}
	calibrated, _ := Compute(Anticipated{LP: lp}, DefaultTargets())
	if calibrated.OE != 1 {
		t.Errorf("a calibrated model's O/E is %g", calibrated.OE)
	}
}

// TestNewcombeIsHanleyMcNeilWhenBalanced: Newcombe's (2006) variance of
// the C-statistic is the variance of Hanley & McNeil (1982, Radiology
// 143:29–36), [C(1 − C) + (n₁ − 1)(Q₁ − C²) + (n₀ − 1)(Q₂ − C²)]/(n₁n₀)
// with Q₁ = C/(2 − C) and Q₂ = 2C²/(1 + C) (formula recalled from memory),
// with n₁ − 1 and n₀ − 1 both replaced by n/2 − 1; with as many events as
// non-events the two agree exactly.
func TestNewcombeIsHanleyMcNeilWhenBalanced(t *testing.T) {
	for _, c := range []float64{0.55, 0.7, 0.85, 0.95} {
		for _, n := range []float64{40, 200, 5000} {
			n1, n0 := n/2, n/2
			q1, q2 := c/(2-c), 2*c*c/(1+c)
			hm := (c*(1-c) + (n1-1)*(q1-c*c) + (n0-1)*(q2-c*c)) / (n1 * n0)
			if got := newcombeVar(c, 0.5, n); math.Abs(got/hm-1) > 1e-12 {
				t.Errorf("C %g n %g: %g, Hanley–McNeil %g", c, n, got, hm)
			}
		}
	}
}

// TestNetBenefitVarianceBySensitivity: written with sensitivity,
// specificity and the event proportion φ, which are asymptotically
// independent with variances sens(1 − sens)/(nφ), spec(1 − spec)/(n(1 − φ))
// and φ(1 − φ)/n, the delta method gives for sNB = sens − w(1 − spec)(1 −
// φ)/φ the variance [sens(1 − sens)/φ + w²spec(1 − spec)(1 − φ)/φ² +
// w²(1 − spec)²(1 − φ)/φ³]/n, the form used by Riley et al. (2021) as we
// recall it (from memory). The multinomial form used here must agree.
func TestNetBenefitVarianceBySensitivity(t *testing.T) {
	for _, c := range []struct{ phi, sens, spec, thr float64 }{
		{0.1, 0.8, 0.7, 0.1}, {0.018, 0.65, 0.96, 0.08}, {0.3, 0.95, 0.4, 0.2}, {0.05, 0.3, 0.99, 0.02},
	} {
		w := c.thr / (1 - c.thr)
		p1, p3 := c.sens*c.phi, (1-c.sens)*c.phi
		p2 := (1 - c.spec) * (1 - c.phi)
		want := c.sens*(1-c.sens)/c.phi + w*w*c.spec*(1-c.spec)*(1-c.phi)/(c.phi*c.phi) +
			w*w*(1-c.spec)*(1-c.spec)*(1-c.phi)/(c.phi*c.phi*c.phi)
		if got := snbVariance(p1, p2, p3, w); math.Abs(got/want-1) > 1e-12 {
			t.Errorf("%+v: %g, by sensitivity and specificity %g", c, got, want)
		}
	}
}

// TestDegenerateInputsAreNotComputable: inputs from which a criterion's
// size cannot be computed give that criterion a reason and N = 0, never
// a number from an infinite or undefined target (before, a linear
// predictor that does not vary gave −9223372036854775808 patients); the
// criteria that can be computed still are, and equal the formula
// transcribed directly.
func TestDegenerateInputsAreNotComputable(t *testing.T) {
	constant := make([]float64, 200)
	for i := range constant {
		constant[i] = math.Log(0.2 / 0.8) // every risk 20%
	}
	nan := math.NaN()
	// The O/E criterion of a calibrated model with every risk 0.2,
	// transcribed from Riley et al. (2021): n = (1 − φ)/(φ·SE²) with
	// SE = asinh(width/(2·O/E))/z.
	seOE := math.Asinh(0.2/2) / 1.959963984540054
	oeTied := int(math.Ceil(0.8 / (0.2 * seOE * seOE)))
	for _, c := range []struct {
		name string
		a    Anticipated
		// not lists the measures that must not be computable; n, when
		// not 0, is the O/E criterion's expected size.
		not   []string
		oeN   int
		reach string
	}{
		{"every risk tied", Anticipated{LP: constant, Threshold: 0.1}, []string{"calibration slope"}, oeTied, "does not vary"},
		{"calibration unknown", Anticipated{LP: Normal(-2, 1, 1000), CalIntercept: nan, CalSlope: nan, Threshold: 0.1},
			[]string{"O/E", "calibration slope", "C-statistic", "standardised net benefit at 0.1"}, 0, "calibration intercept or slope is unknown"},
		{"infinite slope", Anticipated{LP: Normal(-2, 1, 1000), CalSlope: math.Inf(1)},
			[]string{"O/E", "calibration slope", "C-statistic"}, 0, "unknown"},
		{"C-statistic 1", Anticipated{LP: Normal(-2, 1, 1000), C: 1}, []string{"C-statistic"}, 0, "no sampling variance"},
		{"threshold above every risk", Anticipated{LP: constant, Threshold: 0.5},
			[]string{"calibration slope", "standardised net benefit at 0.5"}, oeTied, "nobody would be treated"},
		{"a need above MaxN", Anticipated{LP: Normal(0, 2e-5, 1000)}, []string{"calibration slope"}, 0, "more than 10¹²"},
	} {
		r, err := Compute(c.a, DefaultTargets())
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		not := map[string]bool{}
		for _, m := range c.not {
			not[m] = true
		}
		found := false
		for _, cr := range r.Criteria {
			switch {
			case cr.N < 0 || cr.Events < 0:
				t.Errorf("%s: %s needs %d patients (%d events)", c.name, cr.Measure, cr.N, cr.Events)
			case not[cr.Measure] && (cr.Computable() || cr.N != 0 || cr.Events != 0):
				t.Errorf("%s: %s should not be computable, got n %d, reason %q", c.name, cr.Measure, cr.N, cr.NotComputable)
			case !not[cr.Measure] && (!cr.Computable() || cr.N <= 0):
				t.Errorf("%s: %s should be computable, got n %d, reason %q", c.name, cr.Measure, cr.N, cr.NotComputable)
			}
			if strings.Contains(cr.NotComputable, c.reach) {
				found = true
			}
			if strings.Contains(cr.NotComputable, "NaN") || strings.Contains(cr.NotComputable, "Inf") {
				t.Errorf("%s: reason %q shows a non-number", c.name, cr.NotComputable)
			}
			if cr.Measure == "O/E" && c.oeN != 0 && cr.N != c.oeN {
				t.Errorf("%s: O/E needs %d, the formula %d", c.name, cr.N, c.oeN)
			}
			if cr.Computable() && cr.N > r.N {
				t.Errorf("%s: the largest need %d is below %s's %d", c.name, r.N, cr.Measure, cr.N)
			}
		}
		if !found {
			t.Errorf("%s: no reason mentions %q", c.name, c.reach)
		}
		if r.Complete() {
			t.Errorf("%s: reported complete", c.name)
		}
		if len(c.not) == len(r.Criteria) && (r.N != 0 || r.Driver != "") {
			t.Errorf("%s: nothing computable, yet n %d driven by %q", c.name, r.N, r.Driver)
		}
	}
	if _, err := Compute(Anticipated{LP: append(Normal(-2, 1, 20), nan)}, DefaultTargets()); err == nil {
		t.Error("a NaN linear predictor was accepted")
	}
}
