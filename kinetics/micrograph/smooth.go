package micrograph

// Smoothing uses the binomial kernel of 2r+1 taps,
//
//	k_j = C(2r, j) / 2^(2r),   j = 0 … 2r,
//
// applied along rows and then along columns, with edge pixels repeated.
// It is the discrete counterpart of a Gaussian with σ = √(r/2) pixels
// (r = 2, the default: taps 1 4 6 4 1, σ = 1 px). Both directions run in
// one sweep down the image in integer arithmetic: each row is smoothed
// along x into a ring of 2r+1 rows, and the output row is the column
// combination of the ring, written back in place.

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

// smooth blurs p in place with the binomial kernel of radius r (1..8).
func smooth(p *plane, r int) {
	if r <= 0 {
		return
	}
	k := binomial(r)
	halo := haloRows(p, r)
	parallelBands(p.h, func(i, lo, hi int) {
		newBandSmoother(p, k, r, lo, hi, halo[i]).run()
	})
}

// haloRows copies out, for each band of parallelBands, the r original rows
// beyond each of its ends (clamped to the image), which the neighbouring
// band overwrites: band i's rows lo−r … lo−1 and then hi … hi+r−1, each p.w
// wide. They must be taken before any band starts.
func haloRows(p *plane, r int) [][]uint16 {
	workers := numWorkers(p.h)
	halo := make([][]uint16, workers)
	for i := range workers {
		lo, hi := bandOf(p.h, i, workers)
		var h []uint16
		for y := lo - r; y < hi+r; y++ {
			if y < lo || y >= hi {
				h = append(h, p.row(min(max(y, 0), p.h-1))...)
			}
		}
		halo[i] = h
	}
	return halo
}

// bandSmoother smooths rows lo … hi−1 of a plane: each original row is
// smoothed along x into a ring of 2r+1 rows, and each output row is the
// column combination of the ring, written back in place.
type bandSmoother struct {
	p      *plane
	k      []uint32 // binomial taps, 2r+1 of them
	r      int
	shift  uint   // 2r: the taps sum to 2^shift
	half   uint32 // 2^(shift−1), for rounding half up
	lo, hi int
	halo   []uint16 // original rows beyond the band (haloRows)
	ring   []uint16 // 2r+1 rows smoothed along x, slot (y−lo+r) mod (2r+1)
	buf    []uint16 // one original row with r edge pixels repeated at each end
	acc    []uint32 // column sums of one output row
}

// newBandSmoother returns the smoother of band lo … hi−1 of p with taps k
// of radius r and the band's halo rows, its ring and scratch rows allocated.
func newBandSmoother(p *plane, k []uint32, r, lo, hi int, halo []uint16) *bandSmoother {
	shift := uint(2 * r)
	return &bandSmoother{p: p, k: k, r: r, shift: shift, half: uint32(1) << (shift - 1), lo: lo, hi: hi, halo: halo,
		ring: make([]uint16, (2*r+1)*p.w), buf: make([]uint16, p.w+2*r), acc: make([]uint32, p.w)}
}

// run fills the ring with rows lo−r … lo+r−1 (clamped at the image edges),
// then moves down the band, adding one row below and writing one out.
func (b *bandSmoother) run() {
	for y := b.lo - b.r; y < b.lo+b.r; y++ {
		b.horizInto(y)
	}
	for y := b.lo; y < b.hi; y++ {
		b.horizInto(y + b.r)
		b.vert(y)
	}
}

// orig returns original row y, from the halo when it lies outside the band.
func (b *bandSmoother) orig(y int) []uint16 {
	w := b.p.w
	switch {
	case y < b.lo:
		j := y - (b.lo - b.r)
		return b.halo[j*w : (j+1)*w]
	case y >= b.hi:
		j := b.r + (y - b.hi)
		return b.halo[j*w : (j+1)*w]
	}
	return b.p.row(y)
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

// horiz smooths original row y along x into its ring slot, repeating the
// edge pixels.
func (b *bandSmoother) horiz(y int) {
	row, buf, r, w := b.orig(y), b.buf, b.r, b.p.w
	copy(buf[r:], row)
	for j := range r {
		buf[j] = row[0]
		buf[r+w+j] = row[w-1]
	}
	dst := b.slot(y)
	if r == 2 {
		taps5Row(dst, buf)
		return
	}
	for x := range dst {
		var s uint32
		win := buf[x : x+2*r+1]
		for j, c := range b.k {
			s += c * uint32(win[j])
		}
		dst[x] = uint16((s + b.half) >> b.shift)
	}
}

// taps5Row is horiz for r = 2, the default, unrolled: taps 1 4 6 4 1 over
// buf, which holds len(dst)+4 pixels.
func taps5Row(dst, buf []uint16) {
	for x := range dst {
		b := buf[x : x+5 : x+5]
		s := uint32(b[0]) + uint32(b[4]) + 4*(uint32(b[1])+uint32(b[3])) + 6*uint32(b[2])
		dst[x] = uint16((s + 8) >> 4)
	}
}

// vert writes output row y: the ring rows y−r … y+r combined with the taps.
func (b *bandSmoother) vert(y int) {
	dst := b.p.row(y)
	if b.r == 2 {
		taps5Col(dst, b.slot(y-2), b.slot(y-1), b.slot(y), b.slot(y+1), b.slot(y+2))
		return
	}
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
}

// taps5Col is vert for r = 2, unrolled: taps 1 4 6 4 1 over rows a … e.
func taps5Col(dst, a, b, c, d, e []uint16) {
	a, b, c, d, e = a[:len(dst)], b[:len(dst)], c[:len(dst)], d[:len(dst)], e[:len(dst)]
	for x := range dst {
		s := uint32(a[x]) + uint32(e[x]) + 4*(uint32(b[x])+uint32(d[x])) + 6*uint32(c[x])
		dst[x] = uint16((s + 8) >> 4)
	}
}
