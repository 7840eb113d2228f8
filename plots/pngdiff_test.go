package plots

import (
	"bytes"
	"image"
	"image/png"
	"testing"
)

// pngDiff decodes two PNGs of one size and counts, over the pixels that
// are not white in either (inked), those whose largest channel
// difference is above 16/255 (differ), and the largest difference in
// 1/255 (worst). It returns the decoded images for further checks.
func pngDiff(t *testing.T, pngA, pngB []byte) (a, b image.Image, inked, differ, worst int) {
	t.Helper()
	a, err := png.Decode(bytes.NewReader(pngA))
	if err != nil {
		t.Fatal(err)
	}
	b, err = png.Decode(bytes.NewReader(pngB))
	if err != nil {
		t.Fatal(err)
	}
	if a.Bounds() != b.Bounds() {
		t.Fatalf("PNG sizes %v and %v", a.Bounds(), b.Bounds())
	}
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
			d := int(max(absDiff(r1, r2), absDiff(g1, g2), absDiff(b1, b2)) >> 8)
			if d > 16 {
				differ++
			}
			worst = max(worst, d)
		}
	}
	return a, b, inked, differ, worst
}

func absDiff(a, b uint32) uint32 {
	if a > b {
		return a - b
	}
	return b - a
}
