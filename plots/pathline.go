package plots

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// strokeChunk is the number of segments in each piece a long path is
// stroked in on a raster canvas.
const strokeChunk = 16

// pathLine is a solid line through many points (a chart's path in date
// order) that draws as plotter.Line does, except that on a raster
// canvas it is stroked in pieces of strokeChunk segments, each piece
// sharing its first segment with the one before, so every join is
// drawn whole. The rasterizer behind the PNG copies keeps each pixel row's
// cells in a linked list and searches it for every edge it adds, so one
// stroke of a dense, zigzagging path of 1,500 points costs time
// quadratic in the cells a row holds (tens of seconds at 300 dpi); short
// pieces keep every list short. The SVG copy is one path, as before.
type pathLine struct {
	*plotter.Line
}

// Plot implements plot.Plotter.
func (l pathLine) Plot(c draw.Canvas, p *plot.Plot) {
	if !raster(c.Canvas) || len(l.Dashes) > 0 || l.FillColor != nil || l.StepStyle != plotter.NoStep || l.Width == 0 {
		l.Line.Plot(c, p)
		return
	}
	trX, trY := p.Transforms(&c)
	ps := make([]vg.Point, len(l.XYs))
	for i, xy := range l.XYs {
		ps[i] = vg.Point{X: trX(xy.X), Y: trY(xy.Y)}
	}
	c.SetLineStyle(l.LineStyle)
	for _, part := range c.ClipLinesXY(ps) {
		for s := 0; s < len(part); s += strokeChunk - 1 {
			e := min(len(part), s+strokeChunk+1)
			var pa vg.Path
			pa.Move(part[s])
			for _, pt := range part[s+1 : e] {
				pa.Line(pt)
			}
			c.Stroke(pa)
			if e == len(part) {
				break
			}
		}
	}
}

// raster reports whether a canvas paints onto an image (vgimg), looking
// through the draw.Canvas wrappers that cropping adds.
func raster(v vg.Canvas) bool {
	for {
		switch c := v.(type) {
		case *vgimg.Canvas:
			return true
		case draw.Canvas:
			v = c.Canvas
		case *draw.Canvas:
			v = c.Canvas
		default:
			return false
		}
	}
}

// pathOf is line for a chart's path: a solid pathLine.
func pathOf(xys plotter.XYs, c color.Color, width float64) (pathLine, error) {
	l, err := line(xys, c, width)
	return pathLine{l}, err
}
