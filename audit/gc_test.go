package audit

import (
	"runtime/debug"
	"testing"
)

// TestTightenGC: with GCPercent set, large cohorts lower the collector's
// target while measuring and restore it; small cohorts, and a Config
// without GCPercent, leave it alone.
func TestTightenGC(t *testing.T) {
	before := debug.SetGCPercent(100)
	defer debug.SetGCPercent(before)
	r := &run{cfg: &Config{GCPercent: 25}}
	restore := r.tightenGC(LargeCohort)
	if got := debug.SetGCPercent(25); got != 25 {
		t.Errorf("GOGC %d while measuring a large cohort, want 25", got)
	}
	restore()
	if got := debug.SetGCPercent(100); got != 100 {
		t.Errorf("GOGC %d after, want 100 restored", got)
	}
	r.tightenGC(LargeCohort - 1)()
	if got := debug.SetGCPercent(100); got != 100 {
		t.Errorf("small cohort changed GOGC to %d", got)
	}
	(&run{cfg: &Config{}}).tightenGC(LargeCohort)()
	if got := debug.SetGCPercent(100); got != 100 {
		t.Errorf("a Config without GCPercent changed GOGC to %d", got)
	}
}
