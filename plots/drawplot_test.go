package plots

import (
	"bytes"
	"image"
	"image/png"
	"testing"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// TestDrawPlotSamePixels: a figure whose plots leave out their white
// background on the PNG canvas (drawPlot) decodes, by image/png, to the
// same pixels as the figure with every background filled (plot.Draw):
// two stacked panels under a title and subtitle.
func TestDrawPlotSamePixels(t *testing.T) {
	render := func(withDrawPlot bool) image.Image {
		var ps []*plot.Plot
		for k := range 2 {
			p := newPlot("", "x", "y")
			l, err := line(plotter.XYs{{X: 0, Y: 0}, {X: 1, Y: float64(k + 1)}, {X: 2, Y: 0.5}}, blue, 1.2)
			if err != nil {
				t.Fatal(err)
			}
			p.Add(l)
			ps = append(ps, p)
		}
		s := sheet{title: "A title over two panels", subtitle: "a subtitle"}
		_, b, err := paint(4*vg.Inch, 4*vg.Inch, func(c draw.Canvas) error {
			rest := s.frame(c)
			half := (rest.Max.Y - rest.Min.Y) / 2
			cs := []draw.Canvas{draw.Crop(rest, 0, 0, half, 0), draw.Crop(rest, 0, 0, 0, -half)}
			for k, p := range ps {
				if withDrawPlot {
					drawPlot(p, cs[k])
				} else {
					p.Draw(cs[k])
				}
			}
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
		m, err := png.Decode(bytes.NewReader(b))
		if err != nil {
			t.Fatal(err)
		}
		return m
	}
	want, got := render(false), render(true)
	if want.Bounds() != got.Bounds() {
		t.Fatalf("size %v, want %v", got.Bounds(), want.Bounds())
	}
	b := want.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			if want.At(x, y) != got.At(x, y) {
				t.Fatalf("pixel (%d, %d): %v without the background fill, %v with it", x, y, got.At(x, y), want.At(x, y))
			}
		}
	}
}
