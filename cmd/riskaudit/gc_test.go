package main

import (
	"os"
	"runtime/debug"
	"testing"
)

// TestTightenGC: large cohorts lower GOGC while measuring and restore it;
// small ones and an explicit GOGC leave it alone.
func TestTightenGC(t *testing.T) {
	t.Setenv("GOGC", "")
	os.Unsetenv("GOGC")
	before := debug.SetGCPercent(100)
	defer debug.SetGCPercent(before)
	restore := tightenGC(largeCohort)
	if got := debug.SetGCPercent(25); got != 25 {
		t.Errorf("GOGC %d while measuring a large cohort, want 25", got)
	}
	restore()
	if got := debug.SetGCPercent(100); got != 100 {
		t.Errorf("GOGC %d after, want 100 restored", got)
	}
	tightenGC(largeCohort - 1)()
	if got := debug.SetGCPercent(100); got != 100 {
		t.Errorf("small cohort changed GOGC to %d", got)
	}
	t.Setenv("GOGC", "200")
	tightenGC(largeCohort)()
	if got := debug.SetGCPercent(100); got != 100 {
		t.Errorf("GOGC set in the environment was overridden: %d", got)
	}
}
