package micrograph

import (
	"errors"
	"fmt"
)

// Sentinel errors. Every error this package returns for bad data wraps one
// of them, so a caller can branch with errors.Is; the typed errors below
// carry the evidence.
var (
	// ErrUnreadable: the bytes are not a PNG, JPEG or TIFF image this
	// package can decode (truncated, corrupt, or another kind of file).
	ErrUnreadable = errors.New("unreadable image")
	// ErrTooLarge: the image header announces more pixels (or the file
	// holds more bytes) than the limit. See TooLargeError.
	ErrTooLarge = errors.New("image too large")
	// ErrTooSmall: the image is smaller than MinSide pixels on a side.
	ErrTooSmall = errors.New("image too small")
	// ErrUniform: every pixel has the same gray level (a blank, black or
	// saturated frame).
	ErrUniform = errors.New("image is uniform")
	// ErrOnePeak: the gray-level histogram has a single peak, so the image
	// is all bare copper or all graphene and no threshold can tell which.
	// See OnePeakError.
	ErrOnePeak = errors.New("one-peaked histogram")
	// ErrSettings: a Settings field is out of its domain (for example a
	// zero or negative pixel size).
	ErrSettings = errors.New("invalid settings")
)

// TooLargeError reports an image refused before its pixels were decoded.
type TooLargeError struct {
	Width, Height int   // from the image header; 0 when the byte limit tripped
	MaxPixels     int64 // the pixel limit in force
	MaxBytes      int64 // the byte limit in force
	Bytes         bool  // true when the byte limit, not the pixel limit, tripped
}

func (e *TooLargeError) Error() string {
	if e.Bytes {
		return fmt.Sprintf("image file is larger than the limit of %d bytes", e.MaxBytes)
	}
	return fmt.Sprintf("image header says %d×%d = %d pixels, above the limit of %d pixels; "+
		"crop or scale the image, or raise the limit", e.Width, e.Height,
		int64(e.Width)*int64(e.Height), e.MaxPixels)
}

// Unwrap returns ErrTooLarge.
func (e *TooLargeError) Unwrap() error { return ErrTooLarge }

// OnePeakError reports a gray-level histogram with no valley between two
// classes. Gray levels are in the image's own units (0–255 for 8-bit,
// 0–65535 for 16-bit images), measured after flattening and smoothing.
type OnePeakError struct {
	Peak        float64 // the most frequent gray level
	Spread      float64 // robust standard deviation of the gray levels
	ValleyRatio float64 // histogram at the valley over the lower of the two peaks
	MaxValley   float64 // the ratio below which two peaks count as separate
	MaxGray     float64 // 255 or 65535
}

func (e *OnePeakError) Error() string {
	return fmt.Sprintf("gray-level histogram has one peak (gray %.4g ± %.2g of %g; valley/peak %.2f, "+
		"need below %.2f): the image looks all bare copper or all graphene and no threshold can tell which; "+
		"give the gray level of bare copper or a rectangle known to be bare",
		e.Peak, e.Spread, e.MaxGray, e.ValleyRatio, e.MaxValley)
}

// Unwrap returns ErrOnePeak.
func (e *OnePeakError) Unwrap() error { return ErrOnePeak }
