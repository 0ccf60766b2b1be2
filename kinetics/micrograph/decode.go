package micrograph

import (
	"bufio"
	"bytes"
	"fmt"
	"image"
	_ "image/jpeg" // register the JPEG decoder
	_ "image/png"  // register the PNG decoder
	"io"
	"io/fs"
	"math"

	_ "golang.org/x/image/tiff" // register the TIFF decoder

	"github.com/foilrun/foilrun/recipe/infile"
)

// Default decode limits.
const (
	DefaultMaxPixels = 256 << 20 // 268 435 456 pixels (256 Mpixel)
	DefaultMaxBytes  = 1 << 30   // 1 GiB of file
)

// Limits bounds what Decode accepts. The zero value uses the defaults.
type Limits struct {
	// MaxPixels is the largest width×height accepted, checked against the
	// image header before any pixel memory is allocated. 0 means
	// DefaultMaxPixels.
	MaxPixels int64
	// MaxBytes is the largest number of bytes read from the input.
	// 0 means DefaultMaxBytes.
	MaxBytes int64
}

func (l Limits) withDefaults() Limits {
	if l.MaxPixels <= 0 {
		l.MaxPixels = DefaultMaxPixels
	}
	if l.MaxBytes <= 0 {
		l.MaxBytes = DefaultMaxBytes
	}
	return l
}

// Info describes a decoded image.
type Info struct {
	Format        string // "png", "jpeg" or "tiff"
	Width, Height int    // pixels
	BitDepth      int    // 8 or 16: the depth of the gray levels Analyze reports
}

// Load opens and decodes the micrograph at path, which must be a regular
// file (infile.Open: no FIFO or device) of at most lim.MaxBytes. See Decode.
func Load(path string, lim Limits) (image.Image, Info, error) {
	lim = lim.withDefaults()
	f, err := infile.Open(path, infile.Kind{Name: infile.Image.Name, Max: lim.MaxBytes})
	if err != nil {
		return nil, Info{}, fmt.Errorf("load micrograph: %w", err)
	}
	defer f.Close()
	img, info, err := Decode(f, lim)
	if err != nil {
		return nil, info, fmt.Errorf("load micrograph %q: %w", path, err)
	}
	return img, info, nil
}

// Decode reads a PNG, JPEG or TIFF image (8- or 16-bit, gray or colour).
// A PNG that is not interlaced is decoded by this package's own decoder
// (see pngdecode.go: reading, inflating and unfiltering overlap on three
// goroutines) into an *image.Gray for 8-bit gray, else a 16-bit gray image
// of the luma Analyze works on; other images go through the standard
// decoders. It reads the header first
// and refuses an image larger than lim.MaxPixels with a *TooLargeError
// before allocating pixel memory. A truncated or non-image input returns an
// error wrapping ErrUnreadable. Decode never panics: a panic inside a
// decoder is turned into an ErrUnreadable error.
func Decode(r io.Reader, lim Limits) (img image.Image, info Info, err error) {
	lim = lim.withDefaults()
	lr := &limitedReader{r: r, left: lim.MaxBytes}
	br := bufio.NewReaderSize(lr, readBuffer)
	if sig, _ := br.Peek(len(pngSignature)); string(sig) == pngSignature {
		return decodePNG(br, lr, lim)
	}
	var head bytes.Buffer
	cfg, format, err := decodeConfig(io.TeeReader(br, &head))
	if lr.over {
		return nil, info, lr.tooLarge(lim)
	}
	if err != nil {
		return nil, info, fmt.Errorf("decode image header: %w: %w", ErrUnreadable, err)
	}
	info = Info{Format: format, Width: cfg.Width, Height: cfg.Height}
	if err := checkSize(cfg.Width, cfg.Height, lim); err != nil {
		return nil, info, err
	}
	img, format, err = decodeImage(io.MultiReader(&head, br))
	if lr.over {
		return nil, info, lr.tooLarge(lim)
	}
	if err != nil {
		return nil, info, fmt.Errorf("decode %s image: %w: %w", format, ErrUnreadable, err)
	}
	b := img.Bounds()
	if b.Dx() != cfg.Width || b.Dy() != cfg.Height {
		return nil, info, fmt.Errorf("decode %s image: %w: header says %d×%d, pixels are %d×%d",
			format, ErrUnreadable, cfg.Width, cfg.Height, b.Dx(), b.Dy())
	}
	info.BitDepth = bitDepth(img)
	return img, info, nil
}

// readBuffer is the size of the buffer between the file and the decoders.
const readBuffer = 64 << 10

// decodePNG is Decode for a PNG: the chunks before the image data are the
// header (errors there read "decode image header"), then the pixels.
func decodePNG(br io.Reader, lr *limitedReader, lim Limits) (img image.Image, info Info, err error) {
	defer func() {
		if p := recover(); p != nil {
			img, err = nil, fmt.Errorf("decode png image: %w: decoder failed: %v", ErrUnreadable, p)
		}
	}()
	d := newPNGReader(br)
	d.sizeHint = int(min(lim.MaxBytes, math.MaxInt32)) // the image data cannot be longer than the bytes read
	if st, ok := lr.r.(interface{ Stat() (fs.FileInfo, error) }); ok {
		if fi, err := st.Stat(); err == nil && fi.Mode().IsRegular() && fi.Size() <= lim.MaxBytes {
			d.sizeHint = int(fi.Size())
		}
	}
	err = d.readHeader()
	if lr.over {
		return nil, info, lr.tooLarge(lim)
	}
	if err != nil {
		return nil, info, fmt.Errorf("decode image header: %w: %w", ErrUnreadable, err)
	}
	info = Info{Format: "png", Width: d.hdr.width, Height: d.hdr.height}
	if err := checkSize(d.hdr.width, d.hdr.height, lim); err != nil {
		return nil, info, err
	}
	img, err = d.decodePixels()
	if lr.over {
		return nil, info, lr.tooLarge(lim)
	}
	if err != nil {
		return nil, info, fmt.Errorf("decode png image: %w: %w", ErrUnreadable, err)
	}
	info.BitDepth = bitDepth(img)
	return img, info, nil
}

// checkSize refuses a header's size that is not positive or above the
// pixel limit.
func checkSize(w, h int, lim Limits) error {
	if w <= 0 || h <= 0 {
		return fmt.Errorf("decode image header: %w: size %d×%d", ErrUnreadable, w, h)
	}
	if int64(w)*int64(h) > lim.MaxPixels {
		return &TooLargeError{Width: w, Height: h, MaxPixels: lim.MaxPixels, MaxBytes: lim.MaxBytes}
	}
	return nil
}

func decodeConfig(r io.Reader) (cfg image.Config, format string, err error) {
	defer func() {
		if p := recover(); p != nil {
			err = fmt.Errorf("decoder failed: %v", p)
		}
	}()
	return image.DecodeConfig(r)
}

func decodeImage(r io.Reader) (img image.Image, format string, err error) {
	defer func() {
		if p := recover(); p != nil {
			img, err = nil, fmt.Errorf("decoder failed: %v", p)
		}
	}()
	return image.Decode(r)
}

// limitedReader reads at most left bytes and records whether the input
// had more.
type limitedReader struct {
	r    io.Reader
	left int64
	over bool
}

// tooLarge is the error of a file over the byte limit.
func (l *limitedReader) tooLarge(lim Limits) error {
	return &TooLargeError{MaxBytes: lim.MaxBytes, MaxPixels: lim.MaxPixels, Bytes: true}
}

func (l *limitedReader) Read(p []byte) (int, error) {
	if l.left <= 0 {
		var one [1]byte
		n, _ := l.r.Read(one[:])
		if n > 0 {
			l.over = true
			return 0, ErrTooLarge
		}
		return 0, io.EOF
	}
	if int64(len(p)) > l.left {
		p = p[:l.left]
	}
	n, err := l.r.Read(p)
	l.left -= int64(n)
	return n, err
}

// bitDepth is 16 for the image types that carry 16-bit samples, else 8.
func bitDepth(img image.Image) int {
	switch m := img.(type) {
	case *lumaImage:
		return m.depth
	case *image.Gray16, *image.RGBA64, *image.NRGBA64:
		return 16
	}
	return 8
}
