package plots

import (
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// markChunk is the number of alarm marks filled as one path on a raster
// canvas.
const markChunk = 32

// The pyramid's corners as gonum's draw.PyramidGlyph places them: its
// constants, copied, since they are not exported.
const (
	pyramidSin = vg.Length(.500000000025921)
	pyramidCos = vg.Length(.866025403769473)
)

// markSet is a Scatter of pyramids (the alarm marks of the charts in
// date order) that draws as the Scatter does, except that on a raster
// canvas the pyramids of markChunk consecutive marks are filled as one
// path, not one by one: a 1M-patient chart has thousands of marks, most
// overlapping, and each fill costs a pass of the rasterizer over every
// pixel row of the figure. Where pyramids of one path overlap, their
// edge pixels take the sum of their coverages (nonzero winding), not
// one painted over the other, so a crowd of marks has edges within
// antialiasing of the Scatter's (TestMarkSetDrawsAsScatter); a lone mark
// is the same pixels. Groups of markChunk keep each pixel row's cells
// few (the rasterizer searches a row's cells for every edge it adds; see
// pathLine). The SVG copy is the Scatter's, mark by mark.
type markSet struct {
	*plotter.Scatter
}

// Plot implements plot.Plotter.
func (m markSet) Plot(c draw.Canvas, p *plot.Plot) {
	sty := m.GlyphStyle
	if _, ok := sty.Shape.(draw.PyramidGlyph); !ok || !raster(c.Canvas) || m.GlyphStyleFunc != nil {
		m.Scatter.Plot(c, p)
		return
	}
	trX, trY := p.Transforms(&c)
	c.SetColor(sty.Color)
	r := sty.Radius + (sty.Radius-sty.Radius*pyramidSin)/2
	pa := make(vg.Path, 0, 4*markChunk)
	n := 0
	for _, xy := range m.XYs {
		pt := vg.Point{X: trX(xy.X), Y: trY(xy.Y)}
		if !c.Contains(pt) { // as draw.Canvas.DrawGlyph leaves it out
			continue
		}
		pa.Move(vg.Point{X: pt.X, Y: pt.Y + r})
		pa.Line(vg.Point{X: pt.X - r*pyramidCos, Y: pt.Y - r*pyramidSin})
		pa.Line(vg.Point{X: pt.X + r*pyramidCos, Y: pt.Y - r*pyramidSin})
		pa.Close()
		if n++; n == markChunk {
			c.Fill(pa)
			pa, n = pa[:0], 0
		}
	}
	if n > 0 {
		c.Fill(pa)
	}
}
