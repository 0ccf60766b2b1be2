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
	padded []uint16 // a source row after 2 repeats of its first pixel, and repeats of its last to 2·nw+4 pixels
}

func newPairSmoother(p *plane, lo, hi int, src rowSource) *pairSmoother {
	nw := (p.w + 1) / 2
	return &pairSmoother{p: p, src: src, lo: lo, hi: hi, nw: nw,
		ring: make([]uint64, 5*nw), padded: make([]uint16, 2*nw+4)}
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
	w, pad := b.p.w, b.padded
	b.src(src, pad[2:2+w])
	pad[0], pad[1] = pad[2], pad[2]
	for x := 2 + w; x < len(pad); x++ {
		pad[x] = pad[w+1]
	}
	pairsRow(b.slot(src), pad)
	if y != src {
		copy(b.slot(y), b.slot(src))
	}
}

// pairsRow smooths a padded row along x into lane pairs: output pair k
// is taps 1 4 6 4 1 over padded pixels 2k … 2k+4 (low lane) and 2k+1 …
// 2k+5 (high lane). With word j holding padded pixels 2j and 2j+1, those
// are words k, k+1, k+2 and the two words straddling them; each step packs
// one new word and keeps the two before it.
func pairsRow(dst []uint64, padded []uint16) {
	padded = padded[:2*len(dst)+4]
	a := uint64(padded[0]) | uint64(padded[1])<<32
	c := uint64(padded[2]) | uint64(padded[3])<<32
	for k := range dst {
		e := uint64(padded[2*k+4]) | uint64(padded[2*k+5])<<32
		b := a>>32 | c<<32
		d := c>>32 | e<<32
		s := a + e + (b+d)<<2 + c<<2 + c<<1
		dst[k] = (s + laneRound) >> 4 & laneMask
		a, c = c, e
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
