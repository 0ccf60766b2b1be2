package micrograph

// Smoothing uses the binomial kernel of 2r+1 taps,
//
//	k_j = C(2r, j) / 2^(2r),   j = 0 … 2r,
//
// applied along rows and then along columns, with edge pixels repeated.
// It is the discrete counterpart of a Gaussian with σ = √(r/2) pixels
// (r = 2, the default: taps 1 4 6 4 1, σ = 1 px). Both directions run in
// one sweep down the image in integer arithmetic: each source row is
// smoothed along x into a ring of 2r+1 rows, and the output row is the
// column combination of the ring.
//
// The sweep is the one pass of the analysis over the pixels before the
// threshold (prepare, pass.go): the source rows are made on the fly (luma,
// divided by the illumination), and each output row is counted into the
// histogram as it is written. The rows are split into bands, one per
// worker; a band makes the r source rows beyond each of its ends itself,
// so bands share nothing and the result does not depend on their number.

const maxSmoothRadius = 8 // 17 taps; 65535·2^16 still fits in uint32

func binomial(r int) []uint32 {
	n := 2 * r
	k := make([]uint32, n+1)
	k[0] = 1
	for j := 1; j <= n; j++ {
		k[j] = k[j-1] * uint32(n-j+1) / uint32(j)
	}
	return k
}

// smooth blurs p in place with the binomial kernel of radius r (1..8),
// on workers bands.
func smooth(p *plane, r, workers int) {
	if r <= 0 {
		return
	}
	src := &plane{w: p.w, h: p.h, pix: append([]uint16(nil), p.pix...)}
	parallelBands(p.h, workers, func(_, lo, hi int) {
		newSmoother(p, r, lo, hi, func(y int, dst []uint16) { copy(dst, src.row(y)) }).run(nil)
	})
}

// rowSource writes source row y (0 ≤ y < h) into dst.
type rowSource func(y int, dst []uint16)

// bandSmoother smooths rows lo … hi−1 of the source into a plane: each
// source row is smoothed along x into a ring of 2r+1 rows, and each
// output row is the column combination of the ring.
type bandSmoother struct {
	p      *plane // the output
	src    rowSource
	k      []uint32 // binomial taps, 2r+1 of them
	r      int
	shift  uint   // 2r: the taps sum to 2^shift
	half   uint32 // 2^(shift−1), for rounding half up
	lo, hi int
	ring   []uint16 // 2r+1 rows smoothed along x, slot (y−lo+r) mod (2r+1)
	buf    []uint16 // one source row with r edge pixels repeated at each end
	acc    []uint32 // column sums of one output row
}

// smoother smooths a band of rows into a plane, counting the output
// levels in hist when it is not nil.
type smoother interface {
	run(hist *[1 << 16]uint32)
}

// newSmoother returns the smoother of band lo … hi−1 of p, of radius r,
// reading the source rows from src: for r = 2 the one on lane pairs
// (smooth5.go).
func newSmoother(p *plane, r, lo, hi int, src rowSource) smoother {
	if r == 2 {
		return newPairSmoother(p, lo, hi, src)
	}
	return newBandSmoother(p, r, lo, hi, src)
}

// newBandSmoother returns the smoother of band lo … hi−1 of p, of radius
// r, reading the source rows from src, its ring and scratch rows
// allocated.
func newBandSmoother(p *plane, r, lo, hi int, src rowSource) *bandSmoother {
	shift := uint(2 * r)
	return &bandSmoother{p: p, src: src, k: binomial(r), r: r, shift: shift, half: uint32(1) << (shift - 1), lo: lo, hi: hi,
		ring: make([]uint16, (2*r+1)*p.w), buf: make([]uint16, p.w+2*r), acc: make([]uint32, p.w)}
}

// run fills the ring with rows lo−r … lo+r−1 (clamped at the image edges),
// then moves down the band, adding one row below and writing one out.
// When hist is not nil every output level is counted in it.
func (b *bandSmoother) run(hist *[1 << 16]uint32) {
	for y := b.lo - b.r; y < b.lo+b.r; y++ {
		b.horizInto(y)
	}
	for y := b.lo; y < b.hi; y++ {
		b.horizInto(y + b.r)
		b.vert(y, hist)
	}
}

// slot returns the ring row that holds row y smoothed along x.
func (b *bandSmoother) slot(y int) []uint16 {
	w := b.p.w
	j := (y - b.lo + b.r) % (2*b.r + 1)
	return b.ring[j*w : (j+1)*w]
}

// horizInto smooths row y along x into its ring slot; y may lie beyond the
// image, where the clamped edge row is smoothed and copied into y's slot.
func (b *bandSmoother) horizInto(y int) {
	src := min(max(y, 0), b.p.h-1)
	b.horiz(src)
	if y != src {
		copy(b.slot(y), b.slot(src))
	}
}

// horiz smooths source row y along x into its ring slot, repeating the
// edge pixels.
func (b *bandSmoother) horiz(y int) {
	buf, r, w := b.buf, b.r, b.p.w
	row := buf[r : r+w]
	b.src(y, row)
	for j := range r {
		buf[j] = row[0]
		buf[r+w+j] = row[w-1]
	}
	dst := b.slot(y)
	for x := range dst {
		var s uint32
		win := buf[x : x+2*r+1]
		for j, c := range b.k {
			s += c * uint32(win[j])
		}
		dst[x] = uint16((s + b.half) >> b.shift)
	}
}

// vert writes output row y: the ring rows y−r … y+r combined with the
// taps, counted into hist when it is not nil.
func (b *bandSmoother) vert(y int, hist *[1 << 16]uint32) {
	dst := b.p.row(y)
	acc := b.acc
	clear(acc)
	for j, c := range b.k {
		src := b.slot(y + j - b.r)
		for x, v := range src {
			acc[x] += c * uint32(v)
		}
	}
	for x, s := range acc {
		dst[x] = uint16((s + b.half) >> b.shift)
	}
	if hist != nil {
		for _, v := range dst {
			hist[v]++
		}
	}
}
