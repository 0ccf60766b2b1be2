package micrograph

import "image"

// prepared is what the one pass over the pixels before the threshold
// gives: the working plane, its histogram and the extremes of the raw
// luma.
type prepared struct {
	p      *plane
	hist   []uint64 // counts of p's levels, 65536 bins
	lo, hi uint16   // extremes of the luma before flattening
}

// prepare makes the working plane of img in one pass, on workers bands of
// rows at once: each row is converted to 16-bit luma (convertRow), divided
// by the illumination bg when bg is not nil, smoothed with radius r (not
// at all when r is 0; see smooth.go), written once and counted into the
// histogram. The result is the same for any number of workers: a band
// makes the rows it needs beyond its ends itself, and the counts and
// extremes of the bands are merged exactly.
func prepare(img image.Image, bg *background, r, workers int) prepared {
	b := img.Bounds()
	p := &plane{w: b.Dx(), h: b.Dy(), pix: make([]uint16, b.Dx()*b.Dy())}
	workers = max(1, min(workers, p.h))
	type band struct {
		hist   *[1 << 16]uint32 // at most 2^28 pixels (DefaultMaxPixels) a band
		lo, hi uint16
	}
	bands := make([]band, workers)
	parallelBands(p.h, workers, func(i, lo, hi int) {
		bd := band{hist: new([1 << 16]uint32), lo: 65535}
		var knots []float32
		if bg != nil {
			knots = make([]float32, bg.nkx)
		}
		src := func(y int, dst []uint16) {
			convertRow(img, b.Min.X, b.Min.Y+y, dst)
			if y >= lo && y < hi {
				bd.lo, bd.hi = extremes(dst, bd.lo, bd.hi)
			}
			if bg != nil {
				bg.applyRow(y, dst, knots)
			}
		}
		if r > 0 {
			newBandSmoother(p, r, lo, hi, src).run(bd.hist)
		} else {
			for y := lo; y < hi; y++ {
				row := p.row(y)
				src(y, row)
				for _, v := range row {
					bd.hist[v]++
				}
			}
		}
		bands[i] = bd
	})
	out := prepared{p: p, hist: make([]uint64, 1<<16), lo: 65535}
	for _, bd := range bands {
		for v, c := range bd.hist {
			out.hist[v] += uint64(c)
		}
		out.lo, out.hi = min(out.lo, bd.lo), max(out.hi, bd.hi)
	}
	return out
}

// extremes widens lo … hi to the levels of row.
func extremes(row []uint16, lo, hi uint16) (uint16, uint16) {
	for _, v := range row {
		lo, hi = min(lo, v), max(hi, v)
	}
	return lo, hi
}
