package resample

import (
	"context"
	"errors"
	"math/rand/v2"
	"testing"
	"time"
)

// TestCancelled: a cancelled context stops each bootstrap early with the
// context's cause, long before the replicates asked for could run.
func TestCancelled(t *testing.T) {
	pr := wdbcProblem(t)
	r := rand.New(rand.NewPCG(1, 2))
	y := make([]float64, 5000)
	p := make([]float64, len(y))
	for i := range y {
		p[i] = r.Float64()
		if r.Float64() < p[i] {
			y[i] = 1
		}
	}
	cause := errors.New("stopped by the test")
	ctx, cancel := context.WithCancelCause(context.Background())
	time.AfterFunc(20*time.Millisecond, func() { cancel(cause) })
	for _, tc := range []struct {
		name string
		run  func() error
	}{
		{"Optimism", func() error {
			_, err := Optimism(ctx, pr, Options{B: 1_000_000, Seed: 1})
			return err
		}},
		{"PercentileIntervals", func() error {
			_, err := PercentileIntervals(ctx, y, p, CIOptions{B: 1_000_000, Seed: 1})
			return err
		}},
		{"BrierDifferenceCI", func() error {
			_, err := BrierDifferenceCI(ctx, y, p, p, 1_000_000_000, 1)
			return err
		}},
	} {
		start := time.Now()
		err := tc.run()
		if !errors.Is(err, cause) {
			t.Errorf("%s: error %v, want the context's cause", tc.name, err)
		}
		if el := time.Since(start); el > 5*time.Second {
			t.Errorf("%s: took %v after cancellation", tc.name, el)
		}
	}
}
