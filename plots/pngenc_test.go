package plots

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"testing"
)

// TestEncodePNG checks encodePNG against image/png's decoder, an
// independent reading of the PNG specification: every pixel decodes to
// the colour drawn, for opaque images of several sizes (one pixel, an
// odd width, a sub-image not at the origin, more rows than one IDAT
// chunk holds) and for an image with a transparent pixel, inside a row
// or its last (written by image/png instead, alpha kept).
func TestEncodePNG(t *testing.T) {
	paint := func(w, h int, alpha func(x, y int) uint8) *image.RGBA {
		m := image.NewRGBA(image.Rect(0, 0, w, h))
		for y := 0; y < h; y++ {
			for x := 0; x < w; x++ {
				m.SetRGBA(x, y, color.RGBA{uint8(x * 7), uint8(y * 13), uint8(x*y + 3), alpha(x, y)})
			}
		}
		return m
	}
	opaque := func(int, int) uint8 { return 0xff }
	big := paint(700, 400, opaque)
	tests := []struct {
		name string
		img  *image.RGBA
		rgb  bool // written as 8-bit RGB by encodePNG itself
	}{
		{"one pixel", paint(1, 1, opaque), true},
		{"odd width", paint(37, 5, opaque), true},
		{"sub-image", big.SubImage(image.Rect(13, 29, 411, 390)).(*image.RGBA), true},
		{"several IDAT chunks", big, true},
		{"transparent pixel", paint(9, 4, func(x, y int) uint8 {
			if x == 3 && y == 2 {
				return 0x80
			}
			return 0xff
		}), false},
		{"transparent last pixel of an odd row", paint(9, 4, func(x, y int) uint8 {
			if x == 8 && y == 3 {
				return 0xfe
			}
			return 0xff
		}), false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var b bytes.Buffer
			if err := encodePNG(&b, tc.img); err != nil {
				t.Fatal(err)
			}
			got, err := png.Decode(bytes.NewReader(b.Bytes()))
			if err != nil {
				t.Fatalf("image/png cannot decode it: %v", err)
			}
			if ct := b.Bytes()[25]; (ct == 2) != tc.rgb { // IHDR's colour type
				t.Errorf("colour type %d; RGB (2) wanted: %v", ct, tc.rgb)
			}
			tb := tc.img.Bounds()
			if got.Bounds().Dx() != tb.Dx() || got.Bounds().Dy() != tb.Dy() {
				t.Fatalf("size %v, want %v", got.Bounds().Size(), tb.Size())
			}
			for y := 0; y < tb.Dy(); y++ {
				for x := 0; x < tb.Dx(); x++ {
					want := color.NRGBAModel.Convert(tc.img.At(tb.Min.X+x, tb.Min.Y+y))
					have := color.NRGBAModel.Convert(got.At(got.Bounds().Min.X+x, got.Bounds().Min.Y+y))
					if want != have {
						t.Fatalf("pixel (%d, %d) = %v, want %v", x, y, have, want)
					}
				}
			}
		})
	}
}

// BenchmarkEncodePNG writes a canvas of the calibration figure's size at
// PNGDPI (1800 × 2600 pixels), white with a grid of grey lines, by
// encodePNG and by image/png at its default level.
func BenchmarkEncodePNG(b *testing.B) {
	m := image.NewRGBA(image.Rect(0, 0, 1800, 2600))
	for i := range m.Pix {
		m.Pix[i] = 0xff
	}
	for y := 0; y < 2600; y++ {
		for x := 0; x < 1800; x++ {
			if x%150 == 0 || y%150 == 0 || (x-y)%997 == 0 {
				m.SetRGBA(x, y, color.RGBA{0x60, 0x60, 0x60, 0xff})
			}
		}
	}
	for _, bc := range []struct {
		name string
		enc  func(*bytes.Buffer) error
	}{
		{"encodePNG", func(w *bytes.Buffer) error { return encodePNG(w, m) }},
		{"image/png", func(w *bytes.Buffer) error { return png.Encode(w, m) }},
	} {
		b.Run(bc.name, func(b *testing.B) {
			var w bytes.Buffer
			for i := 0; i < b.N; i++ {
				w.Reset()
				if err := bc.enc(&w); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(w.Len()), "bytes")
		})
	}
}
