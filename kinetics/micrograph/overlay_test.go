package micrograph

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"testing"
)

// TestOverlay: a dark square inside the field is outlined in
// InteriorColor on its boundary pixels only; a square cut by the right
// border in EdgeColor; copper pixels keep their gray.
func TestOverlay(t *testing.T) {
	t.Parallel()
	img := image.NewGray(image.Rect(0, 0, 64, 48))
	for i := range img.Pix {
		img.Pix[i] = 200
	}
	for y := 10; y < 20; y++ {
		for x := 10; x < 20; x++ {
			img.Pix[y*64+x] = 40
		}
		for x := 50; x < 64; x++ {
			img.Pix[y*64+x] = 40
		}
	}
	res, err := Analyze(img, Settings{PixelSize: testPixel, SmoothRadius: -1, BackgroundDegree: -1, Polarity: DomainsDarker})
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := res.WriteOverlay(&buf, img); err != nil {
		t.Fatal(err)
	}
	out, err := png.Decode(&buf)
	if err != nil {
		t.Fatal(err)
	}
	rgba := func(c color.Color) color.RGBA {
		r, g, b, a := c.RGBA()
		return color.RGBA{uint8(r >> 8), uint8(g >> 8), uint8(b >> 8), uint8(a >> 8)}
	}
	for _, c := range []struct {
		name string
		x, y int
		want color.RGBA
	}{
		{"interior corner", 10, 10, InteriorColor},
		{"interior edge", 15, 19, InteriorColor},
		{"inside interior domain", 15, 15, color.RGBA{40, 40, 40, 255}},
		{"copper", 30, 30, color.RGBA{200, 200, 200, 255}},
		{"edge domain left side", 50, 15, EdgeColor},
		{"edge domain on border", 63, 15, EdgeColor},
		{"inside edge domain", 55, 15, color.RGBA{40, 40, 40, 255}},
	} {
		if got := rgba(out.At(c.x, c.y)); got != c.want {
			t.Errorf("%s (%d,%d): got %v want %v", c.name, c.x, c.y, got, c.want)
		}
	}
	if _, err := res.Overlay(image.NewGray(image.Rect(0, 0, 10, 10))); err == nil {
		t.Errorf("overlay on a different-size image: got nil error")
	}
}
