package micrograph

import (
	"fmt"
	"image"
	"slices"
	"testing"
)

// TestPrepareWorkers: the one pass (prepare) on 1 to 5 bands gives exactly
// the plane and histogram of the steps done one after the other on one
// goroutine: every row converted and divided by the illumination, then
// smoothed (smooth, checked against scipy in TestSmoothAgainstScipy), then
// counted. Images of three types (8-bit gray, converted as flattened; 16-bit
// gray; RGBA) and radii 0 to 3 take every path; 23 rows over 5 bands give
// bands shorter than the kernel.
func TestPrepareWorkers(t *testing.T) {
	t.Parallel()
	ds, _ := separated(61, 23, 3, 2, 41, true)
	s := scene{w: 61, h: 23, domains: ds, bare: 150, contrast: 0.75, gradient: 0.5, texture: 0.04, noise: 4, seed: 42}
	g8, _ := s.gray8()
	g16, _ := s.gray16()
	rgba, _ := s.rgba()
	for name, img := range map[string]image.Image{"gray8": g8, "gray16": g16, "rgba": rgba} {
		bg := fitBackground(img, DefaultDegree)
		if bg == nil {
			t.Fatalf("%s: the illumination fit failed", name)
		}
		for _, withBg := range []*background{nil, bg} {
			for r := range 4 {
				want, wantHist := stepByStep(img, withBg, r)
				for workers := 1; workers <= 5; workers++ {
					t.Run(fmt.Sprintf("%s/flattened=%v/r=%d/workers=%d", name, withBg != nil, r, workers), func(t *testing.T) {
						p, hist := prepare(img, withBg, r, workers)
						if i := firstDifference(p.pix, want); i >= 0 {
							t.Fatalf("pixel (%d, %d): got %d, want %d", i%p.w, i/p.w, p.pix[i], want[i])
						}
						if !slices.Equal(hist, wantHist) {
							t.Fatalf("histogram differs from the counts of the plane")
						}
					})
				}
			}
		}
	}
}

// stepByStep is the pass of prepare done in separate steps on one
// goroutine.
func stepByStep(img image.Image, bg *background, r int) ([]uint16, []uint64) {
	b := img.Bounds()
	p := &plane{w: b.Dx(), h: b.Dy(), pix: make([]uint16, b.Dx()*b.Dy())}
	for y := range p.h {
		row := p.row(y)
		convertRow(img, b.Min.X, b.Min.Y+y, row)
		if bg != nil {
			knots := make([]float32, bg.nkx)
			applyRow(bg, y, row, 1, row, knots)
		}
	}
	smooth(p, r, 1)
	hist := make([]uint64, 1<<16)
	for _, v := range p.pix {
		hist[v]++
	}
	return p.pix, hist
}
