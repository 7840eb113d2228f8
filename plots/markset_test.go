package plots

import (
	"bytes"
	"image"
	"math"
	"testing"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TestMarkSetDrawsAsScatter: alarm marks drawn as a markSet (filled
// markChunk at a time on the raster canvas) and as gonum's own
// plotter.Scatter, the reference, drawn by the same rasterizer: 3,000
// marks crowded along a falling line (the cumulative chart's), 3,000
// along a limit (the CUSUM chart's, each a little above it), and one
// mark alone. The SVGs are the same bytes; the lone mark's PNG is the
// same bytes; in the crowds' PNGs the pixels that differ are edge
// pixels, where overlapping pyramids' partial coverages add (nonzero
// winding) rather than paint one over the other, so a markSet's edge
// pixels are as dark or darker: every pixel inside a mark (of the mark's
// colour in the Scatter's PNG) is so in the markSet's, under 3% of the
// inked pixels differ by more than 16/255, and none by more than half
// of full scale. A mark left out, or one misplaced, fails it.
func TestMarkSetDrawsAsScatter(t *testing.T) {
	line := make(plotter.XYs, 3000)
	limit := make(plotter.XYs, 3000)
	for i := range line {
		x := float64(i) * 330
		line[i] = plotter.XY{X: x, Y: -0.05*x + 300*math.Sin(float64(i)*0.01)}
		limit[i] = plotter.XY{X: x, Y: 5 + 0.7*math.Abs(math.Sin(float64(i)*1.3))}
	}
	for _, tt := range []struct {
		name string
		xys  plotter.XYs
		same bool
	}{
		{"crowd along a line", line, false},
		{"crowd along a limit", limit, false},
		{"one mark", plotter.XYs{{X: 3, Y: 4}}, true},
	} {
		t.Run(tt.name, func(t *testing.T) {
			draws := func(set bool) (svg, pngb []byte) {
				p := newPlot("marks", "x", "y")
				sc, err := plotter.NewScatter(tt.xys)
				if err != nil {
					t.Fatal(err)
				}
				sc.GlyphStyle.Shape, sc.GlyphStyle.Color, sc.GlyphStyle.Radius = draw.PyramidGlyph{}, vermillion, vg.Points(4)
				if set {
					p.Add(markSet{sc})
				} else {
					p.Add(sc)
				}
				svg, pngb, err = paint(7*vg.Inch, 3.6*vg.Inch, func(c draw.Canvas) error {
					p.Draw(c)
					return nil
				})
				if err != nil {
					t.Fatal(err)
				}
				return svg, pngb
			}
			svgA, pngA := draws(false)
			svgB, pngB := draws(true)
			if !bytes.Equal(svgA, svgB) {
				t.Error("the SVG of a markSet differs from that of plotter.Scatter")
			}
			if tt.same {
				if !bytes.Equal(pngA, pngB) {
					t.Error("the PNG of a lone mark differs from plotter.Scatter's")
				}
				return
			}
			compareMarks(t, pngA, pngB)
		})
	}
}

// compareMarks checks the PNG of crowded marks drawn as a markSet (b)
// against the Scatter's (a), as TestMarkSetDrawsAsScatter says.
func compareMarks(t *testing.T, pngA, pngB []byte) {
	t.Helper()
	a, b, inked, differ, worst := pngDiff(t, pngA, pngB)
	mr, mg, mb, _ := vermillion.RGBA()
	isMark := func(im image.Image, x, y int) bool {
		r, g, bb, _ := im.At(x, y).RGBA()
		return r>>8 == mr>>8 && g>>8 == mg>>8 && bb>>8 == mb>>8
	}
	inside, insideDiffer := 0, 0
	for y := a.Bounds().Min.Y; y < a.Bounds().Max.Y; y++ {
		for x := a.Bounds().Min.X; x < a.Bounds().Max.X; x++ {
			if isMark(a, x, y) {
				inside++
				if !isMark(b, x, y) {
					insideDiffer++
				}
			}
		}
	}
	t.Logf("%d of %d inked pixels differ by more than 16/255, by up to %d/255; %d of %d pixels inside a mark are not", differ, inked, worst, insideDiffer, inside)
	if inside == 0 {
		t.Fatal("no mark drawn")
	}
	if insideDiffer > 0 || worst > 128 || float64(differ) > 0.03*float64(inked) {
		t.Errorf("PNG of a markSet: %d of %d inked pixels differ from plotter.Scatter's by more than 16/255, by up to %d/255; %d of %d pixels inside the Scatter's marks are not inside the markSet's", differ, inked, worst, insideDiffer, inside)
	}
}
