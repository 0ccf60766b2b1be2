package micrograph

import "math/bits"

// Connected domains are labelled on runs: maximal horizontal stretches of
// domain pixels in a row. Two runs in neighbouring rows belong to the same
// domain when they overlap or touch diagonally (8-connectivity), which for
// runs [a0, a1) and [b0, b1) is a0 ≤ b1 and b0 ≤ a1. Runs are joined with a
// union-find forest (path halving, union by index). Memory grows with the
// number of runs, not of pixels.
//
// References:
//
//	R. E. Tarjan, "Efficiency of a good but not linear set union
//	algorithm", J. ACM 22 (2), 215–225, 1975.

type run struct {
	y, x0, x1 int32 // row, first column, one past the last column
}

// runsOf extracts the runs of pixels for which the level is above t
// (brighter) or at most t (darker). rowStart[y] is the index of the first
// run of row y; rowStart[h] = len(runs).
func runsOf(p *plane, t uint16, brighter bool) (runs []run, rowStart []int32) {
	type band struct {
		lo   int
		runs []run
	}
	bands := make(chan band, 64)
	parallel(p.h, func(lo, hi int) {
		var rs []run
		for y := lo; y < hi; y++ {
			rs = rowRuns(rs, p.row(y), int32(y), t, brighter)
		}
		bands <- band{lo, rs}
	})
	close(bands)
	var all []band
	n := 0
	for b := range bands {
		all = append(all, b)
		n += len(b.runs)
	}
	// Bands cover disjoint row ranges; order them by first row.
	for i := 1; i < len(all); i++ {
		for j := i; j > 0 && all[j].lo < all[j-1].lo; j-- {
			all[j], all[j-1] = all[j-1], all[j]
		}
	}
	runs = make([]run, 0, n)
	for _, b := range all {
		runs = append(runs, b.runs...)
	}
	rowStart = make([]int32, p.h+1)
	i := 0
	for y := 0; y <= p.h; y++ {
		for i < len(runs) && int(runs[i].y) < y {
			i++
		}
		rowStart[y] = int32(i)
	}
	return runs, rowStart
}

func find(parent []int32, i int32) int32 {
	for parent[i] != i {
		parent[i] = parent[parent[i]]
		i = parent[i]
	}
	return i
}

func union(parent []int32, a, b int32) {
	ra, rb := find(parent, a), find(parent, b)
	if ra < rb {
		parent[rb] = ra
	} else if rb < ra {
		parent[ra] = rb
	}
}

// labelRuns returns, for every run, the index of its connected component
// (0 … n−1, numbered in order of each component's first run) and n.
func labelRuns(runs []run, rowStart []int32, h int) (label []int32, n int) {
	parent := make([]int32, len(runs))
	for i := range parent {
		parent[i] = int32(i)
	}
	for y := 1; y < h; y++ {
		a, aEnd := rowStart[y-1], rowStart[y]
		b, bEnd := rowStart[y], rowStart[y+1]
		for a < aEnd && b < bEnd {
			ra, rb := runs[a], runs[b]
			if ra.x0 <= rb.x1 && rb.x0 <= ra.x1 {
				union(parent, a, b)
			}
			// Advance the run that ends first: it cannot reach the
			// next run of the other row, which starts past a gap.
			if ra.x1 <= rb.x1 {
				a++
			} else {
				b++
			}
		}
	}
	// Union by index keeps every root at the smallest run index of its
	// component, so a root is numbered before any run that points to it.
	label = make([]int32, len(runs))
	for i := range runs {
		if r := find(parent, int32(i)); r == int32(i) {
			label[i] = int32(n)
			n++
		} else {
			label[i] = label[r]
		}
	}
	return label, n
}

// rowRuns appends the runs of one row. The row is read sixteen levels at
// a time, as four words of four 16-bit lanes compared with t in all lanes
// at once (aboveLanes): most stretches of sixteen lie wholly inside or
// outside a run, and those cost a few operations and one predictable
// branch instead of sixteen of each.
func rowRuns(rs []run, row []uint16, y int32, t uint16, brighter bool) []run {
	w := len(row)
	if t == 0xffff { // no level is above t: the row is one run or none
		if !brighter && w > 0 {
			rs = append(rs, run{y, 0, int32(w)})
		}
		return rs
	}
	c := uint64(t) + 1
	cLow := (c & 0x7fff) * 0x0001_0001_0001_0001
	var either uint64 // see aboveLanes
	if c&0x8000 == 0 {
		either = laneHigh
	}
	// flip inverts the high bits when runs are of levels ≤ t. prev has
	// bit 15 set when the level before the block is above t; before the
	// row's first level it is taken to be outside a run.
	var flip, prev uint64
	if !brighter {
		flip, prev = laneHigh, 0x8000
	}
	start := 0
	x := 0
	for ; x+16 <= w; x += 16 {
		q := (*[16]uint16)(row[x : x+16])
		// The high bit of each lane set when its level is above t.
		a0 := aboveLanes(lanes(q[0], q[1], q[2], q[3]), cLow, either)
		a1 := aboveLanes(lanes(q[4], q[5], q[6], q[7]), cLow, either)
		a2 := aboveLanes(lanes(q[8], q[9], q[10], q[11]), cLow, either)
		a3 := aboveLanes(lanes(q[12], q[13], q[14], q[15]), cLow, either)
		// The common block: all its levels on the side of the one before.
		if prev == 0 && a0|a1|a2|a3 == 0 || prev != 0 && a0&a1&a2&a3 == laneHigh {
			continue
		}
		// Lanes whose level is on the other side of t than the level
		// before: the runs' starts and ends.
		rs, start = wordRuns(rs, y, x, start, a0^flip, a0^(a0<<16|prev))
		rs, start = wordRuns(rs, y, x+4, start, a1^flip, a1^(a1<<16|a0>>48))
		rs, start = wordRuns(rs, y, x+8, start, a2^flip, a2^(a2<<16|a1>>48))
		rs, start = wordRuns(rs, y, x+12, start, a3^flip, a3^(a3<<16|a2>>48))
		prev = a3 >> 48
	}
	inRun := (prev != 0) == brighter
	for ; x < w; x++ {
		if (row[x] > t) == brighter {
			if !inRun {
				start, inRun = x, true
			}
		} else if inRun {
			rs = append(rs, run{y, int32(start), int32(x)})
			inRun = false
		}
	}
	if inRun {
		rs = append(rs, run{y, int32(start), int32(w)})
	}
	return rs
}

// wordRuns appends the runs that end in the word of four levels from
// column x, and returns them and the start of the run in progress: in has
// the high bit of each lane set where the level is in a run, edges where
// it differs from the level before.
func wordRuns(rs []run, y int32, x, start int, in, edges uint64) ([]run, int) {
	for ; edges != 0; edges &= edges - 1 {
		first := edges & -edges
		at := x + bits.TrailingZeros64(first)>>4
		if in&first != 0 {
			start = at
		} else {
			rs = append(rs, run{y, int32(start), int32(at)})
		}
	}
	return rs, start
}

// laneHigh has the high bit of each 16-bit lane of a word set.
const laneHigh = 0x8000_8000_8000_8000

// lanes packs four levels into the lanes of a word, the first lowest.
func lanes(a, b, c, d uint16) uint64 {
	return uint64(a) | uint64(b)<<16 | uint64(c)<<32 | uint64(d)<<48
}

// aboveLanes returns the high bit of each lane of v set where the lane is
// at least c, for a c of 1 … 65535 given as its low 15 bits in every lane
// (cLow) and either = laneHigh when its high bit is clear, 0 when set.
// The lanes' high bits are kept apart from the low 15: (v | laneHigh) −
// cLow cannot borrow across lanes, and its high bits tell where v's low 15
// bits are at least c's. With c's high bit clear, a lane is at least c
// when either high bit is set; with it set, when both are.
func aboveLanes(v, cLow, either uint64) uint64 {
	d := (v | laneHigh) - cLow
	return (v&d | (v|d)&either) & laneHigh
}
