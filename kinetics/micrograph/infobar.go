package micrograph

import (
	"fmt"
	"image"
)

// Thresholds of FindInfoBars, as fractions of full scale (65535 in
// 16-bit levels). They describe what an instrument's data band looks like
// and a sample does not: rows that are mostly one gray level, far from
// the sample's, with marks of a strongly contrasting ink.
const (
	barFlatShare  = 0.5  // a flat row has at least this share of its pixels at its mode (±1/256 of full scale)
	barFarFromRef = 0.1  // the band's mode lies at least this far from the median of the field's middle row
	barInkContact = 0.3  // a mark pixel differs from its row's mode by at least this much
	barMinInk     = 1e-3 // the band has at least this share of mark pixels (and at least 4)
	barMinRows    = 3    // a band has at least this many rows
	barMaxShare   = 0.4  // a band takes at most this share of the height
)

// FindInfoBars looks for an instrument's info bar along the top and the
// bottom of r (a rectangle of img): a band of consecutive rows, starting
// at the edge, each of which is flat — at least half its pixels within
// 1/256 of full scale of the row's most frequent level, that level at
// least 10 % of full scale from the median of r's middle row — and which
// together carry marks: at least 0.1 % of the band's pixels (and at
// least 4) differ from their row's level by 30 % of full scale or more.
// A band needs at least 3 rows and at most 40 % of r's height. Sample
// rows are textured and noisy and fail the flatness test; a flat
// sample-coloured strip fails the distance test; a plain frame without
// marks fails the mark test. It returns the bands found (none, one or
// two), top first.
func FindInfoBars(img image.Image, r image.Rectangle) []image.Rectangle {
	if r.Dy() < 2*barMinRows || r.Dx() < MinSide {
		return nil
	}
	row := make([]uint16, r.Dx())
	convertRow(img, r.Min.X, r.Min.Y+r.Dy()/2, row)
	ref := int(medianLevel(row))
	maxRows := int(barMaxShare * float64(r.Dy()))
	var bars []image.Rectangle
	if n := barRows(img, r, row, ref, maxRows, r.Min.Y, 1); n > 0 {
		bars = append(bars, image.Rect(r.Min.X, r.Min.Y, r.Max.X, r.Min.Y+n))
	}
	if n := barRows(img, r, row, ref, maxRows, r.Max.Y-1, -1); n > 0 {
		bars = append(bars, image.Rect(r.Min.X, r.Max.Y-n, r.Max.X, r.Max.Y))
	}
	return bars
}

// barRows counts the flat rows from y0 in direction dy (at most maxRows)
// and returns their number when they form a band with marks, else 0.
func barRows(img image.Image, r image.Rectangle, row []uint16, ref, maxRows, y0, dy int) int {
	const fs = 65535.0
	n, ink := 0, 0
	for ; n < maxRows; n++ {
		convertRow(img, r.Min.X, y0+n*dy, row)
		mode, share := rowMode(row)
		if share < barFlatShare || float64(abs(mode-ref)) < barFarFromRef*fs {
			break
		}
		for _, v := range row {
			if float64(abs(int(v)-mode)) >= barInkContact*fs {
				ink++
			}
		}
	}
	if n < barMinRows || ink < 4 || float64(ink) < barMinInk*float64(n*len(row)) {
		return 0
	}
	return n
}

// rowMode returns the centre of the most frequent of 256 equal bins of
// the row's levels and the share of the row in that bin and its two
// neighbours.
func rowMode(row []uint16) (level int, share float64) {
	var h [256]int
	for _, v := range row {
		h[v>>8]++
	}
	m := 0
	for i, c := range h {
		if c > h[m] {
			m = i
		}
	}
	c := h[m]
	if m > 0 {
		c += h[m-1]
	}
	if m < 255 {
		c += h[m+1]
	}
	return m<<8 | 0x80, float64(c) / float64(len(row))
}

// medianLevel returns the median of the row's levels, to 1/256 of full scale.
func medianLevel(row []uint16) uint16 {
	var h [256]int
	for _, v := range row {
		h[v>>8]++
	}
	cum := 0
	for i, c := range h {
		if cum += c; 2*cum >= len(row) {
			return uint16(i<<8 | 0x80)
		}
	}
	return 0xff80
}

func abs(v int) int {
	if v < 0 {
		return -v
	}
	return v
}

// field returns the part of img Analyze measures: the crop (or the whole
// image) less any info bar found in it (unless s.KeepInfoBar), with a
// line for each thing cut. A crop not inside the image or of zero area
// returns an error wrapping ErrSettings.
func field(img image.Image, s Settings) (image.Image, image.Rectangle, []string, error) {
	b := img.Bounds()
	r := b
	var cuts []string
	if s.Crop != (image.Rectangle{}) {
		c := s.Crop
		if c.Dx() <= 0 || c.Dy() <= 0 {
			return nil, r, nil, fmt.Errorf("%w: crop %d,%d,%d,%d has zero area: want x0 < x1 and y0 < y1",
				ErrSettings, c.Min.X, c.Min.Y, c.Max.X, c.Max.Y)
		}
		if !c.In(b) {
			return nil, r, nil, fmt.Errorf("%w: crop %d,%d,%d,%d lies outside the image, which is %d×%d pixels",
				ErrSettings, c.Min.X, c.Min.Y, c.Max.X, c.Max.Y, b.Dx(), b.Dy())
		}
		r = c
		cuts = append(cuts, fmt.Sprintf("cropped to x %d–%d, y %d–%d (%d×%d pixels) as asked", c.Min.X, c.Max.X, c.Min.Y, c.Max.Y, c.Dx(), c.Dy()))
	}
	if !s.KeepInfoBar {
		for _, bar := range FindInfoBars(img, r) {
			where := "bottom"
			if bar.Min.Y == r.Min.Y {
				where, r.Min.Y = "top", bar.Max.Y
			} else {
				r.Max.Y = bar.Min.Y
			}
			cuts = append(cuts, fmt.Sprintf("cut an info bar of %d rows at the %s (y %d–%d): flat rows with high-contrast marks", bar.Dy(), where, bar.Min.Y, bar.Max.Y))
		}
	}
	if r == b {
		return img, r, cuts, nil
	}
	sub, ok := img.(interface {
		SubImage(image.Rectangle) image.Image
	})
	if !ok {
		return nil, r, nil, fmt.Errorf("%w: cannot crop an image of type %T", ErrSettings, img)
	}
	return sub.SubImage(r), r, cuts, nil
}
