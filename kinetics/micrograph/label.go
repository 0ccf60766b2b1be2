package micrograph

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

// rowRuns appends the runs of one row. The two polarities have their own
// loops so the inner test is a single comparison.
func rowRuns(rs []run, row []uint16, y int32, t uint16, brighter bool) []run {
	w := len(row)
	x := 0
	for x < w {
		if brighter {
			for x < w && row[x] <= t {
				x++
			}
		} else {
			for x < w && row[x] > t {
				x++
			}
		}
		if x == w {
			break
		}
		start := x
		if brighter {
			for x < w && row[x] > t {
				x++
			}
		} else {
			for x < w && row[x] <= t {
				x++
			}
		}
		rs = append(rs, run{y, int32(start), int32(x)})
	}
	return rs
}
