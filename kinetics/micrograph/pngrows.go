package micrograph

import (
	"errors"
	"fmt"
	"image"
	"image/color"

	"github.com/foilrun/foilrun/kinetics/micrograph/internal/hugemem"
	"github.com/foilrun/foilrun/kinetics/micrograph/internal/inflate"
)

// PNG filter types (ISO/IEC 15948:2004, section 9.2).
const (
	filterNone = iota
	filterSub
	filterUp
	filterAverage
	filterPaeth
)

// progressStep is how many inflated bytes the inflating goroutine
// produces between hand-overs to the one that unfilters.
const progressStep = 64 << 10

// readRows inflates the image data (data[:wait(…)] while it arrives, when
// wait is not nil; see inflate.InflateArriving) on this goroutine into one
// buffer of the exact size the header gives, while a second goroutine sums the
// inflated bytes (Adler-32, the zlib checksum) and unfilters the rows as
// they complete. An 8-bit gray image is unfiltered in place, a DEFLATE
// window behind the inflater, and is returned as an *image.Gray over that
// buffer (its rows one filter byte apart): no second image is made. Other
// formats are copied out row by row and converted into a lumaImage.
func (d *pngReader) readRows(data []byte, wait func(n int) int) rowsResult {
	h := &d.hdr
	bpp := h.bitsPerPixel()
	rowSize := 1 + (bpp*h.width+7)/8
	raw := hugemem.Slice[byte](h.height * rowSize)
	sink := &rowSink{raw: raw, rowSize: rowSize, bpp: (bpp + 7) / 8}
	var img image.Image
	if h.ctype == pngGray && h.depth == 8 {
		img = &image.Gray{Pix: raw[1:], Stride: rowSize, Rect: image.Rect(0, 0, h.width, h.height)}
	} else {
		depth := 8
		if h.depth == 16 {
			depth = 16
		}
		sink.img, sink.conv = newLumaImage(h.width, h.height, depth), rowConverter(h)
		img = sink.img
	}

	ready := make(chan int, len(raw)/progressStep+2)
	done := make(chan error, 1)
	go func() {
		defer func() {
			if p := recover(); p != nil {
				for range ready {
				}
				done <- fmt.Errorf("decoder failed: %v", p)
			}
		}()
		done <- sink.consume(ready)
	}()
	res, sum, err := func() (inflate.Result, uint32, error) {
		defer close(ready) // also if the inflater panics, so that the consumer ends
		return inflate.InflateArriving(raw, data, wait, progressStep, func(n int) { ready <- n })
	}()
	if uerr := <-done; uerr != nil {
		return rowsResult{err: uerr}
	}
	switch {
	case errors.Is(err, inflate.ErrTooLong):
		err = pngFormatError("too much pixel data")
	case errors.Is(err, inflate.ErrTruncated):
		err = pngFormatError("not enough pixel data")
	case err != nil:
		err = pngFormatError(err.Error())
	case inflate.Adler32Update(sink.sum, raw[sink.y*rowSize:res.N]) != sum:
		err = pngFormatError(inflate.ErrChecksum.Error())
	case res.N < len(raw):
		err = pngFormatError("not enough pixel data")
	default:
		return rowsResult{img: img, used: res.Used}
	}
	return rowsResult{err: err}
}

// rowsResult is what readRows made: the image, or an error, and how much
// of the image data the zlib stream took (the caller refuses data left
// over).
type rowsResult struct {
	img  image.Image
	used int
	err  error
}

// rowSink is the consumer side of readRows.
type rowSink struct {
	raw          []byte // the inflated image data: rows of a filter byte and rowSize−1 bytes
	rowSize, bpp int    // bpp: bytes per complete pixel, at least 1

	// img and conv, when set, receive each unfiltered row, copied out of
	// raw; without them rows are unfiltered in place.
	img  *lumaImage
	conv func(dst []uint16, src []byte)

	sum uint32 // Adler-32 of raw[:y·rowSize], summed before unfiltering
	y   int    // rows done
}

// consume takes, for each n received, the rows that raw[:n] completes:
// it adds each to the checksum and reverses its filter against the row
// above (section 9.2). Rows unfiltered in place are taken only once they
// lie a DEFLATE window behind n, where no back-reference can reach them;
// after the last n (the channel closed) the rest is taken. After an error
// it goes on receiving, so that the producer never blocks.
func (s *rowSink) consume(ready <-chan int) error {
	lag := 0
	if s.img == nil {
		lag = inflate.Window
	}
	w := s.rowSize - 1
	prev := make([]byte, w) // the row above the first is all zeros (section 9.2)
	var cur []byte
	if s.img != nil {
		cur = make([]byte, w)
	}
	s.sum = 1
	var err error
	take := func(limit int) {
		for ; err == nil && (s.y+1)*s.rowSize <= limit; s.y++ {
			row := s.raw[s.y*s.rowSize : (s.y+1)*s.rowSize]
			s.sum = inflate.Adler32Update(s.sum, row)
			if s.img == nil {
				// Two Average rows of one-byte pixels in a row are
				// unfiltered together (unAverage2).
				if s.bpp == 1 && row[0] == filterAverage && (s.y+2)*s.rowSize <= limit &&
					s.raw[(s.y+1)*s.rowSize] == filterAverage {
					next := s.raw[(s.y+1)*s.rowSize : (s.y+2)*s.rowSize]
					s.sum = inflate.Adler32Update(s.sum, next)
					unAverage2(row[1:], next[1:], prev)
					prev = next[1:]
					s.y++
					continue
				}
				if err = unfilter(row[0], row[1:], prev, s.bpp); err != nil {
					return
				}
				prev = row[1:]
				continue
			}
			copy(cur, row[1:])
			if err = unfilter(row[0], cur, prev, s.bpp); err != nil {
				return
			}
			s.conv(s.img.rowFrom(0, s.y), cur)
			cur, prev = prev, cur
		}
	}
	last := 0
	for n := range ready {
		last = n
		take(n - lag)
	}
	take(last)
	return err
}

// unfilter reverses filter type ft on cur given the unfiltered row above,
// prev (section 9.2; the Paeth predictor of section 9.4). bpp is the
// number of bytes per complete pixel, at least 1.
func unfilter(ft byte, cur, prev []byte, bpp int) error {
	switch ft {
	case filterNone:
	case filterSub:
		for k := 0; k < bpp && k < len(cur); k++ {
			left := byte(0)
			for i := k; i < len(cur); i += bpp {
				left += cur[i]
				cur[i] = left
			}
		}
	case filterUp:
		for i, p := range prev[:len(cur)] {
			cur[i] += p
		}
	case filterAverage:
		unAverage(cur, prev, bpp)
	case filterPaeth:
		unPaeth(cur, prev, bpp)
	default:
		return pngFormatError("bad filter type")
	}
	return nil
}

// unAverage reverses the Average filter: each byte is predicted by
// ⌊(left + above)/2⌋, left being 0 for the first pixel. As in unPaeth the
// left byte is carried in a register along each of the bpp sequences
// rather than read back from the row just written.
func unAverage(cur, prev []byte, bpp int) {
	prev = prev[:len(cur)]
	for k := 0; k < bpp && k < len(cur); k++ {
		left := 0
		for i := k; i < len(cur); i += bpp {
			left = (int(cur[i]) + (left+int(prev[i]))>>1) & 0xff
			cur[i] = uint8(left)
		}
	}
}

// unAverage2 is unAverage of two consecutive rows, a and the row b below
// it, of one-byte pixels, in one pass: a byte of b needs the byte of a
// above it and the byte of b to its left, so the two chains of
// dependencies (each byte on the one before) run side by side, b one byte
// behind a, and the processor works on both at once.
func unAverage2(a, b, prev []byte) {
	prev, b = prev[:len(a)], b[:len(a)]
	la, lb := 0, 0
	for i := range a {
		la = (int(a[i]) + (la+int(prev[i]))>>1) & 0xff
		a[i] = uint8(la)
		lb = (int(b[i]) + (lb+la)>>1) & 0xff
		b[i] = uint8(lb)
	}
}

// unPaeth reverses the Paeth filter: each byte is predicted by whichever
// of left a, above b and upper-left c is nearest p = a + b − c, ties in
// the order a, b, c. Each of the bpp interleaved byte sequences is run
// with a and c held in registers and the choice made without branches
// (the choice follows the noise, so a branch would be mispredicted about
// half the time).
func unPaeth(cur, prev []byte, bpp int) {
	prev = prev[:len(cur)]
	for k := 0; k < bpp && k < len(cur); k++ {
		a, c := 0, 0
		for i := k; i < len(cur); i += bpp {
			b := int(prev[i])
			pa, pb := b-c, a-c
			pc := absInt(pa + pb)
			pa, pb = absInt(pa), absInt(pb)
			p := c
			if pb <= pc {
				p = b
			}
			if pa <= min(pb, pc) {
				p = a
			}
			a = (p + int(cur[i])) & 0xff
			cur[i] = uint8(a)
			c = b
		}
	}
}

func absInt(v int) int {
	m := v >> 63
	return (v ^ m) - m
}

// rowConverter returns the function that turns one unfiltered row of the
// header's format into 16-bit luma, matching what convertRow makes of the
// image image/png returns for the same file: 8-bit and lower samples are
// scaled to 0…255 and by 257, colour goes through luma16, alpha is ignored
// where image/png gives an NRGBA (8-bit) and premultiplied where it gives
// an NRGBA64 (16-bit with alpha or tRNS), and a palette is looked up
// through color.Gray16Model as image/png's Paletted is.
func rowConverter(h *pngInfo) func(dst []uint16, src []byte) {
	switch {
	case h.ctype == pngPalette:
		return lookupRow(paletteLuma(h.palette), h.depth)
	case h.ctype == pngGray && h.depth < 8:
		var lut [256]uint16
		for i := range 1 << h.depth {
			lut[i] = uint16(i*255/(1<<h.depth-1)) * 257
		}
		return lookupRow(&lut, h.depth)
	case h.depth == 8:
		return row8(h.ctype)
	}
	return row16(h.ctype, h.transparent)
}

// paletteLuma is the luma of each of the 256 palette entries.
func paletteLuma(pal color.Palette) *[256]uint16 {
	var lut [256]uint16
	for i, c := range pal {
		lut[i] = color.Gray16Model.Convert(c).(color.Gray16).Y
	}
	return &lut
}

// lookupRow unpacks samples of depth bits (1, 2, 4 or 8, most significant
// first, section 7.2) and maps them through lut.
func lookupRow(lut *[256]uint16, depth int) func(dst []uint16, src []byte) {
	if depth == 8 {
		return func(dst []uint16, src []byte) {
			for i := range dst {
				dst[i] = lut[src[i]]
			}
		}
	}
	perByte, mask := 8/depth, byte(1<<depth-1)
	return func(dst []uint16, src []byte) {
		for i := range dst {
			shift := uint(8 - depth*(i%perByte+1))
			dst[i] = lut[src[i/perByte]>>shift&mask]
		}
	}
}

// row8 converts 8-bit gray, gray+alpha, RGB and RGBA rows.
func row8(ctype int) func(dst []uint16, src []byte) {
	switch ctype {
	case pngGray:
		return func(dst []uint16, src []byte) {
			for i, v := range src[:len(dst)] {
				dst[i] = uint16(v) * 257
			}
		}
	case pngGrayAlpha:
		return func(dst []uint16, src []byte) {
			for i := range dst {
				dst[i] = uint16(src[2*i]) * 257
			}
		}
	}
	n := 3
	if ctype == pngRGBA {
		n = 4
	}
	return func(dst []uint16, src []byte) {
		for i := range dst {
			s := src[n*i : n*i+3]
			dst[i] = luma16(uint32(s[0])*257, uint32(s[1])*257, uint32(s[2])*257)
		}
	}
}

// row16 converts 16-bit rows (big-endian samples, section 7.1).
// Transparency (tRNS) or alpha premultiplies: a/0xffff of each sample.
func row16(ctype int, trns []byte) func(dst []uint16, src []byte) {
	be := func(b []byte) uint32 { return uint32(b[0])<<8 | uint32(b[1]) }
	channels := map[int]int{pngGray: 1, pngRGB: 3, pngGrayAlpha: 2, pngRGBA: 4}[ctype]
	return func(dst []uint16, src []byte) {
		for i := range dst {
			s := src[2*channels*i : 2*channels*(i+1)]
			var r, g, b, a uint32
			switch ctype {
			case pngGray, pngGrayAlpha:
				r = be(s)
				g, b = r, r
			default:
				r, g, b = be(s), be(s[2:]), be(s[4:])
			}
			switch {
			case ctype == pngGrayAlpha:
				a = be(s[2:])
			case ctype == pngRGBA:
				a = be(s[6:])
			case trns != nil && transparent16(s, trns):
				a = 0
			default:
				a = 0xffff
			}
			if a != 0xffff {
				r, g, b = r*a/0xffff, g*a/0xffff, b*a/0xffff
			}
			dst[i] = luma16(r, g, b)
		}
	}
}

// transparent16 reports whether the 16-bit gray or RGB pixel s is the
// tRNS colour.
func transparent16(s, trns []byte) bool {
	for k := range trns {
		if s[k] != trns[k] {
			return false
		}
	}
	return true
}
