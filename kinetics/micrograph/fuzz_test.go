package micrograph

import (
	"bytes"
	"image"
	"testing"

	"github.com/foilrun/foilrun/kinetics/micrograph/synth"
)

// FuzzDecode: Decode and Analyze never panic on any bytes; a decoded image
// has the size its header announced. Seeds: a small valid PNG, its
// truncations, the gigapixel header and text.
func FuzzDecode(f *testing.F) {
	s, _ := baseSynth(0.75, 61)
	s.w, s.h = 48, 40
	s.domains = []synth.Hexagon{{X: 20, Y: 20, R: 10}}
	img, _ := s.gray8()
	good := encodePNG(f, img)
	f.Add(good)
	f.Add(good[:len(good)/2])
	f.Add(good[:40])
	f.Add(pngHeader(40000, 25000))
	f.Add(pngHeader(64, 64))
	f.Add([]byte("GIF89a"))
	f.Add([]byte("II*\x00\x08\x00\x00\x00"))
	f.Add([]byte("\xff\xd8\xff\xe0"))
	f.Fuzz(func(t *testing.T, data []byte) {
		img, info, err := Decode(bytes.NewReader(data), Limits{MaxPixels: 1 << 20})
		if err != nil {
			return
		}
		if b := img.Bounds(); b.Dx() != info.Width || b.Dy() != info.Height {
			t.Fatalf("bounds %v, info %d×%d", b, info.Width, info.Height)
		}
		res, err := Analyze(img, Settings{PixelSize: 1e-6, BareRegion: image.Rect(0, 0, 4, 4)})
		if err == nil && (res.Coverage < 0 || res.Coverage > 1) {
			t.Fatalf("coverage %g outside [0, 1]", res.Coverage)
		}
	})
}
