package resample

import (
	"context"
	"math/rand/v2"
	"testing"

	"github.com/riskaudit/riskaudit/logistic"
)

// TestFailedShareCountedByHand: the data of TestFailedReplicatesAreCounted
// (a level held by rows 0 and 1 only, one event and one non-event). A
// refit has a maximum-likelihood estimate only when its sample holds both
// rows: without either the level's column is all zero (collinear), with
// one of them the level predicts its outcome perfectly (separation,
// Albert & Anderson 1984). The replicates are redrawn here from Stream
// (n draws of IntN(n), as Optimism documents) and the failures counted
// from that rule alone, so the failed share is checked, not only logged.
func TestFailedShareCountedByHand(t *testing.T) {
	r := rand.New(rand.NewPCG(8, 9))
	n, p := 150, 3
	pr := Problem{N: n, P: p, X: make([]float64, n*p), Y: make([]float64, n)}
	for i := 0; i < n; i++ {
		x := pr.X[i*p : (i+1)*p]
		x[0], x[1] = 1, r.NormFloat64()
		if i < 2 {
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
	const B, seed = 60, 2
	res, err := Optimism(context.Background(), pr, Options{B: B, Seed: seed})
	if err != nil {
		t.Fatal(err)
	}
	want := 0
	for b := 0; b < B; b++ {
		s := Stream(seed, b)
		has0, has1 := false, false
		for k := 0; k < n; k++ {
			switch s.IntN(n) {
			case 0:
				has0 = true
			case 1:
				has1 = true
			}
		}
		if !has0 || !has1 {
			want++
		}
	}
	if res.Failed != want || res.B != B {
		t.Errorf("%d of %d replicates failed; by the rule, %d of %d", res.Failed, res.B, want, B)
	}
	if got, share := res.FailedShare(), float64(want)/B; got != share {
		t.Errorf("failed share %g, by hand %g", got, share)
	}
}
