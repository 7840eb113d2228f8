package plots

import (
	"bytes"
	"math"
	"testing"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TestPathLineDrawsAsLine: lines drawn as a pathLine (stroked in pieces
// on the raster canvas) and as gonum's own plotter.Line, the reference,
// drawn by the same rasterizer: a zigzag of 3,001 points, a dashed
// control limit of 1,500 points (from the start of the pattern and from
// an offset) and a straight line across the chart, solid and dashed.
// The SVGs are the same bytes; in the PNGs no pixel differs by more than
// a quarter of full scale and under 5% of the inked pixels by more than
// 16/255 (antialiased edges where two pieces overlap, dash ends placed
// without gg's rounding to 1/64 dot). A piece left out, or dashes out of
// phase, fail it. (A dashed zigzag would not pass: gg measures its dash
// lengths on points rounded to 1/64 dot, which moves the dashes along a
// path of thousands of tiny segments; no chart draws one.)
func TestPathLineDrawsAsLine(t *testing.T) {
	zigzag := make(plotter.XYs, 3001)
	for i := range zigzag {
		zigzag[i] = plotter.XY{X: float64(i), Y: math.Abs(math.Sin(float64(i)*0.37)) * float64(i%17)}
	}
	across := plotter.XYs{{X: 0, Y: 7}, {X: 3000, Y: 7.5}}
	// A control limit as the EWMA chart draws it: 1,500 points rising
	// fast, then nearly level.
	limit := make(plotter.XYs, 1500)
	for i := range limit {
		limit[i] = plotter.XY{X: 2 * float64(i), Y: 12 * math.Sqrt(1-math.Pow(0.99, 2*float64(i+1)))}
	}
	for _, tt := range []struct {
		name   string
		xys    plotter.XYs
		dashes []vg.Length
		offs   vg.Length
	}{
		{"zigzag", zigzag, nil, 0},
		{"limit dashed", limit, []vg.Length{vg.Points(5), vg.Points(3)}, 0},
		{"limit dashed from an offset", limit, []vg.Length{vg.Points(6), vg.Points(3)}, vg.Points(4)},
		{"line across", across, nil, 0},
		{"line across dashed", across, []vg.Length{vg.Points(2)}, 0},
	} {
		t.Run(tt.name, func(t *testing.T) {
			draws := func(pieces bool) (svg, pngb []byte) {
				p := newPlot("pieces", "x", "y")
				l, err := line(tt.xys, blue, 1.2, tt.dashes...)
				if err != nil {
					t.Fatal(err)
				}
				l.DashOffs = tt.offs
				if pieces {
					p.Add(pathLine{l})
				} else {
					p.Add(l)
				}
				svg, pngb, err = paint(5*vg.Inch, 3*vg.Inch, func(c draw.Canvas) error {
					p.Draw(c)
					return nil
				})
				if err != nil {
					t.Fatal(err)
				}
				return svg, pngb
			}
			comparePNG(t, draws)
		})
	}
}

// comparePNG checks that the figure drawn with pathLine (pieces true)
// has the SVG of the one drawn with plotter.Line and a PNG within
// antialiasing of it.
func comparePNG(t *testing.T, draws func(pieces bool) (svg, pngb []byte)) {
	t.Helper()
	svgA, pngA := draws(false)
	svgB, pngB := draws(true)
	if !bytes.Equal(svgA, svgB) {
		t.Error("the SVG of a pathLine differs from that of plotter.Line")
	}
	_, _, inked, differ, worst := pngDiff(t, pngA, pngB)
	if inked == 0 {
		t.Fatal("nothing drawn")
	}
	t.Logf("%d of %d inked pixels differ by more than 16/255, by up to %d/255", differ, inked, worst)
	if worst > 64 || float64(differ) > 0.05*float64(inked) {
		t.Errorf("PNG of a pathLine: %d of %d inked pixels differ from plotter.Line's by more than 16/255, by up to %d/255", differ, inked, worst)
	}
}
