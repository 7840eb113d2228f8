package plots

import (
	"bufio"
	"compress/zlib"
	"encoding/binary"
	"fmt"
	"hash/crc32"
	"image"
	"image/png"
	"io"
)

// encodePNG writes m as a PNG file (ISO/IEC 15948:2004, the PNG
// specification): 8-bit RGB without alpha when every pixel is opaque,
// each row filtered with the Up filter (the byte above subtracted,
// modulo 256) and the image data deflated at zlib's fastest level.
// A figure is mostly flat colour, so Up alone leaves long runs of zeros
// and costs one pass; image/png tries all five filters on every row and
// deflates at the default level, which took about twice the time for
// files 5–8% smaller. The pixels decoded are the same either way. An
// image that is not an *image.RGBA, or has a pixel that is not opaque,
// is written by image/png.
func encodePNG(w io.Writer, m image.Image) error {
	rgba, ok := m.(*image.RGBA)
	if !ok || !opaqueRGBA(rgba) {
		return png.Encode(w, m)
	}
	b := rgba.Bounds()
	width, height := b.Dx(), b.Dy()
	if width <= 0 || height <= 0 || width > 1<<30/3 {
		return png.Encode(w, m)
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	var pw chunkWriter
	pw.w = bw
	if _, err := io.WriteString(bw, "\x89PNG\r\n\x1a\n"); err != nil {
		return err
	}
	var ihdr [13]byte
	binary.BigEndian.PutUint32(ihdr[0:], uint32(width))
	binary.BigEndian.PutUint32(ihdr[4:], uint32(height))
	ihdr[8], ihdr[9] = 8, 2 // bit depth 8, colour type 2 (RGB); compression, filter method and interlace 0
	if err := pw.chunk("IHDR", ihdr[:]); err != nil {
		return err
	}
	idat := &idatWriter{cw: &pw, buf: make([]byte, 0, 1<<16)}
	zw, err := zlib.NewWriterLevel(idat, zlib.BestSpeed)
	if err != nil {
		return err
	}
	out := make([]byte, 1+3*width)
	out[0] = 2                     // filter type Up
	above := make([]byte, 4*width) // the row above the first is zero (PNG, filter type 2)
	for y := b.Min.Y; y < b.Max.Y; y++ {
		off := rgba.PixOffset(b.Min.X, y)
		px := rgba.Pix[off : off+4*width]
		upRow(out[1:], px, above)
		if _, err := zw.Write(out); err != nil {
			return err
		}
		above = px
	}
	if err := zw.Close(); err != nil {
		return err
	}
	if err := idat.flush(); err != nil {
		return err
	}
	if err := pw.chunk("IEND", nil); err != nil {
		return err
	}
	return bw.Flush()
}

// upRow writes the RGB bytes of the RGBA row px less those of the row
// above (modulo 256) into out, three bytes a pixel: the Up filter, read
// straight from the image rows. A pixel's four bytes are subtracted at
// once, each byte without a borrow from the next (Warren, Hacker's
// Delight, 2nd ed., §2-18), and stored as four bytes, the fourth
// overwritten by the next pixel; the last pixel goes byte by byte.
func upRow(out, px, above []byte) {
	const high = 0x80808080
	le := binary.LittleEndian
	for len(px) >= 8 && len(above) >= 8 && len(out) >= 4 {
		v, a := le.Uint32(px), le.Uint32(above)
		le.PutUint32(out, ((v|high)-(a&^high))^((v^^a)&high))
		px, above, out = px[4:], above[4:], out[3:]
	}
	if len(px) >= 3 && len(above) >= 3 && len(out) >= 3 {
		out[0], out[1], out[2] = px[0]-above[0], px[1]-above[1], px[2]-above[2]
	}
}

// opaqueRGBA reports whether every pixel of m has alpha 255, two
// pixels at a time.
func opaqueRGBA(m *image.RGBA) bool {
	const alphas = 0xff000000ff000000 // the alpha bytes of two pixels, little-endian
	b := m.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		off := m.PixOffset(b.Min.X, y)
		px := m.Pix[off : off+4*b.Dx()]
		for len(px) >= 8 {
			if binary.LittleEndian.Uint64(px)&alphas != alphas {
				return false
			}
			px = px[8:]
		}
		if len(px) == 4 && px[3] != 0xff {
			return false
		}
	}
	return true
}

// chunkWriter writes PNG chunks: length, type, data and the CRC-32 of
// type and data.
type chunkWriter struct {
	w   io.Writer
	hdr [8]byte
}

func (c *chunkWriter) chunk(name string, data []byte) error {
	if len(data) > 1<<31-1 {
		return fmt.Errorf("PNG chunk %s of %d bytes", name, len(data))
	}
	binary.BigEndian.PutUint32(c.hdr[:4], uint32(len(data)))
	copy(c.hdr[4:], name)
	crc := crc32.Update(crc32.ChecksumIEEE(c.hdr[4:8]), crc32.IEEETable, data)
	if _, err := c.w.Write(c.hdr[:8]); err != nil {
		return err
	}
	if _, err := c.w.Write(data); err != nil {
		return err
	}
	binary.BigEndian.PutUint32(c.hdr[:4], crc)
	_, err := c.w.Write(c.hdr[:4])
	return err
}

// idatWriter cuts the zlib stream into IDAT chunks of at most its
// buffer's capacity.
type idatWriter struct {
	cw  *chunkWriter
	buf []byte
}

func (d *idatWriter) Write(p []byte) (int, error) {
	n := len(p)
	for len(p) > 0 {
		k := min(cap(d.buf)-len(d.buf), len(p))
		d.buf = append(d.buf, p[:k]...)
		p = p[k:]
		if len(d.buf) == cap(d.buf) {
			if err := d.flush(); err != nil {
				return 0, err
			}
		}
	}
	return n, nil
}

func (d *idatWriter) flush() error {
	if len(d.buf) == 0 {
		return nil
	}
	err := d.cw.chunk("IDAT", d.buf)
	d.buf = d.buf[:0]
	return err
}
