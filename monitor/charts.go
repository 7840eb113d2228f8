package monitor

import (
	"fmt"
	"math"
)

// checkSeries reports the first outcome that is not 0 or 1 and the first
// risk outside (0, 1), by its position in date order (1-based).
func checkSeries(y, p []float64) error {
	if len(y) != len(p) {
		return fmt.Errorf("monitor: %d outcomes but %d risks", len(y), len(p))
	}
	for i := range y {
		if y[i] != 0 && y[i] != 1 {
			return fmt.Errorf("monitor: patient %d in date order: outcome %v is neither 0 nor 1", i+1, y[i])
		}
		if !(p[i] > 0 && p[i] < 1) {
			return fmt.Errorf("monitor: patient %d in date order: risk %v is not strictly between 0 and 1", i+1, p[i])
		}
	}
	return nil
}

// VLAD returns the variable life-adjusted display of Lovegrove, Valencia,
// Treasure, Sherlaw-Johnson & Gallivan (1997, Lancet 350:1128–1130): the
// cumulative expected minus observed events after each patient,
//
//	V_t = Σ_{i≤t} (p_i − y_i).
//
// The sign is the original one: with death as the event, V_t counts the
// "lives gained" over the model's prediction, so a rising curve means
// fewer events than predicted and a falling curve more (a model that
// under-predicts, or care that deteriorated). The path has one value a
// patient, in the order given.
func VLAD(y, p []float64) ([]float64, error) {
	if err := checkSeries(y, p); err != nil {
		return nil, err
	}
	out := make([]float64, len(y))
	v := 0.0
	for i := range y {
		v += p[i] - y[i]
		out[i] = v
	}
	return out, nil
}

// Weights returns the log-likelihood-ratio weights of the risk-adjusted
// Bernoulli CUSUM of Steiner, Cook, Farewell & Treasure (2000,
// Biostatistics 1:441–452) for a patient of risk p and the alternative
// that multiplies the odds of the event by R:
//
//	W = y·log R − log(1 − p + R·p),
//
// for y = 0 (w0) and y = 1 (w1).
func Weights(p, r float64) (w0, w1 float64) {
	w0 = -math.Log1p((r - 1) * p)
	return w0, w0 + math.Log(r)
}

// CUSUMPath returns the risk-adjusted CUSUM of Steiner et al. (2000),
// S_0 = 0, S_t = max(0, S_{t−1} + W_t) with W_t from Weights, one value a
// patient, without restarts. R > 1 tests for deterioration (odds of the
// event multiplied by R), R < 1 for improvement.
func CUSUMPath(y, p []float64, r float64) ([]float64, error) {
	if err := checkSeries(y, p); err != nil {
		return nil, err
	}
	if !(r > 0) || r == 1 || math.IsInf(r, 0) {
		return nil, fmt.Errorf("monitor: CUSUM odds ratio %v must be positive, finite and not 1", r)
	}
	// A limit no path reaches: no restart, no signal.
	path, _, err := RestartedPath(y, p, r, math.Inf(1))
	return path, err
}

// Signals returns the patients (0-based positions in date order) at which
// a CUSUM path crosses h (S_t ≥ h), with the chart restarted at zero after
// each signal, as a quality team does once a signal has been looked into.
// The first signal is the same with or without restarts.
func Signals(y, p []float64, r, h float64) ([]int, error) {
	_, sig, err := RestartedPath(y, p, r, h)
	return sig, err
}

// RestartedPath is the CUSUM as a quality team follows it: the path of
// CUSUMPath, restarted at zero after each signal (S_t ≥ h; the signalling
// patient's value is kept in the path, the next starts from 0), and the
// signals, as Signals gives them.
func RestartedPath(y, p []float64, r, h float64) ([]float64, []int, error) {
	if err := checkSeries(y, p); err != nil {
		return nil, nil, err
	}
	var out []int
	path := make([]float64, len(y))
	s := 0.0
	for i := range y {
		w0, w1 := Weights(p[i], r)
		w := w0
		if y[i] == 1 {
			w = w1
		}
		s = math.Max(0, s+w)
		path[i] = s
		if s >= h {
			out = append(out, i)
			s = 0
		}
	}
	return path, out, nil
}

// EWMA is the risk-adjusted exponentially weighted moving average of
// observed minus expected events (Grigg & Spiegelhalter 2007, Journal of
// the American Statistical Association 102:140–152, in its O − E form):
//
//	Z_0 = 0,  Z_t = (1 − λ)·Z_{t−1} + λ·(y_t − p_t),
//	V_0 = 0,  V_t = (1 − λ)²·V_{t−1} + λ²·p_t(1 − p_t),
//
// where V_t = Var(Z_t) exactly when the y_t are independent Bernoulli(p_t)
// (the model is calibrated). Limits are ±L·√V_t. Z above the upper limit
// means more events than predicted.
type EWMA struct {
	Lambda, L float64
	// Z, SD: the statistic and its exact standard deviation √V_t per
	// patient.
	Z, SD []float64
	// FirstAbove and FirstBelow are the first patients (0-based) with
	// Z_t > L·√V_t or Z_t < −L·√V_t, −1 for none.
	FirstAbove, FirstBelow int
}

// DefaultLambda is the EWMA's default smoothing weight, 0.01: each
// patient carries 1% of the weight, so the statistic summarises roughly
// the last 1/λ = 100 patients' worth (effective memory (2 − λ)/λ ≈ 200).
// Small weights of this size are what Grigg & Spiegelhalter (2007) use
// for surgical mortality (value from memory of the paper, not checked
// against its text).
const DefaultLambda = 0.01

// DefaultEWMAWidth is the default width of the EWMA's limits, 3 standard
// deviations (common practice for control charts).
const DefaultEWMAWidth = 3.0

// ComputeEWMA returns the risk-adjusted EWMA of y and p for the weight
// lambda in (0, 1] and limit width l > 0.
func ComputeEWMA(y, p []float64, lambda, l float64) (EWMA, error) {
	if err := checkSeries(y, p); err != nil {
		return EWMA{}, err
	}
	if !(lambda > 0 && lambda <= 1) {
		return EWMA{}, fmt.Errorf("monitor: EWMA weight %v must be in (0, 1]", lambda)
	}
	if !(l > 0) || math.IsInf(l, 0) {
		return EWMA{}, fmt.Errorf("monitor: EWMA limit width %v must be positive and finite", l)
	}
	n := len(y)
	e := EWMA{Lambda: lambda, L: l, Z: make([]float64, n), SD: make([]float64, n), FirstAbove: -1, FirstBelow: -1}
	z, v := 0.0, 0.0
	a, a2, l2 := 1-lambda, (1-lambda)*(1-lambda), lambda*lambda
	for i := range y {
		z = a*z + lambda*(y[i]-p[i])
		v = a2*v + l2*p[i]*(1-p[i])
		sd := math.Sqrt(v)
		e.Z[i], e.SD[i] = z, sd
		if e.FirstAbove < 0 && z > l*sd {
			e.FirstAbove = i
		}
		if e.FirstBelow < 0 && z < -l*sd {
			e.FirstBelow = i
		}
	}
	return e, nil
}

// cusumPaths is CUSUMPath and RestartedPath in one pass, with the
// weights computed once a patient: the same arithmetic, so the same
// values to the last bit. y and p are checked by the caller.
func cusumPaths(y, p []float64, r, h float64) (path, restarted []float64, signals []int) {
	path, restarted = make([]float64, len(y)), make([]float64, len(y))
	s, q := 0.0, 0.0 // without and with restarts
	// Weights' terms, log R once rather than a patient (the same value),
	// and the builtin max, which is math.Max's value for every input.
	r1, logR := r-1, math.Log(r)
	for i := range y {
		w := -math.Log1p(r1 * p[i])
		if y[i] == 1 {
			w += logR
		}
		s = max(0, s+w)
		q = max(0, q+w)
		path[i], restarted[i] = s, q
		if q >= h {
			signals = append(signals, i)
			q = 0
		}
	}
	return path, restarted, signals
}
