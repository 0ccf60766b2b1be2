package micrograph

import (
	"errors"
	"fmt"
	"image/color"

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

// readRows inflates the image data on this goroutine into one buffer of
// the exact size the header gives, while a second goroutine unfilters
// the rows as they complete and writes their luma into img, row by row.
func (d *pngReader) readRows(data []byte, img *lumaImage) error {
	bpp := d.hdr.bitsPerPixel()
	rowSize := 1 + (bpp*d.hdr.width+7)/8
	raw := make([]byte, d.hdr.height*rowSize)
	conv := rowConverter(&d.hdr)

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
		done <- unfilterRows(ready, raw, img, rowSize, (bpp+7)/8, conv)
	}()
	res, err := inflate.Zlib(raw, data, progressStep, func(n int) { ready <- n })
	close(ready)
	if uerr := <-done; uerr != nil {
		return uerr
	}
	switch {
	case errors.Is(err, inflate.ErrTooLong):
		return pngFormatError("too much pixel data")
	case errors.Is(err, inflate.ErrTruncated):
		return pngFormatError("not enough pixel data")
	case err != nil:
		return pngFormatError(err.Error())
	case res.N < len(raw):
		return pngFormatError("not enough pixel data")
	case res.Used < len(data):
		return pngFormatError("too much pixel data")
	}
	return nil
}

// unfilterRows is the consumer side of readRows: each n received means
// raw[:n] is final. It copies each complete row out of raw (later data
// refers back to the filtered bytes), reverses its filter against the
// row above and converts it with conv. After an error it goes on
// receiving, so that the producer never blocks.
func unfilterRows(ready <-chan int, raw []byte, img *lumaImage, rowSize, bpp int,
	conv func(dst []uint16, src []byte)) error {
	var err error
	cur, prev := make([]byte, rowSize-1), make([]byte, rowSize-1) // the row above the first is all zeros (section 9.2)
	y := 0
	for n := range ready {
		for ; err == nil && (y+1)*rowSize <= n; y++ {
			row := raw[y*rowSize : (y+1)*rowSize]
			copy(cur, row[1:])
			if err = unfilter(row[0], cur, prev, bpp); err == nil {
				conv(img.rowFrom(0, y), cur)
				cur, prev = prev, cur
			}
		}
	}
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
