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
	shift := uint(2 * r)
	half := uint32(1) << (shift - 1)
	// Every band needs r original rows beyond each of its ends, which the
	// neighbouring band overwrites: copy them out before any band starts.
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
	parallelBands(p.h, func(i, lo, hi int) {
		orig := func(y int) []uint16 {
			switch {
			case y < lo:
				j := y - (lo - r)
				return halo[i][j*p.w : (j+1)*p.w]
			case y >= hi:
				j := r + (y - hi)
				return halo[i][j*p.w : (j+1)*p.w]
			}
			return p.row(y)
		}
		n := 2*r + 1
		ring := make([]uint16, n*p.w)
		buf := make([]uint16, p.w+2*r)
		slot := func(y int) []uint16 { j := (y - lo + r) % n; return ring[j*p.w : (j+1)*p.w] }
		// horiz smooths original row y along x into its ring slot.
		horiz := func(y int) {
			row := orig(y)
			copy(buf[r:], row)
			for j := range r {
				buf[j] = row[0]
				buf[r+p.w+j] = row[p.w-1]
			}
			dst := slot(y)
			if r == 2 {
				for x := range dst {
					b := buf[x : x+5 : x+5]
					s := uint32(b[0]) + uint32(b[4]) + 4*(uint32(b[1])+uint32(b[3])) + 6*uint32(b[2])
					dst[x] = uint16((s + 8) >> 4)
				}
				return
			}
			for x := range dst {
				var s uint32
				win := buf[x : x+2*r+1]
				for j, c := range k {
					s += c * uint32(win[j])
				}
				dst[x] = uint16((s + half) >> shift)
			}
		}
		// Rows lo−r … lo+r−1, clamped at the image edges, fill the ring.
		clampY := func(y int) int { return min(max(y, 0), p.h-1) }
		for y := lo - r; y < lo+r; y++ {
			horizInto(horiz, slot, y, clampY(y))
		}
		acc := make([]uint32, p.w)
		for y := lo; y < hi; y++ {
			horizInto(horiz, slot, y+r, clampY(y+r))
			dst := p.row(y)
			if r == 2 {
				a, b, c, d, e := slot(y-2), slot(y-1), slot(y), slot(y+1), slot(y+2)
				a, b, c, d, e = a[:len(dst)], b[:len(dst)], c[:len(dst)], d[:len(dst)], e[:len(dst)]
				for x := range dst {
					s := uint32(a[x]) + uint32(e[x]) + 4*(uint32(b[x])+uint32(d[x])) + 6*uint32(c[x])
					dst[x] = uint16((s + 8) >> 4)
				}
				continue
			}
			clear(acc)
			for j, c := range k {
				src := slot(y + j - r)
				for x, v := range src {
					acc[x] += c * uint32(v)
				}
			}
			for x, s := range acc {
				dst[x] = uint16((s + half) >> shift)
			}
		}
	})
}

// horizInto smooths source row src into the ring slot of virtual row y
// (y may lie beyond the image, where src is the clamped edge row).
func horizInto(horiz func(int), slot func(int) []uint16, y, src int) {
	if y == src {
		horiz(y)
		return
	}
	horiz(src)
	copy(slot(y), slot(src))
}
