package micrograph

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"hash"
	"hash/crc32"
	"image"
	"image/color"
	"image/png"
	"io"
	"slices"
	"sync"

	"github.com/foilrun/foilrun/kinetics/micrograph/internal/hugemem"
)

// The PNG decoder of this package reads a PNG (ISO/IEC 15948:2004, "PNG
// (Portable Network Graphics) Specification, Second Edition") in three
// stages that overlap: the calling goroutine reads the image data, a
// second inflates it as it arrives (internal/inflate, byte for byte what
// compress/zlib gives) into one buffer of the size the header gives, and
// a third sums the inflated rows (Adler-32) and unfilters them (section
// 9.2: None, Sub, Up, Average, Paeth) as they complete. An 8-bit gray
// image is unfiltered in place and returned as an *image.Gray over that
// buffer; other formats are converted row by row into a lumaImage of
// 16-bit luma. The luma is exactly what image/png's image gives through
// convertRow (tested). Interlaced images (Adam7) are handed to image/png.

// pngSignature is the 8-byte PNG file signature (section 5.2).
const pngSignature = "\x89PNG\r\n\x1a\n"

// PNG colour types (section 11.2.2, Table 11.1).
const (
	pngGray      = 0
	pngRGB       = 2
	pngPalette   = 3
	pngGrayAlpha = 4
	pngRGBA      = 6
)

// pngFormatError and pngUnsupportedError read like image/png's errors,
// so a corrupt file is reported the same whichever decoder read it.
type pngFormatError string

func (e pngFormatError) Error() string { return "png: invalid format: " + string(e) }

type pngUnsupportedError string

func (e pngUnsupportedError) Error() string { return "png: unsupported feature: " + string(e) }

var errChunkOrder = pngFormatError("chunk out of order")

// Chunk stages, in file order.
const (
	stStart = iota
	stIHDR
	stPLTE
	stTRNS
	stIDAT
	stIEND
)

// pngInfo is what IHDR, PLTE and tRNS say about the pixels.
type pngInfo struct {
	width, height int
	depth, ctype  int
	interlaced    bool
	palette       color.Palette // 256 entries, as image/png fills them; nil until PLTE
	transparent   []byte        // tRNS of a gray or RGB image; nil without one
}

// bitsPerPixel is the size of one pixel in the filtered rows.
func (h *pngInfo) bitsPerPixel() int {
	channels := map[int]int{pngGray: 1, pngRGB: 3, pngPalette: 1, pngGrayAlpha: 2, pngRGBA: 4}[h.ctype]
	return channels * h.depth
}

// validDepth reports whether the colour type allows the bit depth
// (section 11.2.2, Table 11.1).
func validDepth(ctype, depth int) bool {
	switch ctype {
	case pngGray:
		return depth == 1 || depth == 2 || depth == 4 || depth == 8 || depth == 16
	case pngPalette:
		return depth == 1 || depth == 2 || depth == 4 || depth == 8
	case pngRGB, pngGrayAlpha, pngRGBA:
		return depth == 8 || depth == 16
	}
	return false
}

// pngReader reads chunks with their CRC-32 checks (section 5.3) and
// presents consecutive IDAT chunks' data as one stream (Read).
type pngReader struct {
	r        io.Reader
	crc      hash.Hash32
	tmp      [3 * 256]byte
	stage    int
	hdr      pngInfo
	idatLeft uint32
	pending  bool         // the next chunk's header is in tmp[:8] already
	sizeHint int          // the most the file can hold: its size when known, else the byte limit
	consumed bytes.Buffer // the bytes read before the first IDAT, kept for the interlaced fallback
	keep     bool
}

func newPNGReader(r io.Reader) *pngReader {
	d := &pngReader{r: r, crc: crc32.NewIEEE(), keep: true}
	return d
}

// readFull reads len(p) bytes, keeping a copy while d.keep is set.
func (d *pngReader) readFull(p []byte) error {
	n, err := io.ReadFull(d.r, p)
	if d.keep {
		d.consumed.Write(p[:n])
	}
	if err == io.EOF {
		err = io.ErrUnexpectedEOF
	}
	return err
}

func (d *pngReader) verifyChecksum() error {
	if err := d.readFull(d.tmp[:4]); err != nil {
		return err
	}
	if binary.BigEndian.Uint32(d.tmp[:4]) != d.crc.Sum32() {
		return pngFormatError("invalid checksum")
	}
	return nil
}

// readHeader reads the signature and the chunks up to IHDR: enough to
// know the image's size.
func (d *pngReader) readHeader() error {
	if err := d.readFull(d.tmp[:8]); err != nil {
		return err
	}
	if string(d.tmp[:8]) != pngSignature {
		return pngFormatError("not a PNG file")
	}
	return d.chunksUntil(stIHDR)
}

// chunksUntil reads chunks until the stage reaches stage. At stIDAT it
// stops at the start of the first IDAT chunk's data.
func (d *pngReader) chunksUntil(stage int) error {
	for d.stage < stage {
		if err := d.chunk(); err != nil {
			return err
		}
	}
	return nil
}

// chunk reads one chunk. At the first IDAT it stops after the chunk's
// header with d.idatLeft bytes of data to come.
func (d *pngReader) chunk() error {
	if d.pending {
		d.pending = false
	} else if err := d.readFull(d.tmp[:8]); err != nil {
		return err
	}
	length := binary.BigEndian.Uint32(d.tmp[:4])
	d.crc.Reset()
	d.crc.Write(d.tmp[4:8])
	h := &d.hdr
	switch string(d.tmp[4:8]) {
	case "IHDR":
		if d.stage != stStart {
			return errChunkOrder
		}
		d.stage = stIHDR
		return d.parseIHDR(length)
	case "PLTE":
		if d.stage != stIHDR {
			return errChunkOrder
		}
		d.stage = stPLTE
		return d.parsePLTE(length)
	case "tRNS":
		switch {
		case h.ctype == pngPalette && d.stage != stPLTE,
			(h.ctype == pngRGB) && d.stage != stIHDR && d.stage != stPLTE,
			h.ctype != pngPalette && h.ctype != pngRGB && d.stage != stIHDR:
			return errChunkOrder
		}
		d.stage = stTRNS
		return d.parseTRNS(length)
	case "IDAT":
		if d.stage < stIHDR || d.stage > stIDAT || (d.stage == stIHDR && h.ctype == pngPalette) {
			return errChunkOrder
		}
		if d.stage == stIDAT {
			break // trailing IDAT chunks after the image data are skipped, as image/png does
		}
		d.stage = stIDAT
		d.idatLeft = length
		return nil
	case "IEND":
		if d.stage != stIDAT {
			return errChunkOrder
		}
		d.stage = stIEND
		if length != 0 {
			return pngFormatError("bad IEND length")
		}
		return d.verifyChecksum()
	}
	if length > 0x7fffffff {
		return pngFormatError(fmt.Sprintf("Bad chunk length: %d", length))
	}
	return d.skip(length)
}

// skip reads and checks a chunk whose content is not needed.
func (d *pngReader) skip(length uint32) error {
	var ignored [4096]byte
	for length > 0 {
		n := min(len(ignored), int(length))
		if err := d.readFull(ignored[:n]); err != nil {
			return err
		}
		d.crc.Write(ignored[:n])
		length -= uint32(n)
	}
	return d.verifyChecksum()
}

func (d *pngReader) parseIHDR(length uint32) error {
	if length != 13 {
		return pngFormatError("bad IHDR length")
	}
	b := d.tmp[:13]
	if err := d.readFull(b); err != nil {
		return err
	}
	d.crc.Write(b)
	if b[10] != 0 {
		return pngUnsupportedError("compression method")
	}
	if b[11] != 0 {
		return pngUnsupportedError("filter method")
	}
	if b[12] > 1 {
		return pngFormatError("invalid interlace method")
	}
	w, h := int32(binary.BigEndian.Uint32(b[0:4])), int32(binary.BigEndian.Uint32(b[4:8]))
	if w <= 0 || h <= 0 {
		return pngFormatError("non-positive dimension")
	}
	if !validDepth(int(b[9]), int(b[8])) {
		return pngUnsupportedError(fmt.Sprintf("bit depth %d, color type %d", b[8], b[9]))
	}
	d.hdr = pngInfo{width: int(w), height: int(h), depth: int(b[8]), ctype: int(b[9]), interlaced: b[12] == 1}
	return d.verifyChecksum()
}

// parsePLTE reads the palette (section 11.2.3). Like image/png, a
// palette index past the entries given reads as opaque black.
func (d *pngReader) parsePLTE(length uint32) error {
	h := &d.hdr
	np := int(length / 3)
	if length%3 != 0 || np <= 0 || np > 256 || np > 1<<uint(h.depth) {
		return pngFormatError("bad PLTE length")
	}
	b := d.tmp[:3*np]
	if err := d.readFull(b); err != nil {
		return err
	}
	d.crc.Write(b)
	switch h.ctype {
	case pngPalette:
		h.palette = make(color.Palette, 256)
		for i := range h.palette {
			h.palette[i] = color.RGBA{0, 0, 0, 0xff}
			if i < np {
				h.palette[i] = color.RGBA{b[3*i], b[3*i+1], b[3*i+2], 0xff}
			}
		}
	case pngRGB, pngRGBA:
		// optional and ignorable for true colour (section 4.1.2)
	default:
		return pngFormatError("PLTE, color type mismatch")
	}
	return d.verifyChecksum()
}

// parseTRNS reads the transparency chunk (section 11.3.2.1).
func (d *pngReader) parseTRNS(length uint32) error {
	h := &d.hdr
	want := map[int]uint32{pngGray: 2, pngRGB: 6}[h.ctype]
	switch {
	case h.ctype == pngPalette && length > 256, want != 0 && length != want:
		return pngFormatError("bad tRNS length")
	case h.ctype != pngPalette && want == 0:
		return pngFormatError("tRNS, color type mismatch")
	}
	b := d.tmp[:length]
	if err := d.readFull(b); err != nil {
		return err
	}
	d.crc.Write(b)
	if h.ctype == pngPalette {
		for i, a := range b {
			c := h.palette[i].(color.RGBA)
			h.palette[i] = color.NRGBA{c.R, c.G, c.B, a}
		}
	} else {
		h.transparent = append([]byte(nil), b...)
	}
	return d.verifyChecksum()
}

// idatRoom is the room made for the image data before it is read, so
// that it is read into one buffer without growing it: the size of a zlib
// stream of stored blocks holding the rows the header gives (5 bytes a
// block of 65 535, 6 for the zlib header and checksum), which a deflating
// encoder does not exceed, or the file's size when that is smaller.
// Longer data still fits, by growing the buffer.
func (d *pngReader) idatRoom() int {
	h := &d.hdr
	raw := h.height * (1 + (h.bitsPerPixel()*h.width+7)/8)
	room := raw + 5*(raw/65535+1) + 6
	if d.sizeHint > 0 {
		room = min(room, d.sizeHint)
	}
	return max(room, int(d.idatLeft))
}

// readIDAT reads the data of consecutive IDAT chunks, the first of
// which has d.idatLeft bytes to come, checking each chunk's CRC, and
// leaves the header of the chunk after them pending. It reads into buf,
// telling feed after each chunk how much has arrived, and finishes feed on
// return. Data longer than buf is read on into a larger copy (outgrown),
// of which feed is not told.
func (d *pngReader) readIDAT(buf []byte, feed *idatFeed) (data []byte, outgrown bool, err error) {
	defer feed.finish()
	data = buf[:0]
	for {
		if int32(d.idatLeft) < 0 {
			return nil, outgrown, pngUnsupportedError("IDAT chunk length overflow")
		}
		start, n := len(data), int(d.idatLeft)
		if !outgrown && start+n > len(buf) {
			feed.finish()
			outgrown = true
		}
		data = slices.Grow(data, n)[:start+n]
		if err := d.readFull(data[start:]); err != nil {
			return nil, outgrown, err
		}
		d.crc.Write(data[start:])
		if err := d.verifyChecksum(); err != nil {
			return nil, outgrown, err
		}
		if !outgrown {
			feed.arrived(len(data))
		}
		if err := d.readFull(d.tmp[:8]); err != nil {
			return nil, outgrown, err
		}
		if string(d.tmp[4:8]) != "IDAT" {
			d.pending = true
			return data, outgrown, nil
		}
		d.idatLeft = binary.BigEndian.Uint32(d.tmp[:4])
		d.crc.Reset()
		d.crc.Write(d.tmp[4:8])
	}
}

// idatFeed hands the image data from the goroutine that reads it to the
// one that inflates it: n bytes have arrived, and done says no more will.
type idatFeed struct {
	mu   sync.Mutex
	more sync.Cond
	n    int
	done bool
}

func newIDATFeed() *idatFeed {
	f := &idatFeed{}
	f.more.L = &f.mu
	return f
}

func (f *idatFeed) arrived(n int) {
	f.mu.Lock()
	f.n = n
	f.mu.Unlock()
	f.more.Broadcast()
}

func (f *idatFeed) finish() {
	f.mu.Lock()
	f.done = true
	f.mu.Unlock()
	f.more.Broadcast()
}

// wait blocks until n bytes have arrived or no more will, and returns how
// many have.
func (f *idatFeed) wait(n int) int {
	f.mu.Lock()
	defer f.mu.Unlock()
	for f.n < n && !f.done {
		f.more.Wait()
	}
	return f.n
}

// decodePixels reads, after readHeader, the chunks up to the image data,
// the image data into a lumaImage, then the chunks up to IEND. An
// interlaced image is decoded by image/png from the start (the bytes read
// so far and the rest).
func (d *pngReader) decodePixels() (image.Image, error) {
	if d.hdr.interlaced {
		d.keep = false
		return png.Decode(io.MultiReader(bytes.NewReader(d.consumed.Bytes()), d.r))
	}
	d.keep = false
	d.consumed = bytes.Buffer{}
	if err := d.chunksUntil(stIDAT); err != nil {
		return nil, err
	}
	// The image data is inflated on a second goroutine while this one
	// reads it.
	buf := hugemem.Slice[byte](d.idatRoom())
	feed := newIDATFeed()
	inflated := make(chan rowsResult, 1)
	go func() {
		defer func() {
			if p := recover(); p != nil {
				inflated <- rowsResult{err: fmt.Errorf("decoder failed: %v", p)}
			}
		}()
		inflated <- d.readRows(buf, feed.wait)
	}()
	data, outgrown, err := d.readIDAT(buf, feed)
	rows := <-inflated
	if err != nil {
		return nil, err
	}
	if outgrown { // more data than room was made for: inflate it again, whole
		rows = d.readRows(data, nil)
	}
	if rows.err != nil {
		return nil, rows.err
	}
	if rows.used < len(data) {
		return nil, pngFormatError("too much pixel data")
	}
	img := rows.img
	if err := d.chunksUntil(stIEND); err != nil {
		return nil, err
	}
	return img, nil
}
