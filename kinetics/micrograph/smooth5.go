package micrograph

// The default radius, r = 2 (taps 1 4 6 4 1), has its own smoother that
// works on two pixels at a time: a row is held as 64-bit words of two
// 32-bit lanes, pixel 2k in the low lane and 2k+1 in the high. A weighted
// sum of five levels is at most 16·65535 < 2^32, so the five taps are
// added lane by lane with ordinary 64-bit additions and shifts and no lane
// carries into the other; adding 8 to both lanes, shifting right by 4 and
// masking each lane to 16 bits is the per-pixel (s + 8) >> 4. The results
// are those of taps5Row and taps5Col exactly.
//
// References:
//   - H. S. Warren, Jr., "Hacker's Delight", 2nd ed., Addison-Wesley, 2012,
//     chapter 2 (arithmetic on fields packed in a word).

const (
	laneMask  = 0x0000ffff0000ffff // the 16-bit result in each lane
	laneRound = 8 | 8<<32          // 2^(4−1) in each lane: rounding half up
)

// pairSmoother is bandSmoother for r = 2 on lane pairs.
type pairSmoother struct {
	p      *plane
	src    rowSource
	lo, hi int
	nw     int      // words a row: ⌈w/2⌉
	ring   []uint64 // 5 rows smoothed along x, slot (y−lo+2) mod 5
	row    []uint16 // one source row
	padded []uint64 // the row with 2 edge pixels repeated at each end, nw+2 words
}

func newPairSmoother(p *plane, lo, hi int, src rowSource) *pairSmoother {
	nw := (p.w + 1) / 2
	return &pairSmoother{p: p, src: src, lo: lo, hi: hi, nw: nw,
		ring: make([]uint64, 5*nw), row: make([]uint16, p.w), padded: make([]uint64, nw+2)}
}

// run is bandSmoother.run.
func (b *pairSmoother) run(hist *[1 << 16]uint32) {
	if hist == nil {
		hist = new([1 << 16]uint32) // counted and dropped
	}
	for y := b.lo - 2; y < b.lo+2; y++ {
		b.horizInto(y)
	}
	for y := b.lo; y < b.hi; y++ {
		b.horizInto(y + 2)
		pairsCol(b.p.row(y), b.slot(y-2), b.slot(y-1), b.slot(y), b.slot(y+1), b.slot(y+2), hist)
	}
}

func (b *pairSmoother) slot(y int) []uint64 {
	j := (y - b.lo + 2) % 5
	return b.ring[j*b.nw : (j+1)*b.nw]
}

// horizInto is bandSmoother.horizInto.
func (b *pairSmoother) horizInto(y int) {
	src := min(max(y, 0), b.p.h-1)
	b.src(src, b.row)
	packPadded(b.padded, b.row)
	pairsRow(b.slot(src), b.padded)
	if y != src {
		copy(b.slot(y), b.slot(src))
	}
}

// packPadded packs row, with its first pixel repeated twice before it and
// its last repeated after it to the end, into lane pairs: word j holds the
// padded pixels 2j and 2j+1.
func packPadded(dst []uint64, row []uint16) {
	w := len(row)
	first, last := uint64(row[0]), uint64(row[w-1])
	dst[0] = first | first<<32
	j := 1
	for ; 2*j-1 < w; j++ { // padded pixels 2j, 2j+1 are row[2j−2], row[2j−1]
		dst[j] = uint64(row[2*j-2]) | uint64(row[2*j-1])<<32
	}
	for ; j < len(dst); j++ { // past the end (and the last pixel of an odd width): the last pixel
		dst[j] = last | last<<32
	}
}

// pairsRow smooths a padded packed row along x: output pair k is taps
// 1 4 6 4 1 over padded pixels 2k … 2k+4 (low lane) and 2k+1 … 2k+5 (high
// lane), which are words k, k+1, k+2 and the two words straddling them.
func pairsRow(dst, padded []uint64) {
	padded = padded[:len(dst)+2]
	for k := range dst {
		a, c, e := padded[k], padded[k+1], padded[k+2]
		b := a>>32 | c<<32
		d := c>>32 | e<<32
		s := a + e + (b+d)<<2 + c<<2 + c<<1
		dst[k] = (s + laneRound) >> 4 & laneMask
	}
}

// pairsCol writes an output row, the ring rows a … e combined with taps
// 1 4 6 4 1, and counts its levels in hist.
func pairsCol(dst []uint16, a, b, c, d, e []uint64, hist *[1 << 16]uint32) {
	n := len(dst) / 2
	if len(dst)%2 == 1 { // the last pixel, in the low lane of the last word
		s := a[n] + e[n] + (b[n]+d[n])<<2 + c[n]<<2 + c[n]<<1
		v := uint16((s + laneRound) >> 4)
		dst[2*n] = v
		hist[v]++
	}
	a, b, c, d, e = a[:n], b[:n], c[:n], d[:n], e[:n]
	for k := range a {
		s := a[k] + e[k] + (b[k]+d[k])<<2 + c[k]<<2 + c[k]<<1
		r := (s + laneRound) >> 4
		lo, hi := uint16(r), uint16(r>>32)
		dst[2*k], dst[2*k+1] = lo, hi
		hist[lo]++
		hist[hi]++
	}
}
