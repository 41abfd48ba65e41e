package plots

import (
	"bufio"
	"compress/zlib"
	"encoding/binary"
	"hash/crc32"
	"image"
	"image/png"
	"io"
)

// pngEncoder writes the PNGs of images encodePNG does not take, at zlib's
// fastest level.
var pngEncoder = png.Encoder{CompressionLevel: png.BestSpeed}

// encodePNG writes img as a PNG (ISO/IEC 15948, the PNG specification):
// an opaque *image.RGBA, which is what a figure is, as 8-bit RGB with the
// Up filter on every row and zlib's fastest level, any other image through
// image/png. A figure is mostly flat colour and horizontal runs: the Up
// filter packs it within a few per cent of image/png's filter chosen row
// by row, which costs more than the compression itself. The bytes depend
// only on the image (no timestamps), so they are deterministic.
func encodePNG(w io.Writer, img image.Image) error {
	m, ok := img.(*image.RGBA)
	if !ok || !m.Opaque() || m.Rect.Empty() {
		return pngEncoder.Encode(w, img)
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	wd, ht := m.Rect.Dx(), m.Rect.Dy()
	bw.WriteString("\x89PNG\r\n\x1a\n")
	var ihdr [13]byte
	binary.BigEndian.PutUint32(ihdr[0:], uint32(wd))
	binary.BigEndian.PutUint32(ihdr[4:], uint32(ht))
	ihdr[8], ihdr[9] = 8, 2 // 8 bits per sample, truecolour; deflate, adaptive filtering, no interlace
	writeChunk(bw, "IHDR", ihdr[:])

	idat := &chunkWriter{w: bw, name: "IDAT"}
	zw, err := zlib.NewWriterLevel(idat, zlib.BestSpeed)
	if err != nil {
		return err
	}
	n := 3 * wd
	prev := make([]byte, n) // the row above the first is all zeros
	cur := make([]byte, n)
	out := make([]byte, 1+n)
	out[0] = 2 // Up
	for y := 0; y < ht; y++ {
		row := m.Pix[y*m.Stride : y*m.Stride+4*wd]
		up := out[1:]
		// RGBA to RGB and the Up filter in one pass, a pixel at a time
		// on three-byte slices (bounds checked once a pixel).
		for x, i := 0, 0; x < wd; x, i = x+1, i+3 {
			px, c, p, u := row[4*x:4*x+3], cur[i:i+3], prev[i:i+3], up[i:i+3]
			c[0], c[1], c[2] = px[0], px[1], px[2]
			u[0], u[1], u[2] = px[0]-p[0], px[1]-p[1], px[2]-p[2]
		}
		if _, err := zw.Write(out); err != nil {
			return err
		}
		prev, cur = cur, prev
	}
	if err := zw.Close(); err != nil {
		return err
	}
	idat.flush()
	writeChunk(bw, "IEND", nil)
	return bw.Flush()
}

// writeChunk writes one PNG chunk: length, type, data and the CRC of type
// and data.
func writeChunk(w *bufio.Writer, name string, data []byte) {
	var n [4]byte
	binary.BigEndian.PutUint32(n[:], uint32(len(data)))
	w.Write(n[:])
	w.WriteString(name)
	w.Write(data)
	crc := crc32.NewIEEE()
	crc.Write([]byte(name))
	crc.Write(data)
	binary.BigEndian.PutUint32(n[:], crc.Sum32())
	w.Write(n[:])
}

// chunkWriter gathers the zlib stream into chunks of up to 64 KiB.
type chunkWriter struct {
	w    *bufio.Writer
	name string
	buf  []byte
}

// Write never fails: the bufio.Writer underneath keeps its first error
// for the final Flush.
func (c *chunkWriter) Write(p []byte) (int, error) {
	for b := p; len(b) > 0; {
		k := min(len(b), chunkSize-len(c.buf))
		c.buf = append(c.buf, b[:k]...)
		b = b[k:]
		if len(c.buf) == chunkSize {
			c.flush()
		}
	}
	return len(p), nil
}

const chunkSize = 1 << 16

func (c *chunkWriter) flush() {
	if len(c.buf) > 0 {
		writeChunk(c.w, c.name, c.buf)
		c.buf = c.buf[:0]
	}
}
