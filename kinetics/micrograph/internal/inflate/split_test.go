package inflate

import (
	"bytes"
	"compress/zlib"
	"errors"
	"fmt"
	"hash/adler32"
	"math/rand/v2"
	"strings"
	"testing"
)

// The reference is again compress/zlib: a stream split anywhere must give
// its output byte for byte, and fail where it fails.

// longInputs are inputs of a few MB with many blocks at every level:
// image-like rows (matches mostly within a row or to the row above), the
// same with a repeat 32768 bytes back (so that the second part's first
// matches reach into the window it does not know, and matches copy those
// on), and words in random order.
func longInputs() map[string][]byte {
	r := rand.New(rand.NewPCG(3, 4))
	var rows []byte
	for y := range 1500 {
		rows = append(rows, byte(y%5))
		for x := range 2000 {
			rows = append(rows, byte(100+60*((x/53+y/41)%2)+r.IntN(13)))
		}
	}
	far := make([]byte, 0, 3<<20)
	for len(far) < 3<<20 {
		if len(far) >= 32768 && r.IntN(3) == 0 {
			far = append(far, far[len(far)-32768:len(far)-32768+1+r.IntN(200)]...)
			continue
		}
		far = append(far, byte(r.IntN(40)))
	}
	words := strings.Fields("anneal grow cool copper foil hydrogen methane argon sccm Torr furnace tube quartz domain coverage nucleation edge 1000 °C 30 min 20 min")
	var text []byte
	for len(text) < 3<<19 {
		text = append(text, words[r.IntN(len(words))]...)
		text = append(text, " ,."[r.IntN(3)])
	}
	return map[string][]byte{"image rows": rows, "repeats 32768 back": far, "text": text}
}

// TestSplitAgrees: long streams of every level, split at many points,
// all at once and arriving in pieces; the second part must be joined for
// streams with dynamic blocks, and must have needed its window fixed up
// where matches reach back across the split.
func TestSplitAgrees(t *testing.T) {
	t.Parallel()
	for name, data := range longInputs() {
		for _, level := range []int{zlib.HuffmanOnly, 0, 1, 6, 9} {
			t.Run(fmt.Sprintf("%s/%s", name, levelName(level)), func(t *testing.T) {
				t.Parallel()
				src := compress(t, data, level)
				want, err := reference(src, len(data)+1)
				if err != nil {
					t.Fatal(err)
				}
				wantSum := adler32.Checksum(want)
				joins, fixed := 0, false
				for _, f := range []float64{0.01, 0.2, 0.42, 0.5, 0.77, 0.99} {
					at := int(f * float64(len(src)))
					for _, a := range append(arrivals(len(src))[3:4], arrival{"at once", nil}) {
						got := make([]byte, len(want))
						res, sum, info, err := inflateSplit(got, src, a.wait, 1, nil, splitPlan{at, true})
						if err != nil || res.N != len(want) || res.Used != len(src) || sum != wantSum {
							t.Fatalf("split at %d, arriving %s: got %+v, sum %08x, %v; want %d bytes of %d, sum %08x",
								at, a.name, res, sum, err, len(want), len(src), wantSum)
						}
						if i := firstDiff(got, want); i < len(want) {
							t.Fatalf("split at %d, arriving %s: first difference from compress/zlib at byte %d of %d", at, a.name, i, len(want))
						}
						if info.joined {
							joins++
						}
						fixed = fixed || info.fixes > 0
					}
				}
				// Level 0 has stored blocks only; every other level makes
				// dynamic blocks the search finds.
				if level != 0 && joins == 0 {
					t.Errorf("the second part was never joined")
				}
				if name == "repeats 32768 back" && level > 0 && !fixed {
					t.Errorf("no match reached into the unknown window: the case tests nothing")
				}
			})
		}
	}
}

// TestSplitDamage: damage past the split point (bit flips, cuts, an
// output buffer too short or too long) gives compress/zlib's verdict and,
// where it accepts, its output.
func TestSplitDamage(t *testing.T) {
	t.Parallel()
	good := compress(t, longInputs()["image rows"][:1<<20], 6)
	want, _ := reference(good, 1<<26)
	r := rand.New(rand.NewPCG(9, 10))
	at := len(good) / 2
	for i := range 30 {
		src := bytes.Clone(good)
		switch i % 3 {
		case 0: // a flipped bit past the split
			p := at + r.IntN(len(src)-at)
			src[p] ^= 1 << r.IntN(8)
		case 1: // cut past the split
			src = src[:at+r.IntN(len(src)-at)]
		default: // a flipped bit just before or after the split
			src[at-64+r.IntN(128)] ^= 1 << r.IntN(8)
		}
		agreeSplit(t, src, len(want), at, 1, fmt.Sprintf("case %d", i))
	}
	for _, room := range []int{len(want) - 1, len(want) - 5000, len(want) + 5000} {
		got := make([]byte, room)
		res, _, _, err := inflateSplit(got, good, nil, 1, nil, splitPlan{at, true})
		switch {
		case room < len(want) && !errors.Is(err, ErrTooLong):
			t.Errorf("room %d of %d: got %v, want ErrTooLong", room, len(want), err)
		case room > len(want) && (err != nil || res.N != len(want) || !bytes.Equal(got[:res.N], want)):
			t.Errorf("room %d of %d: got %+v, %v; want compress/zlib's %d bytes", room, len(want), res, err, len(want))
		}
	}
}

// TestHeaderBits: every block start of a stream that begins a dynamic
// block passes headerBits, so the search can only miss a start when the
// stream has none of that kind.
func TestHeaderBits(t *testing.T) {
	t.Parallel()
	src := compress(t, longInputs()["image rows"], 6)
	d := decoder{src: src, in: src, out: make([]byte, 4<<20), pos: 2, nextReport: 1 << 62}
	starts := 0
	for {
		at := d.pos*8 - int(d.nb)
		head, err := d.take(3)
		if err != nil {
			t.Fatal(err)
		}
		if head>>1 == 2 {
			starts++
			if !headerBits(src, at) {
				t.Fatalf("block start at bit %d: headerBits refuses it", at)
			}
		}
		if err := d.block(head); err != nil {
			t.Fatal(err)
		}
		if head&1 != 0 {
			break
		}
	}
	if starts < 10 {
		t.Fatalf("%d dynamic blocks: the case tests little", starts)
	}
}

// TestSplitConsumer: a consumer that, as Inflate's contract allows, sums
// the output a Window behind each progress report and then overwrites
// it (as a PNG decoder unfilters rows in place) still sums exactly the
// stream's bytes when the stream is split and joined: neither the
// decoder nor the join reads or writes what was handed over.
func TestSplitConsumer(t *testing.T) {
	t.Parallel()
	for name, data := range longInputs() {
		src := compress(t, data, 6)
		want := adler32.Checksum(data)
		for _, f := range []float64{0.3, 0.6} {
			got := make([]byte, len(data))
			sum, done := uint32(1), 0
			take := func(upto int) {
				if upto > done {
					sum = Adler32Update(sum, got[done:upto])
					clear(got[done:upto])
					done = upto
				}
			}
			res, streamSum, info, err := inflateSplit(got, src, nil, 4096, func(n int) { take(n - Window) }, splitPlan{int(f * float64(len(src))), true})
			take(res.N)
			if err != nil || res.N != len(data) || streamSum != want || sum != want {
				t.Fatalf("%s split at %.1f: got %+v, %v, consumer's sum %08x, stream's %08x; want %08x", name, f, res, err, sum, streamSum, want)
			}
			if !info.joined {
				t.Errorf("%s split at %.1f: the second part was not joined; the case tests little", name, f)
			}
		}
	}
}

// TestZlibLong: streams of a megabyte and more through the exported
// functions, which split them as the decoder of a micrograph does (the
// first goroutine never waiting for the search), all at once and
// arriving in pieces from two goroutines: compress/zlib's output, whether
// or not the second part was joined in time.
func TestZlibLong(t *testing.T) {
	t.Parallel()
	long := 0
	for name, data := range longInputs() {
		src := compress(t, data, 1)
		if len(src) >= minSplit {
			long++
		}
		t.Run(name, func(t *testing.T) { agree(t, src) })
	}
	if long == 0 {
		t.Fatalf("no stream of %d bytes or more: the split is not tested", minSplit)
	}
}

// FuzzSplitDamage: a valid stream of many blocks, split at a point and
// damaged after it by bit flips (and cut, when the edits say so), gives
// compress/zlib's verdict and, where it accepts, its output; it never
// panics. at chooses the split point, edits the damage: three bytes an
// edit (where past the split, as a fraction, and the bits to flip).
func FuzzSplitDamage(f *testing.F) {
	good := compress(f, longInputs()["image rows"][:1<<19], 6)
	want, err := reference(good, 1<<20)
	if err != nil {
		f.Fatal(err)
	}
	f.Add(uint16(32768), []byte{})
	f.Add(uint16(20000), []byte{0x80, 0x00, 0x10})
	f.Add(uint16(50000), []byte{0x00, 0x10, 0x01, 0xff, 0xf0, 0x80, 0x7f})
	f.Fuzz(func(t *testing.T, at uint16, edits []byte) {
		split := 2 + int(at)*(len(good)-2)/65536
		src := bytes.Clone(good)
		for len(edits) >= 3 {
			off := int(edits[0])<<8 | int(edits[1]) // of 65536 past the split
			if p := split + off*(len(src)-split)/65536; p < len(src) {
				src[p] ^= edits[2]
			}
			edits = edits[3:]
		}
		if len(edits) > 0 { // a cut past the split
			src = src[:split+int(edits[0])*(len(src)-split)/256]
		}
		agreeSplit(t, src, len(want), split, 1<<16, fmt.Sprintf("split at %d", split))
	})
}

// agreeSplit checks that src, split (patiently) at byte at into room bytes
// of output, fails exactly when compress/zlib fails and otherwise gives
// its output; what names the case in a failure.
func agreeSplit(t *testing.T, src []byte, room, at, step int, what string) {
	t.Helper()
	ref, refErr := reference(src, room+1)
	got := make([]byte, room)
	res, sum, _, err := inflateSplit(got, src, nil, step, nil, splitPlan{at, true})
	if err == nil && sum != Adler32(got[:res.N]) {
		err = ErrChecksum
	}
	switch {
	case (err == nil) != (refErr == nil):
		t.Fatalf("%s: got %v, compress/zlib %v", what, err, refErr)
	case err == nil && !bytes.Equal(got[:res.N], ref):
		t.Fatalf("%s: output differs from compress/zlib's", what)
	}
}
