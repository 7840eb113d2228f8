package plots

import (
	"bytes"
	"testing"

	"github.com/riskaudit/riskaudit/monitor"
	"github.com/riskaudit/riskaudit/validate"
)

// TestMonitorSplitSameAsMonitor: the period figure drawn on its own
// (MonitorPeriods) and the other three drawn from the charts alone, with
// the summary and overall period unset (MonitorCharts), are Monitor's
// four figures in its order, the same SVG and PNG bytes and series.
func TestMonitorSplitSameAsMonitor(t *testing.T) {
	r, s := monitorResult(t, 20000)
	lo := 0.8
	criteria := []validate.Criterion{{Measure: "oe", AtLeast: &lo}}
	all, err := Monitor(r, s, criteria)
	if err != nil {
		t.Fatal(err)
	}
	per, err := MonitorPeriods(s, criteria)
	if err != nil {
		t.Fatal(err)
	}
	bare := *r
	bare.Overall = monitor.Period{} // MonitorCharts must not need it
	rest, err := MonitorCharts(&bare)
	if err != nil {
		t.Fatal(err)
	}
	split := append([]Figure{per}, rest...)
	if len(split) != len(all) || len(all) != 4 {
		t.Fatalf("%d figures split, %d from Monitor, want 4", len(split), len(all))
	}
	for k, f := range all {
		g := split[k]
		if g.Name != f.Name || g.Title != f.Title {
			t.Errorf("figure %d: %q (%q), want %q (%q)", k, g.Name, g.Title, f.Name, f.Title)
		}
		if len(f.PNG) == 0 || !bytes.Equal(g.SVG, f.SVG) || !bytes.Equal(g.PNG, f.PNG) {
			t.Errorf("%s drawn split differs from Monitor's", f.Name)
		}
		if len(g.Series) != len(f.Series) {
			t.Errorf("%s: %d series, want %d", f.Name, len(g.Series), len(f.Series))
		}
	}
}
