package micrograph

import (
	"fmt"
	"image"
	"image/color"
	"image/draw"
	"image/png"
	"io"
)

// Outline colours of the overlay.
var (
	InteriorColor = color.RGBA{0x00, 0xe0, 0x40, 0xff} // domains inside the field: green
	EdgeColor     = color.RGBA{0xff, 0x30, 0xff, 0xff} // domains touching the border: magenta
)

// Overlay returns a colour copy of img with the outline of every kept
// domain drawn in: InteriorColor for interior domains, EdgeColor for
// domains touching the border. An outline pixel is a domain pixel with a
// 4-neighbour outside the domain or outside the image. img must be the
// image r was measured on, whole (the overlay shows r.Region) or cut to
// r.Region.
func (r *Result) Overlay(img image.Image) (*image.RGBA, error) {
	b := img.Bounds()
	if sub, ok := img.(interface {
		SubImage(image.Rectangle) image.Image
	}); ok && r.Region != b && !r.Region.Empty() && r.Region.In(b) {
		img = sub.SubImage(r.Region) // the measured field of a cropped image
		b = r.Region
	}
	if b.Dx() != r.Width || b.Dy() != r.Height {
		return nil, fmt.Errorf("overlay: image is %d×%d, the result is for %d×%d", b.Dx(), b.Dy(), r.Width, r.Height)
	}
	out := image.NewRGBA(image.Rect(0, 0, r.Width, r.Height))
	draw.Draw(out, out.Bounds(), img, b.Min, draw.Src)
	// id+1 of the domain at each pixel, 0 for none.
	owner := make([]int32, r.Width*r.Height)
	for i, ru := range r.runs {
		if d := r.runLabel[i]; d >= 0 {
			row := owner[int(ru.y)*r.Width:]
			for x := ru.x0; x < ru.x1; x++ {
				row[x] = d + 1
			}
		}
	}
	at := func(x, y int) int32 {
		if x < 0 || y < 0 || x >= r.Width || y >= r.Height {
			return 0
		}
		return owner[y*r.Width+x]
	}
	for y := range r.Height {
		for x := range r.Width {
			d := owner[y*r.Width+x]
			if d == 0 {
				continue
			}
			if at(x-1, y) == d && at(x+1, y) == d && at(x, y-1) == d && at(x, y+1) == d {
				continue
			}
			c := InteriorColor
			if r.Domains[d-1].Edge {
				c = EdgeColor
			}
			out.SetRGBA(x, y, c)
		}
	}
	return out, nil
}

// WriteOverlay encodes r.Overlay(img) as PNG to w.
func (r *Result) WriteOverlay(w io.Writer, img image.Image) error {
	out, err := r.Overlay(img)
	if err != nil {
		return err
	}
	if err := png.Encode(w, out); err != nil {
		return fmt.Errorf("overlay: write png: %w", err)
	}
	return nil
}
