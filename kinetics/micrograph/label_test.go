package micrograph

import (
	"encoding/binary"
	"fmt"
	"math/rand/v2"
	"slices"
	"testing"
)

// naiveRowRuns is rowRuns level by level: a run starts where a level in a
// run follows one that is not (or the row's start) and ends where one that
// is not follows.
func naiveRowRuns(rs []run, row []uint16, y int32, t uint16, brighter bool) []run {
	start := -1
	for x, v := range row {
		in := v > t
		if !brighter {
			in = v <= t
		}
		switch {
		case in && start < 0:
			start = x
		case !in && start >= 0:
			rs = append(rs, run{y, int32(start), int32(x)})
			start = -1
		}
	}
	if start >= 0 {
		rs = append(rs, run{y, int32(start), int32(len(row))})
	}
	return rs
}

// checkRowRuns fails t when rowRuns and naiveRowRuns differ on row, for
// both polarities, appended after a run already there.
func checkRowRuns(t *testing.T, row []uint16, th uint16) {
	t.Helper()
	for _, brighter := range []bool{false, true} {
		before := []run{{9, 1, 2}}
		got := rowRuns(slices.Clone(before), row, 7, th, brighter)
		want := naiveRowRuns(slices.Clone(before), row, 7, th, brighter)
		if !slices.Equal(got, want) {
			t.Fatalf("row %v, threshold %d, brighter %v: got %v, want %v", row, th, brighter, got, want)
		}
	}
}

// TestRowRuns: the runs read sixteen levels at a time are those found
// level by level, for rows of every width up to 40 (blocks and tails), all
// above, all below, alternating, runs touching both ends and crossing
// words, the thresholds 0, 65535 and those next to the high bit, levels at
// the threshold and one off, and random rows.
func TestRowRuns(t *testing.T) {
	t.Parallel()
	thresholds := []uint16{0, 1, 500, 0x7ffe, 0x7fff, 0x8000, 0x8001, 0xfffe, 0xffff}
	for _, th := range thresholds {
		levels := []uint16{0, 1, th - 1, th, th + 1, 0x7fff, 0x8000, 0xffff}
		for w := range 41 {
			for _, l := range levels {
				checkRowRuns(t, slices.Repeat([]uint16{l}, w), th) // all one level
			}
			alt, ends := make([]uint16, w), make([]uint16, w)
			for x := range w {
				alt[x] = levels[x%len(levels)]
				ends[x] = th
				if x < 2 || x >= w-3 {
					ends[x] = th + 1
				}
			}
			checkRowRuns(t, alt, th)
			checkRowRuns(t, ends, th)
		}
	}
	r := rand.New(rand.NewPCG(3, 4))
	for range 2000 {
		row := make([]uint16, r.IntN(100))
		th := thresholds[r.IntN(len(thresholds))]
		if r.IntN(2) == 0 {
			th = uint16(r.Uint32())
		}
		for x := range row {
			switch r.IntN(4) {
			case 0:
				row[x] = uint16(r.Uint32())
			case 1:
				row[x] = th
			case 2:
				row[x] = th + 1
			default:
				if x > 0 {
					row[x] = row[x-1] // stretches of one level
				}
			}
		}
		checkRowRuns(t, row, th)
	}
}

// TestRunsOfBands: runsOf on all cores gives the runs of every row in
// order and rowStart as the naive runs row by row do.
func TestRunsOfBands(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(1, 2))
	for _, wh := range [][2]int{{1, 1}, {5, 7}, {64, 33}, {129, 100}} {
		p := &plane{w: wh[0], h: wh[1], pix: make([]uint16, wh[0]*wh[1])}
		for i := range p.pix {
			p.pix[i] = uint16(r.IntN(3)) * 400
		}
		for _, brighter := range []bool{false, true} {
			t.Run(fmt.Sprintf("%d×%d/brighter=%v", p.w, p.h, brighter), func(t *testing.T) {
				runs, rowStart := runsOf(p, 400, brighter)
				var want []run
				wantStart := []int32{0}
				for y := range p.h {
					want = naiveRowRuns(want, p.row(y), int32(y), 400, brighter)
					wantStart = append(wantStart, int32(len(want)))
				}
				if !slices.Equal(runs, want) || !slices.Equal(rowStart, wantStart) {
					t.Fatalf("got %v %v, want %v %v", runs, rowStart, want, wantStart)
				}
			})
		}
	}
}

// FuzzRowRuns: rowRuns finds the runs naiveRowRuns finds on any row (the
// data's bytes in pairs, little-endian) and threshold. Seeds: empty, one
// level, a word and a tail, a run across words, the extreme thresholds.
func FuzzRowRuns(f *testing.F) {
	f.Add([]byte{}, uint16(0))
	f.Add([]byte{1, 0}, uint16(0))
	f.Add([]byte{0xff, 0xff, 0, 0x80, 0xff, 0x7f, 0, 0, 1, 0}, uint16(0x7fff))
	f.Add([]byte{0, 0, 0, 0, 0, 0, 9, 9, 9, 9, 9, 9, 9, 9, 0, 0, 0, 0}, uint16(0x0909))
	f.Add([]byte{0xff, 0xff, 0xff, 0xff, 0, 0}, uint16(0xffff))
	f.Add([]byte{0, 0x80, 1, 0x80, 0xff, 0x7f, 0, 0x80}, uint16(0x8000))
	f.Fuzz(func(t *testing.T, data []byte, th uint16) {
		row := make([]uint16, len(data)/2)
		for x := range row {
			row[x] = binary.LittleEndian.Uint16(data[2*x:])
		}
		checkRowRuns(t, row, th)
	})
}
