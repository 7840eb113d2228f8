package monitor

import (
	"context"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"
)

// delayTable computes the README's table "Detection delay of the CUSUM":
// patients drawn from the case mix of the first 800 patients of
// testdata/reference/monitor_series.csv (made by make_reference.py), the
// limits chosen by ChooseLimits with the defaults (in-control ARL 10,000,
// seed 1), the model calibrated up to patient 1,000 and an intercept
// shift of δ on the logit scale from patient 1,001 on, 1,000 runs each
// (seed 18). A row is the chart that looks for the shift's direction.
func delayTable(t *testing.T) []string {
	ref, _, p := loadRef(t)
	base := p[:ref.Change]
	ctx := context.Background()
	lims, err := ChooseLimits(ctx, base, []float64{2, 0.5}, LimitOptions{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	var rows []string
	for _, d := range []float64{0.25, 0.5, 0.75, 1, -0.5, -1} {
		l := lims[0]
		if d < 0 {
			l = lims[1]
		}
		rl, err := Delay(ctx, base, l.R, l.H, d, 1000, 1000, 80000, 18)
		if err != nil {
			t.Fatal(err)
		}
		name := "deterioration (R = 2)"
		if d < 0 {
			name = "improvement (R = 1/2)"
		}
		rows = append(rows, fmt.Sprintf("| %+.2f | %.2f | %s, h = %.2f | %.0f ± %.0f | %d | %d |",
			d, math.Exp(d), name, l.H, rl.Mean, rl.SE, rl.Early, rl.Cut))
	}
	return rows
}

// TestDelayTableInREADME reproduces the README's detection-delay table
// with its fixed seeds, row for row, and checks that the delays fall as
// the shift grows (a larger shift must be found sooner).
func TestDelayTableInREADME(t *testing.T) {
	if testing.Short() {
		t.Skip("simulation of about 10⁸ patient-steps")
	}
	rows := delayTable(t)
	b, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	readme := string(b)
	for _, r := range rows {
		if !strings.Contains(readme, r+"\n") {
			t.Errorf("README lacks the row\n%s", r)
		}
	}
	var prev float64 = math.Inf(1)
	for _, r := range rows[:4] {
		var d, or, h, mean, se float64
		if _, err := fmt.Sscanf(r, "| %f | %f | deterioration (R = 2), h = %f | %f ± %f |", &d, &or, &h, &mean, &se); err != nil {
			t.Fatalf("%q: %v", r, err)
		}
		if !(mean < prev) {
			t.Errorf("delay %.0f at δ = %g is not below %.0f at the smaller shift", mean, d, prev)
		}
		prev = mean
	}
}
