package plots

import (
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// drawn is one figure painted as SVG and as PNG.
type drawn struct{ svg, png []byte }

// render paints a single plot of w × h as SVG and as PNG (paint), for
// the figures that are one gonum plot with its own title and legend
// (the forest plots across clusters and the charts in date order).
func render(p *plot.Plot, w, h vg.Length) (drawn, error) {
	svg, png, err := paint(w, h, func(c draw.Canvas) error {
		p.Draw(c)
		return nil
	})
	return drawn{svg, png}, err
}
