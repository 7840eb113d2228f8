package monitor

import (
	"context"
	"slices"
	"testing"
)

// TestRunChartsAreThePublishedPaths: the charts Run computes in one pass
// are, bit for bit, CUSUMPath and RestartedPath (which the reference
// test checks against the numpy transcription of Steiner et al. 2000),
// with the same signals, on the reference series with a low limit (so
// the charts restart many times).
func TestRunChartsAreThePublishedPaths(t *testing.T) {
	_, y, p := loadRef(t)
	res, err := Run(context.Background(), y, p, nil, Options{Limits: LimitOptions{ARL: 50, Seed: 1}})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range res.Charts {
		path, err := CUSUMPath(y, p, c.Limit.R)
		if err != nil {
			t.Fatal(err)
		}
		restarted, sig, err := RestartedPath(y, p, c.Limit.R, c.Limit.H)
		if err != nil {
			t.Fatal(err)
		}
		if len(sig) < 3 {
			t.Errorf("%s: %d signals at h = %g; the test wants a chart that restarts", c.Name, len(sig), c.Limit.H)
		}
		if !slices.Equal(c.Path, path) || !slices.Equal(c.Restarted, restarted) || !slices.Equal(c.Signals, sig) {
			t.Errorf("%s: Run's paths or signals differ from CUSUMPath and RestartedPath", c.Name)
		}
	}
}
