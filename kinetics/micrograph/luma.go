package micrograph

import (
	"image"
	"image/color"

	"github.com/foilrun/foilrun/kinetics/micrograph/internal/hugemem"
)

// lumaImage is a gray image held as native 16-bit levels: the working
// plane's format, which the PNG decoder writes straight into. 8-bit
// sources are scaled by 257 (255 → 65535) and depth records 8, so that
// Analyze reports gray levels in the source's own units. Its colour model
// is color.Gray16Model.
type lumaImage struct {
	pix    []uint16
	stride int
	rect   image.Rectangle
	depth  int // 8 or 16: the bit depth of the source's samples
}

func newLumaImage(w, h, depth int) *lumaImage {
	return &lumaImage{pix: hugemem.Slice[uint16](w * h), stride: w, rect: image.Rect(0, 0, w, h), depth: depth}
}

// ColorModel returns color.Gray16Model.
func (m *lumaImage) ColorModel() color.Model { return color.Gray16Model }

// Bounds returns the image's rectangle.
func (m *lumaImage) Bounds() image.Rectangle { return m.rect }

// Opaque reports true: a luma plane has no alpha.
func (m *lumaImage) Opaque() bool { return true }

// At returns the level at (x, y) as a color.Gray16, zero outside Bounds.
func (m *lumaImage) At(x, y int) color.Color {
	if !(image.Point{x, y}.In(m.rect)) {
		return color.Gray16{}
	}
	return color.Gray16{Y: m.pix[m.offset(x, y)]}
}

func (m *lumaImage) offset(x, y int) int {
	return (y-m.rect.Min.Y)*m.stride + (x - m.rect.Min.X)
}

// rowFrom returns the levels of row y from column x to the right edge.
func (m *lumaImage) rowFrom(x, y int) []uint16 {
	o := m.offset(x, y)
	return m.pix[o : o+m.rect.Max.X-x]
}

// SubImage returns the part of m inside r, sharing m's levels.
func (m *lumaImage) SubImage(r image.Rectangle) image.Image {
	r = r.Intersect(m.rect)
	if r.Empty() {
		return &lumaImage{depth: m.depth}
	}
	return &lumaImage{pix: m.pix[m.offset(r.Min.X, r.Min.Y):], stride: m.stride, rect: r, depth: m.depth}
}
