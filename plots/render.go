package plots

// drawn is one figure painted as SVG and as PNG.
type drawn struct {
	svg, png []byte
	// series are the data the figure draws (Figure.Series).
	series []Series
}
