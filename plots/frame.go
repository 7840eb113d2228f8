package plots

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"strings"

	"git.sr.ht/~sbinet/gg"
	xfnt "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/riskaudit/riskaudit/internal/textsafe"
)

// PNGDPI is the resolution of the PNG copy of every figure: 300 dots per
// inch, the usual resolution for print (common practice).
const PNGDPI = 300

// fontFamily is the font list every SVG asks for. The layout is measured
// with Liberation Sans (gonum/plot's own copy); Arimo and Arial have the
// same advance widths (Liberation Sans was made metric-compatible with
// Arial), so a viewer without Liberation Sans keeps the layout; the
// generic sans-serif is the last resort.
const fontFamily = "'Liberation Sans',Arimo,Arial,Helvetica,sans-serif"

// sans is the figures' typeface at the given size in points.
func sans(size float64) font.Font {
	return font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Points(size)}
}

func bold(size float64) font.Font {
	f := sans(size)
	f.Weight = xfnt.WeightBold
	return f
}

// textStyle is a text style in the figures' typeface.
func textStyle(f font.Font, c color.Color) draw.TextStyle {
	return draw.TextStyle{Color: c, Font: f, Handler: plot.DefaultTextHandler}
}

// PNGName is the file name of the figure's PNG copy: its SVG name with
// .png for .svg.
func (f Figure) PNGName() string { return strings.TrimSuffix(f.Name, ".svg") + ".png" }

// painting draws a figure onto a canvas (margins already taken off).
type painting func(c draw.Canvas) error

// paint draws a figure of w × h twice, as SVG and as PNG at PNGDPI on a
// white ground, and names the font list in the SVG.
func paint(w, h vg.Length, f painting) (svg, png []byte, err error) {
	sc := vgsvg.New(w, h)
	if err := f(margins(draw.New(sc))); err != nil {
		return nil, nil, err
	}
	var b bytes.Buffer
	if _, err := sc.WriteTo(&b); err != nil {
		return nil, nil, fmt.Errorf("writing SVG: %w", err)
	}
	// A level or name with invalid UTF-8 or a control character would
	// make the SVG a file no XML parser reads.
	svg = textsafe.XML(bytes.ReplaceAll(b.Bytes(), []byte("font-family:Liberation Sans;"), []byte("font-family:"+fontFamily+";")))
	// The canvas is made here as vgimg.NewWith makes it (the size
	// rounded to whole pixels, butt line caps, y upwards), but on an
	// image gg draws into directly: NewWith's own image is copied by gg
	// into a second one of the same size, 18 MB at 300 dpi for the
	// calibration figure. The layout keeps the size w × h in points; text
	// is placed from the whole-pixel height, as the other marks are.
	pw, ph := int(w/vg.Inch*PNGDPI+0.5), int(h/vg.Inch*PNGDPI+0.5)
	img := image.NewRGBA(image.Rect(0, 0, pw, ph))
	ctx := gg.NewContextForRGBA(img)
	ctx.SetLineCapButt()
	ctx.InvertY()
	ic := vgimg.NewWith(vgimg.UseImageWithContext(img, ctx), vgimg.UseDPI(PNGDPI))
	if err := f(margins(draw.NewCanvas(ic, w, h))); err != nil {
		return nil, nil, err
	}
	b = bytes.Buffer{}
	if err := encodePNG(&b, ic.Image()); err != nil {
		return nil, nil, fmt.Errorf("writing PNG: %w", err)
	}
	return svg, b.Bytes(), nil
}

// sheet is the frame around a figure's charts: a bold title and a
// subtitle (the model's or cohort's name) above, wrapped to the width
// rather than cut short, and a legend strip below, off the data.
type sheet struct {
	title, subtitle string
	legend          *plot.Legend
	entries         int
}

const (
	titleSize    = 11.5
	subtitleSize = 9.5
	lineGap      = 1.25 // line height as a multiple of the font size
)

// lines wraps s at spaces into lines no wider than w in font f; a word
// wider than w is broken.
func lines(s string, f font.Font, w vg.Length) []string {
	if s == "" {
		return nil
	}
	sty := textStyle(f, ink)
	var out []string
	cur := ""
	for _, word := range strings.Fields(s) {
		for sty.Width(word) > w {
			// Break a long word at the last rune that fits.
			r := []rune(word)
			k := len(r) - 1
			for k > 1 && sty.Width(string(r[:k])) > w {
				k--
			}
			if cur != "" {
				out, cur = append(out, cur), ""
			}
			out = append(out, string(r[:k]))
			word = string(r[k:])
		}
		switch {
		case cur == "":
			cur = word
		case sty.Width(cur+" "+word) <= w:
			cur += " " + word
		default:
			out, cur = append(out, cur), word
		}
	}
	return append(out, cur)
}

// headHeight is the height the title and subtitle take at width w.
func (s sheet) headHeight(w vg.Length) vg.Length {
	n := len(lines(s.title, bold(titleSize), w))
	m := len(lines(s.subtitle, sans(subtitleSize), w))
	h := vg.Points(float64(n)*titleSize*lineGap + float64(m)*subtitleSize*lineGap)
	return h + vg.Points(6)
}

// footHeight is the height of the legend strip.
func (s sheet) footHeight() vg.Length {
	if s.legend == nil || s.entries == 0 {
		return 0
	}
	return vg.Points(legendRow*float64(s.entries) + 8)
}

// frame draws the title and subtitle onto c and returns the canvas left
// for the charts, above the legend's strip (drawn by foot).
func (s sheet) frame(c draw.Canvas) draw.Canvas {
	w := c.Max.X - c.Min.X
	y := c.Max.Y
	for _, part := range []struct {
		text string
		f    font.Font
		col  color.Color
	}{{s.title, bold(titleSize), ink}, {s.subtitle, sans(subtitleSize), grey}} {
		sty := textStyle(part.f, part.col)
		sty.XAlign, sty.YAlign = draw.XCenter, draw.YTop
		for _, l := range lines(part.text, part.f, w) {
			c.FillText(sty, vg.Point{X: (c.Min.X + c.Max.X) / 2, Y: y}, l)
			y -= vg.Points(part.f.Size.Points() * lineGap)
		}
	}
	rest := draw.Crop(c, 0, 0, 0, y-vg.Points(6)-c.Max.Y)
	if foot := s.footHeight(); foot > 0 {
		rest = draw.Crop(rest, 0, 0, foot, 0)
	}
	return rest
}

// foot draws the legend in its strip at the bottom of c, after the
// charts.
func (s sheet) foot(c draw.Canvas) {
	if foot := s.footHeight(); foot > 0 {
		s.legend.Draw(draw.Crop(c, 0, 0, 0, -(c.Max.Y - c.Min.Y - foot)))
	}
}

// newLegend is a legend for the strip below a chart.
func newLegend() *plot.Legend {
	l := plot.NewLegend()
	styleLegend(&l)
	return &l
}

// alignX crops the canvases so that the data areas of their plots span
// the same x range (charts stacked one above the other share their axis).
func alignX(ps []*plot.Plot, cs []draw.Canvas) {
	left, right := vg.Length(-1e9), vg.Length(1e9)
	for i, p := range ps {
		dc := p.DataCanvas(cs[i])
		left = max(left, dc.Min.X)
		right = min(right, dc.Max.X)
	}
	for i, p := range ps {
		dc := p.DataCanvas(cs[i])
		cs[i] = draw.Crop(cs[i], left-dc.Min.X, right-dc.Max.X, 0, 0)
	}
}

// alignY crops side-by-side canvases so that their plots' data areas span
// the same height (rows of a forest chart line up).
func alignY(ps []*plot.Plot, cs []draw.Canvas) {
	bottom, top := vg.Length(-1e9), vg.Length(1e9)
	for i, p := range ps {
		dc := p.DataCanvas(cs[i])
		bottom = max(bottom, dc.Min.Y)
		top = min(top, dc.Max.Y)
	}
	for i, p := range ps {
		dc := p.DataCanvas(cs[i])
		cs[i] = draw.Crop(cs[i], 0, 0, bottom-dc.Min.Y, top-dc.Max.Y)
	}
}

// single draws one plot in a sheet of width w whose chart area is h high.
func single(p *plot.Plot, s sheet, w, h vg.Length) (svg, png []byte, err error) {
	total := h + s.headHeight(w-vg.Points(10)) + s.footHeight()
	return paint(w, total, func(c draw.Canvas) error {
		drawPlot(p, s.frame(c))
		s.foot(c)
		return nil
	})
}

// drawPlot draws p onto c as p.Draw does, but on a raster canvas it
// leaves out the plot's background when that is opaque white: the PNG
// canvas is white already (paint), nothing is drawn under a plot before
// it, and the rasterizer's white over white is white to the bit, so the
// pixels are the same without a fill of the whole plot area (some 3M
// pixels at PNGDPI). The SVG keeps its background rectangle.
func drawPlot(p *plot.Plot, c draw.Canvas) {
	bg := p.BackgroundColor
	if bg == nil || !raster(c.Canvas) {
		p.Draw(c)
		return
	}
	if r, g, b, a := bg.RGBA(); r&g&b&a != 0xffff {
		p.Draw(c)
		return
	}
	p.BackgroundColor = nil
	defer func() { p.BackgroundColor = bg }()
	p.Draw(c)
}
