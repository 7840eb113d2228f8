// Package figcheck checks a drawn figure for what a program can see of
// its layout: no NaN or infinity written into the SVG, every text inside
// the canvas, no two texts overlapping, and a PNG that decodes at the
// expected size. It is imported by tests only.
//
// Text boxes are estimated from the SVG itself: each <text> element's
// position (gonum/plot writes the baseline's left end), its font size and
// weight, and its advance width measured with Liberation Sans, the font
// the figures are laid out with; the box runs from 0.91 of the size above
// the baseline to 0.22 below (Liberation Sans's ascent and descent,
// rounded).
package figcheck

import (
	"bytes"
	"fmt"
	"html"
	"image/png"
	"math"
	"regexp"
	"strconv"

	xfnt "golang.org/x/image/font"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Box is one text's estimated box, in points from the canvas's top left.
// A text turned by an angle (a y-axis label at 90°, slanted category
// labels) has the upright rectangle around its turned box as MinX … MaxY
// and its own box in the turned frame as U0 … V1 (baseline along u, up
// along v), with which two texts at the same angle are compared.
type Box struct {
	Text                   string
	MinX, MinY, MaxX, MaxY float64
	Rotated                bool
	// Angle is the turn in degrees, counter-clockwise.
	Angle          float64
	U0, U1, V0, V1 float64
}

var (
	sizeRe = regexp.MustCompile(`<svg width="([0-9.]+)pt" height="([0-9.]+)pt"`)
	rotRe  = regexp.MustCompile(`<g transform="rotate\(([-0-9.e]+)\)">$`)
	textRe = regexp.MustCompile(`(?s)<text x="([-0-9.e]+)" y="([-0-9.e]+)" transform="([^"]*)"\s*style="([^"]*)"\s*>([^<]*)</text>`)
	fsRe   = regexp.MustCompile(`font-size:([0-9.]+)px`)
	nanRe  = regexp.MustCompile(`(?i)\bnan\b|[+-]?inf\b`)
)

// Texts returns the canvas size and every text box of an SVG written by
// gonum/plot's vgsvg.
func Texts(svg []byte) (w, h float64, boxes []Box, err error) {
	m := sizeRe.FindSubmatch(svg)
	if m == nil {
		return 0, 0, nil, fmt.Errorf("no <svg width height> in points")
	}
	w, _ = strconv.ParseFloat(string(m[1]), 64)
	h, _ = strconv.ParseFloat(string(m[2]), 64)
	for _, loc := range textRe.FindAllSubmatchIndex(svg, -1) {
		t := make([][]byte, len(loc)/2)
		for k := range t {
			t[k] = svg[loc[2*k]:loc[2*k+1]]
		}
		angle := 0.0
		if r := rotRe.FindSubmatch(bytes.TrimRight(svg[:loc[0]], "\n\t ")); r != nil {
			angle, _ = strconv.ParseFloat(string(r[1]), 64)
		}
		x, _ := strconv.ParseFloat(string(t[1]), 64)
		y, _ := strconv.ParseFloat(string(t[2]), 64)
		fs := fsRe.FindSubmatch(t[4])
		if fs == nil {
			return 0, 0, nil, fmt.Errorf("text %q without a font size", t[5])
		}
		size, _ := strconv.ParseFloat(string(fs[1]), 64)
		f := font.Font{Typeface: "Liberation", Variant: "Sans", Size: vg.Points(size)}
		if bytes.Contains(t[4], []byte("font-weight:bold")) {
			f.Weight = xfnt.WeightBold
		}
		text := html.UnescapeString(string(t[5]))
		adv := float64(draw.TextStyle{Font: f, Handler: plot.DefaultTextHandler}.Width(text).Points())
		asc, desc := 0.91*size, 0.22*size
		// The group flips y (scale(1,-1) translate(0,-h)), a rotate(θ)
		// group inside it turns by θ counter-clockwise, and the text
		// flips back: in the turned frame, y up, the baseline starts at
		// (x, −y) and runs along u.
		b := Box{Text: text, Rotated: angle != 0, Angle: angle, U0: x, U1: x + adv, V0: -y - desc, V1: -y + asc}
		sin, cos := math.Sincos(angle * math.Pi / 180)
		b.MinX, b.MinY, b.MaxX, b.MaxY = math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		for _, u := range []float64{b.U0, b.U1} {
			for _, v := range []float64{b.V0, b.V1} {
				cx, cy := u*cos-v*sin, h-(u*sin+v*cos)
				b.MinX, b.MaxX = math.Min(b.MinX, cx), math.Max(b.MaxX, cx)
				b.MinY, b.MaxY = math.Min(b.MinY, cy), math.Max(b.MaxY, cy)
			}
		}
		boxes = append(boxes, b)
	}
	return w, h, boxes, nil
}

// Check returns every layout problem of an SVG figure.
func Check(svg []byte) []string {
	var out []string
	if loc := nanRe.FindIndex(svg); loc != nil {
		lo, hi := max(0, loc[0]-60), min(len(svg), loc[1]+20)
		out = append(out, fmt.Sprintf("a number that does not exist is written in the SVG: …%s…", svg[lo:hi]))
	}
	w, h, boxes, err := Texts(svg)
	if err != nil {
		return append(out, err.Error())
	}
	if len(boxes) == 0 {
		out = append(out, "no text found (the parser no longer matches the SVG)")
	}
	const tol = 0.5 // points
	const gap = 1.5 // points at least between texts side by side
	for _, b := range boxes {
		if b.MinX < -tol || b.MinY < -tol || b.MaxX > w+tol || b.MaxY > h+tol {
			out = append(out, fmt.Sprintf("text %q at [%.1f,%.1f]–[%.1f,%.1f] is outside the %.1f × %.1f canvas", b.Text, b.MinX, b.MinY, b.MaxX, b.MaxY, w, h))
		}
	}
	for i := range boxes {
		for j := i + 1; j < len(boxes); j++ {
			a, b := boxes[i], boxes[j]
			ox := math.Min(a.MaxX, b.MaxX) - math.Max(a.MinX, b.MinX)
			oy := math.Min(a.MaxY, b.MaxY) - math.Max(a.MinY, b.MinY)
			if a.Angle == b.Angle && a.Angle != 0 {
				// Turned alike: compare the boxes in their own frame.
				ox = math.Min(a.U1, b.U1) - math.Max(a.U0, b.U0)
				oy = math.Min(a.V1, b.V1) - math.Max(a.V0, b.V0)
			}
			switch {
			case ox > tol && oy > tol:
				out = append(out, fmt.Sprintf("texts %q and %q overlap (%.1f × %.1f points)", a.Text, b.Text, ox, oy))
			case ox > -gap && oy > tol:
				// Side by side with less than gap between them: two tick
				// labels that touch read as one number ("0.80.4").
				out = append(out, fmt.Sprintf("texts %q and %q touch: %.1f points apart side by side, less than %.1f", a.Text, b.Text, -ox, gap))
			}
		}
	}
	return out
}

// CheckPNG returns a problem if data is not a PNG of wpt × hpt points at
// dpi dots per inch (to the pixel, as vgimg rounds).
func CheckPNG(data []byte, wpt, hpt float64, dpi int) error {
	cfg, err := png.DecodeConfig(bytes.NewReader(data))
	if err != nil {
		return fmt.Errorf("the PNG does not decode: %w", err)
	}
	ww, wh := wpt/72*float64(dpi), hpt/72*float64(dpi)
	if math.Abs(float64(cfg.Width)-ww) > 1.5 || math.Abs(float64(cfg.Height)-wh) > 1.5 {
		return fmt.Errorf("the PNG is %d × %d pixels, want %.0f × %.0f (%.1f × %.1f points at %d dpi)", cfg.Width, cfg.Height, ww, wh, wpt, hpt, dpi)
	}
	return nil
}
