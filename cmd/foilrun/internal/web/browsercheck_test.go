package web

import (
	"image"
	"image/color"
	"image/draw"
	"strings"
	"testing"
)

// TestNotBlank checks the blank-page test on images whose ink share and
// colours are known by construction.
func TestNotBlank(t *testing.T) {
	t.Parallel()
	white := color.RGBA{255, 255, 255, 255}
	page := func(rows int, colours int) image.Image {
		img := image.NewRGBA(image.Rect(0, 0, 100, 100))
		for y := range 100 {
			for x := range 100 {
				c := white
				if y < rows {
					c = color.RGBA{uint8(x % colours), 0, 0, 255}
				}
				img.Set(x, y, c)
			}
		}
		return img
	}
	tests := []struct {
		name string
		img  image.Image
		want string // "" for a drawn page, else part of the error
	}{
		{"white page", page(0, 1), "of the pixels differ"},
		{"half a row of ink", halfRow(), "of the pixels differ"},
		{"ink in two colours", page(30, 2), "distinct colours"},
		{"text-like page", page(30, 16), ""},
		// the same pages in the other pixel layouts notBlank reads
		{"white page, NRGBA", asNRGBA(page(0, 1)), "of the pixels differ"},
		{"text-like page, NRGBA", asNRGBA(page(30, 16)), ""},
		{"text-like page, 16-bit", as64(page(30, 16)), ""},
		{"ink in two colours, 16-bit", as64(page(30, 2)), "distinct colours"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			err := notBlank(tt.img)
			switch {
			case tt.want == "" && err != nil:
				t.Errorf("notBlank: got %v, want no error", err)
			case tt.want != "" && (err == nil || !strings.Contains(err.Error(), tt.want)):
				t.Errorf("notBlank: got %v, want an error containing %q", err, tt.want)
			}
		})
	}
}

// TestPDFPages counts pages in hand-written PDF object texts, in the two
// spacings the PDF syntax allows (ISO 32000-1 §7.7.3, page tree: a page
// object is /Type /Page, a tree node /Type /Pages; section number from
// memory).
func TestPDFPages(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		pdf  string
		want int
	}{
		{"one page", "1 0 obj << /Type /Pages /Kids [2 0 R] /Count 1 >> endobj 2 0 obj << /Type /Page /Parent 1 0 R >> endobj", 1},
		{"two pages, no spaces", "<</Type/Pages/Count 2>> <</Type/Page/Parent 1 0 R>> <</Type/Page/Parent 1 0 R>>", 2},
		{"no pages", "<< /Type /Catalog /Pages 1 0 R >> << /Type /Pages /Count 0 >>", 0},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			if got := pdfPages([]byte(tt.pdf)); got != tt.want {
				t.Errorf("pdfPages: got %d, want %d", got, tt.want)
			}
		})
	}
}

// halfRow is a white 100×100 image with 50 black pixels: 0.5 % ink, under
// minInk.
func halfRow() image.Image {
	img := image.NewRGBA(image.Rect(0, 0, 100, 100))
	for y := range 100 {
		for x := range 100 {
			c := color.RGBA{255, 255, 255, 255}
			if y == 0 && x < 50 {
				c = color.RGBA{0, 0, 0, 255}
			}
			img.Set(x, y, c)
		}
	}
	return img
}

// asNRGBA and as64 copy img into an NRGBA and an RGBA64 image.
func asNRGBA(img image.Image) image.Image {
	m := image.NewNRGBA(img.Bounds())
	draw.Draw(m, m.Bounds(), img, img.Bounds().Min, draw.Src)
	return m
}

func as64(img image.Image) image.Image {
	m := image.NewRGBA64(img.Bounds())
	draw.Draw(m, m.Bounds(), img, img.Bounds().Min, draw.Src)
	return m
}
