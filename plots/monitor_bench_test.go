package plots

import "testing"

// BenchmarkMonitorFigures1M draws the four figures of a 1M-patient
// extract in date order, SVG and PNG.
func BenchmarkMonitorFigures1M(b *testing.B) {
	r, s := monitorResult(b, 1_000_000)
	b.ResetTimer()
	for range b.N {
		if _, err := Monitor(r, s, nil); err != nil {
			b.Fatal(err)
		}
	}
}
