package plots

import (
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// strokeChunk is the number of segments in each piece a long solid path
// is stroked in on a raster canvas.
const strokeChunk = 16

// maxSpan is the longest segment stroked whole on a raster canvas:
// longer ones are cut into equal collinear parts, which look the same.
const maxSpan = vg.Length(36)

// pathLine is a line through many points (a chart's path in date order,
// or a long straight line across a chart) that draws as plotter.Line
// does, except that on a raster canvas it is stroked in pieces: solid,
// in pieces of strokeChunk segments (each sharing its first segment
// with the one before, so every join is drawn whole) after segments
// longer than maxSpan are cut; dashed, dash by dash, the dashes laid out
// along the whole line as gg lays them out (dashes, as the pattern's
// first entry is drawn, from the offset on). The rasterizer behind the
// PNG copies keeps each pixel row's cells in a linked list and searches
// it for every edge it adds, so one stroke across the width of a chart
// costs time quadratic in the cells a row holds (tens of seconds at 300
// dpi for a dense path of 1,500 points); short pieces keep every list
// short. The SVG copy is one path, as before.
type pathLine struct {
	*plotter.Line
}

// Plot implements plot.Plotter.
func (l pathLine) Plot(c draw.Canvas, p *plot.Plot) {
	if !raster(c.Canvas) || l.FillColor != nil || l.StepStyle != plotter.NoStep || l.Width == 0 {
		l.Line.Plot(c, p)
		return
	}
	trX, trY := p.Transforms(&c)
	ps := make([]vg.Point, len(l.XYs))
	for i, xy := range l.XYs {
		ps[i] = vg.Point{X: trX(xy.X), Y: trY(xy.Y)}
	}
	solid := l.LineStyle
	solid.Dashes, solid.DashOffs = nil, 0
	c.SetLineStyle(solid)
	stroke := func(part []vg.Point) {
		var pa vg.Path
		pa.Move(part[0])
		for _, pt := range part[1:] {
			pa.Line(pt)
		}
		c.Stroke(pa)
	}
	for _, part := range c.ClipLinesXY(ps) {
		if len(part) < 2 {
			continue
		}
		if len(l.Dashes) > 0 {
			for _, d := range dashPieces(part, l.Dashes, l.DashOffs) {
				stroke(d)
			}
			continue
		}
		part = cutLong(part)
		for s := 0; ; s += strokeChunk - 1 {
			e := min(len(part), s+strokeChunk+1)
			stroke(part[s:e])
			if e == len(part) {
				break
			}
		}
	}
}

// cutLong cuts every segment of ps longer than maxSpan into equal
// collinear parts no longer than it.
func cutLong(ps []vg.Point) []vg.Point {
	out := []vg.Point{ps[0]}
	for i := 1; i < len(ps); i++ {
		a, b := ps[i-1], ps[i]
		d := math.Hypot(float64(b.X-a.X), float64(b.Y-a.Y))
		n := int(math.Ceil(d / float64(maxSpan)))
		for k := 1; k < n; k++ {
			t := vg.Length(float64(k) / float64(n))
			out = append(out, vg.Point{X: a.X + t*(b.X-a.X), Y: a.Y + t*(b.Y-a.Y)})
		}
		out = append(out, b)
	}
	return out
}

// dashPieces lays the dash pattern ds (on, off, on, …; a single entry is
// on and off alike) along the polyline ps from offset offs into the
// pattern and returns the dashes drawn, each a polyline: the rule gg
// applies when it strokes a dashed path (git.sr.ht/~sbinet/gg, dashPath),
// here in the canvas's own units, which the PNG's dots only scale.
func dashPieces(ps []vg.Point, ds []vg.Length, offs vg.Length) [][]vg.Point {
	if len(ds) == 1 {
		ds = []vg.Length{ds[0], ds[0]}
	}
	k, done := 0, vg.Length(0) // the pattern entry, and how much of it is used
	if offs != 0 {
		var total vg.Length
		for _, d := range ds {
			total += d
		}
		o := vg.Length(math.Mod(float64(offs), float64(total)))
		if o < 0 {
			o += total
		}
		for i, d := range ds {
			if o -= d; o < 0 {
				k, done = i, d+o
				break
			}
		}
	}
	var out [][]vg.Point
	prev := ps[0]
	cur := []vg.Point{prev}
	for i := 1; i < len(ps); {
		pt := ps[i]
		d := vg.Length(math.Hypot(float64(pt.X-prev.X), float64(pt.Y-prev.Y)))
		if left := ds[k] - done; d > left {
			t := left / d
			q := vg.Point{X: prev.X + t*(pt.X-prev.X), Y: prev.Y + t*(pt.Y-prev.Y)}
			cur = append(cur, q)
			if k%2 == 0 && len(cur) > 1 {
				out = append(out, cur)
			}
			cur = []vg.Point{q}
			done, prev, k = 0, q, (k+1)%len(ds)
			continue
		}
		cur = append(cur, pt)
		prev, done = pt, done+d
		i++
	}
	if k%2 == 0 && len(cur) > 1 {
		out = append(out, cur)
	}
	return out
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

// pathOf is line as a pathLine.
func pathOf(xys plotter.XYs, c color.Color, width float64, dashes ...vg.Length) (pathLine, error) {
	l, err := line(xys, c, width, dashes...)
	return pathLine{l}, err
}
