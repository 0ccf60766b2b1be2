package synth

import "image"

// InfoBar is the data band a microscope prints beside the field: a flat
// background with marks (characters and a scale bar) in a contrasting ink.
// The zero value of Background and Ink draws a black bar with black marks;
// give them both.
type InfoBar struct {
	// Height of the band in pixels, > 0.
	Height int
	// Top puts the band above the field; false puts it below.
	Top bool
	// Background and Ink are the gray levels (0–255) of the band and of
	// its marks.
	Background, Ink uint8
}

// WithInfoBar returns a new image: img with the bar added above or below
// it, so the field keeps every pixel and its true coverage. The marks are
// drawn without randomness: a row of character cells, each 7 pixels wide
// with a vertical stroke and a horizontal stroke, 5 pixels apart, on the
// band's middle half, and a scale bar 3 pixels high and one fifth of the
// width long at the right.
func WithInfoBar(img *image.Gray, bar InfoBar) *image.Gray {
	b := img.Bounds()
	w, h := b.Dx(), b.Dy()
	out := image.NewGray(image.Rect(0, 0, w, h+bar.Height))
	field, band := 0, h
	if bar.Top {
		field, band = bar.Height, 0
	}
	for y := range h {
		copy(out.Pix[(field+y)*out.Stride:(field+y)*out.Stride+w], img.Pix[img.PixOffset(b.Min.X, b.Min.Y+y):])
	}
	set := func(x, y int, v uint8) {
		if x >= 0 && x < w && y >= 0 && y < bar.Height {
			out.Pix[(band+y)*out.Stride+x] = v
		}
	}
	for y := range bar.Height {
		for x := range w {
			set(x, y, bar.Background)
		}
	}
	y0, y1 := bar.Height/4, bar.Height-bar.Height/4
	for cx := 8; cx+7 < w*3/4; cx += 12 {
		for y := y0; y < y1; y++ {
			set(cx, y, bar.Ink)
			set(cx+1, y, bar.Ink)
		}
		for x := cx; x < cx+7; x++ {
			set(x, (y0+y1)/2, bar.Ink)
			set(x, y0, bar.Ink)
		}
	}
	for y := bar.Height/2 - 1; y < bar.Height/2+2; y++ {
		for x := w - 8 - w/5; x < w-8; x++ {
			set(x, y, bar.Ink)
		}
	}
	return out
}
