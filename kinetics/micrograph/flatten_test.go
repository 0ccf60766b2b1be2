package micrograph

import (
	"fmt"
	"image"
	"image/color"
	"math"
	"math/rand/v2"
	"testing"
)

// TestLogLevel: the lookup of ln(1 + v) gives bit for bit math.Log1p for
// every 16-bit level, the 8-bit levels scaled by 257 from the table and
// all others computed.
func TestLogLevel(t *testing.T) {
	t.Parallel()
	for v := range 1 << 16 {
		if got, want := logLevel(uint16(v)), math.Log1p(float64(v)); math.Float64bits(got) != math.Float64bits(want) {
			t.Fatalf("level %d: got %v, want %v", v, got, want)
		}
	}
}

// TestSampleLogLuma: the samples read pixel by pixel are ln(1 + level)
// of the same pixels in whole rows converted by convertRow, at the cell
// centres, row by row, for the types read directly (8-bit gray, the luma
// plane of 8 and 16 bits), those read through convertRow (16-bit gray,
// RGBA, a palette through the colour model) and sub-images of them, down
// to one pixel and to sizes below the grid.
func TestSampleLogLuma(t *testing.T) {
	t.Parallel()
	for _, wh := range [][2]int{{1, 1}, {5, 3}, {61, 23}, {193, 200}, {500, 391}} {
		w, h := wh[0], wh[1]
		ds, _ := separated(w, h, 3, 2, 17, true)
		s := scene{w: w, h: h, domains: ds, bare: 150, contrast: 0.75, gradient: 0.5, texture: 0.04, noise: 4, seed: 18}
		g8, _ := s.gray8()
		g16, _ := s.gray16()
		rgba, _ := s.rgba()
		l8, l16 := newLumaImage(w, h, 8), newLumaImage(w, h, 16)
		copy(l8.pix, toPlane(g8, nil).pix)
		copy(l16.pix, toPlane(g16, nil).pix)
		pal := image.NewPaletted(g8.Rect, color.Palette{color.Black, color.White, color.RGBA{200, 100, 50, 255}})
		for i := range pal.Pix {
			pal.Pix[i] = uint8(i % 3)
		}
		sub := image.Rect(w/3, h/4, w, h)
		imgs := map[string]image.Image{
			"gray8": g8, "luma8": l8, "luma16": l16, "gray16": g16, "rgba": rgba, "paletted": pal,
			"gray8 sub": g8.SubImage(sub), "luma8 sub": l8.SubImage(sub), "luma16 sub": l16.SubImage(sub),
			"gray16 sub": g16.SubImage(sub), "rgba sub": rgba.SubImage(sub),
		}
		for name, img := range imgs {
			t.Run(fmt.Sprintf("%s/%d×%d", name, w, h), func(t *testing.T) {
				xs, ys, zs := sampleLogLuma(img)
				wantXs, wantYs, wantZs := sampleWholeRows(img)
				if !sameFloats(xs, wantXs) || !sameFloats(ys, wantYs) {
					t.Fatalf("grid: got %v × %v, want %v × %v", xs, ys, wantXs, wantYs)
				}
				if !sameFloats(zs, wantZs) {
					t.Fatalf("samples differ from those of the converted rows")
				}
			})
		}
	}
}

// sampleWholeRows is the sampling done on whole rows converted by
// convertRow.
func sampleWholeRows(img image.Image) (xs, ys, zs []float64) {
	b := img.Bounds()
	w, h := b.Dx(), b.Dy()
	stepX, stepY := max(1, w/fitGrid), max(1, h/fitGrid)
	row := make([]uint16, w)
	for x := stepX / 2; x < w; x += stepX {
		xs = append(xs, float64(x))
	}
	for y := stepY / 2; y < h; y += stepY {
		ys = append(ys, float64(y))
		convertRow(img, b.Min.X, b.Min.Y+y, row)
		for x := stepX / 2; x < w; x += stepX {
			zs = append(zs, math.Log1p(float64(row[x])))
		}
	}
	return xs, ys, zs
}

// sameFloats reports whether a and b hold the same float64 values bit for
// bit.
func sameFloats(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

// TestGridDesign: the design matrix of a grid, from the powers of each
// column and row, holds bit for bit the monomials basis gives at each
// point, row by row, for every degree.
func TestGridDesign(t *testing.T) {
	t.Parallel()
	xs, ys := []float64{0, 3, 10, 57, 99}, []float64{1, 2, 40, 79}
	for deg := 1; deg <= MaxDegree; deg++ {
		bg := &background{deg: deg, scaleU: 2.0 / 99, scaleV: 2.0 / 79}
		d := bg.gridDesign(xs, ys)
		nt := numTerms(deg)
		if d.nt != nt || len(d.a) != len(xs)*len(ys)*nt {
			t.Fatalf("degree %d: %d terms, %d values", deg, d.nt, len(d.a))
		}
		want := make([]float64, nt)
		i := 0
		for _, y := range ys {
			for _, x := range xs {
				u, v := bg.uv(x, y)
				basis(deg, u, v, want)
				if !sameFloats(d.row(i), want) {
					t.Errorf("degree %d, point (%g, %g): got %v, want %v", deg, x, y, d.row(i), want)
				}
				i++
			}
		}
	}
}

// TestSplitResiduals: the split from the bins computed once gives the
// classes (and their count) of the split that computes each residual's
// bin twice, extremes from one pass, on residuals random, in few values,
// with ±0, NaN, equal and of odd and small lengths.
func TestSplitResiduals(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(5, 6))
	cases := map[string][]float64{
		"empty":     {},
		"one":       {1.5},
		"equal":     {2, 2, 2, 2, 2},
		"two":       {0, 1},
		"zeros":     {0, math.Copysign(0, -1), 0, 1, 1, 1, math.Copysign(0, -1)},
		"nan":       {1, 2, math.NaN(), 3, 4},
		"nan first": {math.NaN(), 1, 2, 3},
		"nan last":  {1, 2, 3, 4, 5, math.NaN()},
	}
	for _, n := range []int{3, 7, 256, 1001, 4096} {
		normal, few := make([]float64, n), make([]float64, n)
		for i := range normal {
			normal[i] = r.NormFloat64() * 0.1
			if r.IntN(5) == 0 {
				normal[i] += 0.3 // a second class
			}
			few[i] = float64(r.IntN(3))
		}
		cases[fmt.Sprintf("two classes/%d", n)] = normal
		cases[fmt.Sprintf("three values/%d", n)] = few
	}
	for name, resid := range cases {
		t.Run(name, func(t *testing.T) {
			want := make([]bool, len(resid))
			wantOnes := splitTwice(resid, want)
			got := make([]bool, len(resid))
			for i := range got {
				got[i] = i%2 == 0 // stale classes of a previous round
			}
			ones := splitResiduals(resid, got, make([]uint8, len(resid)))
			for i := range got {
				if got[i] != want[i] {
					t.Fatalf("residual %d (%g): got %v, want %v", i, resid[i], got[i], want[i])
				}
			}
			if ones != wantOnes {
				t.Fatalf("got %d above, want %d", ones, wantOnes)
			}
		})
	}
}

// splitTwice is the split computed plainly: extremes in one pass, each
// residual's bin computed for the histogram and again for its class. It
// returns how many residuals lie above the threshold.
func splitTwice(resid []float64, m []bool) int {
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, r := range resid {
		lo, hi = min(lo, r), max(hi, r)
	}
	if !(hi > lo) {
		clear(m)
		return 0
	}
	var hist [256]uint64
	scale := 255 / (hi - lo)
	for _, r := range resid {
		hist[int((r-lo)*scale)]++
	}
	th, ok := Otsu(hist[:])
	ones := 0
	for i, r := range resid {
		m[i] = ok && int((r-lo)*scale) > th
		if m[i] {
			ones++
		}
	}
	return ones
}
