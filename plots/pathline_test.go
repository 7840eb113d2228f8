package plots

import (
	"bytes"
	"image"
	"image/png"
	"math"
	"testing"

	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TestPathLineDrawsAsLine: a zigzag path of 3,001 points drawn as a
// pathLine (stroked in pieces on the raster canvas) and as gonum's own
// plotter.Line: the SVGs are the same bytes, and the PNGs differ only in
// the antialiased edges where two pieces overlap (no pixel by more than
// a quarter of full scale, under 5% of the pixels inked in either). The
// reference is gonum/plot's own line, drawn by the same rasterizer.
func TestPathLineDrawsAsLine(t *testing.T) {
	xys := make(plotter.XYs, 3001)
	for i := range xys {
		xys[i] = plotter.XY{X: float64(i), Y: math.Abs(math.Sin(float64(i)*0.37)) * float64(i%17)}
	}
	draws := func(chunked bool) (svg, pngb []byte) {
		p := newPlot("zigzag", "x", "y")
		l, err := line(xys, blue, 1.2)
		if err != nil {
			t.Fatal(err)
		}
		if chunked {
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
	svgA, pngA := draws(false)
	svgB, pngB := draws(true)
	if !bytes.Equal(svgA, svgB) {
		t.Error("the SVG of a pathLine differs from that of plotter.Line")
	}
	a, err := png.Decode(bytes.NewReader(pngA))
	if err != nil {
		t.Fatal(err)
	}
	b, err := png.Decode(bytes.NewReader(pngB))
	if err != nil {
		t.Fatal(err)
	}
	if a.Bounds() != b.Bounds() {
		t.Fatalf("PNG sizes %v and %v", a.Bounds(), b.Bounds())
	}
	inked, differ, worst := 0, 0, 0
	white := func(im image.Image, x, y int) bool {
		r, g, bb, _ := im.At(x, y).RGBA()
		return r == 0xffff && g == 0xffff && bb == 0xffff
	}
	for y := a.Bounds().Min.Y; y < a.Bounds().Max.Y; y++ {
		for x := a.Bounds().Min.X; x < a.Bounds().Max.X; x++ {
			if !white(a, x, y) || !white(b, x, y) {
				inked++
			}
			r1, g1, b1, _ := a.At(x, y).RGBA()
			r2, g2, b2, _ := b.At(x, y).RGBA()
			d := max(absDiff(r1, r2), absDiff(g1, g2), absDiff(b1, b2)) >> 8
			if d > 0 {
				differ++
			}
			worst = max(worst, int(d))
		}
	}
	if inked == 0 {
		t.Fatal("nothing drawn")
	}
	if worst > 64 || float64(differ) > 0.05*float64(inked) {
		t.Errorf("PNG of a pathLine: %d of %d inked pixels differ from plotter.Line's, by up to %d/255", differ, inked, worst)
	}
}

func absDiff(a, b uint32) uint32 {
	if a > b {
		return a - b
	}
	return b - a
}
