package micrograph

import (
	"image"

	"github.com/foilrun/foilrun/kinetics/micrograph/internal/hugemem"
)

// prepare makes the working plane of img in one pass, on workers bands of
// rows at once: each row is converted to 16-bit luma (convertRow), divided
// by the illumination bg when bg is not nil, smoothed with radius r (not
// at all when r is 0; see smooth.go), written once and counted into the
// histogram (65536 bins). The result is the same for any number of
// workers: a band makes the rows it needs beyond its ends itself, and the
// counts of the bands are merged exactly.
func prepare(img image.Image, bg *background, r, workers int) (*plane, []uint64) {
	return pass(img, bg, r, workers, true)
}

// pass is prepare, without the histogram (nil) unless count is set.
func pass(img image.Image, bg *background, r, workers int, count bool) (*plane, []uint64) {
	b := img.Bounds()
	p := &plane{w: b.Dx(), h: b.Dy(), pix: hugemem.Slice[uint16](b.Dx() * b.Dy())}
	workers = max(1, min(workers, p.h))
	hists := make([]*[1 << 16]uint32, workers) // at most 2^28 pixels (DefaultMaxPixels) a band
	gray, _ := img.(*image.Gray)
	parallelBands(p.h, workers, func(i, lo, hi int) {
		var hist *[1 << 16]uint32
		if count {
			hist = new([1 << 16]uint32)
		}
		var knots []float32
		if bg != nil {
			knots = make([]float32, bg.nkx)
		}
		src := func(y int, dst []uint16) {
			switch {
			case bg == nil:
				convertRow(img, b.Min.X, b.Min.Y+y, dst)
			case gray != nil: // converted as it is flattened
				applyRow(bg, y, gray.Pix[gray.PixOffset(b.Min.X, b.Min.Y+y):], 257, dst, knots)
			default:
				convertRow(img, b.Min.X, b.Min.Y+y, dst)
				applyRow(bg, y, dst, 1, dst, knots)
			}
		}
		if r > 0 {
			newSmoother(p, r, lo, hi, src).run(hist)
		} else {
			for y := lo; y < hi; y++ {
				row := p.row(y)
				src(y, row)
				if hist != nil {
					for _, v := range row {
						hist[v]++
					}
				}
			}
		}
		hists[i] = hist
	})
	if !count {
		return p, nil
	}
	out := make([]uint64, 1<<16)
	for _, h := range hists {
		for v, c := range h {
			out[v] += uint64(c)
		}
	}
	return p, out
}

// uniform reports whether every pixel of img has the same 16-bit luma,
// and which; it stops at the first pixel that differs from the first.
func uniform(img image.Image) (uint16, bool) {
	b := img.Bounds()
	row := make([]uint16, b.Dx())
	convertRow(img, b.Min.X, b.Min.Y, row)
	first := row[0]
	for y := b.Min.Y; y < b.Max.Y; y++ {
		convertRow(img, b.Min.X, y, row)
		for _, v := range row {
			if v != first {
				return 0, false
			}
		}
	}
	return first, true
}
