package inflate

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"runtime"
	"sync/atomic"

	"github.com/foilrun/foilrun/kinetics/micrograph/internal/hugemem"
)

// A long stream is decoded on two goroutines. DEFLATE carries nothing
// from one block to the next but the window, the Window bytes of output
// before a block that its matches may reach back into. So a second
// goroutine can start at a block that begins in the second part of the
// input, if it can find one and makes do without the window:
//
//  1. From a split point it searches the input, bit by bit, for bits that
//     read as the header of a dynamic block (block type 2, code counts in
//     range, a complete code-length code: headerBits) from which the
//     first two blocks then decode, codes valid, within trialOutput bytes.
//  2. From there it decodes to the end of the stream into a buffer of its
//     own whose first Window bytes stand for the unknown window. A bitmap
//     marks the bytes that came from those, directly or through bytes
//     that did, and the matches that copied any marked byte are listed.
//  3. The first goroutine decodes from the start as usual and looks at the
//     bit it is at before each block. When it is the bit the second part
//     started at, that part's output is copied after its own and the
//     listed matches are copied again, in order, now that the window is
//     there: the output is byte for byte the serial one.
//
// If the first goroutine passes that bit between two of its blocks (the
// bits only looked like a header), or the second part failed in any way,
// the second part is dropped and the first goroutine decodes on alone, so
// every error reported is the serial decoder's own, at the same place.
//
// Reference: M. Kerbiriou, R. Chikhi, "Parallel decompression of gzip-
// compressed files and random access to DNA sequences", IEEE IPDPS
// Workshops, 2019 (the search for block starts and the decoding with an
// unknown window resolved afterwards).

const (
	// minSplit is the shortest input that is split: below it the second
	// goroutine costs more than it saves.
	minSplit = 1 << 20
	// splitFraction is where in the input the second part's search
	// begins. The second part takes less than half: its output goes
	// through a buffer of its own into fresh memory and is then copied,
	// and whatever consumes the output (a PNG decoder unfilters the rows)
	// can only start on it after the join. Measured on the 4096²
	// benchmark micrograph, whole command, 2 cores (min/median of 25,
	// interleaved): serial 149/205 ms, 0.6 131/188, 0.7 146/192; an
	// earlier run had 0.42 at 191/241 and 0.55 at 164/218.
	splitFraction = 0.6
	// searchSpan is how many bytes past the split point the search for a
	// block start goes on. Encoders end a block every few tens of
	// kilobytes of input at most.
	searchSpan = 256 << 10
	// trialOutput is the most output the first two blocks of a candidate
	// start may make before it is taken for one: bits that only look like
	// a header decode garbage until they fail, and this bounds the
	// garbage.
	trialOutput = 2 << 20
)

// splitPlan says where the search for a second part begins: at input
// byte at (none when at is not past the zlib header). A patient first
// decoder waits for the search to end before it passes the split point,
// so that a start the search finds is always joined (the tests need
// that); otherwise it never waits.
type splitPlan struct {
	at      int
	patient bool
}

// planFor returns the plan for an input of n bytes.
func planFor(n int) splitPlan {
	if n < minSplit || runtime.GOMAXPROCS(0) < 2 {
		return splitPlan{at: -1}
	}
	return splitPlan{at: int(float64(n) * splitFraction)}
}

// fixup is a match of a second part that copied bytes which depend on
// the unknown window: at output byte at of the part's buffer, from dist
// bytes back, n bytes.
type fixup struct {
	at   int
	dist uint16
	n    uint16
}

// part is the second part of a split stream and the goroutine decoding it.
type part struct {
	from    int           // bit of the input the search begins at
	patient bool          // the first decoder waits for the search (splitPlan)
	found   chan struct{} // closed when the search has ended: start is set
	start   int           // bit of the block the part starts at, or −1 when none was found
	done    chan struct{} // closed when the goroutine has ended: d and err are set
	stop    atomic.Bool   // set when the part will not be joined: the goroutine ends early

	d   decoder // the part's decoder: its output is d.out[Window:d.n]
	err error   // why the part cannot be joined, or nil
}

// Reasons a second part is not joined. They never reach a caller: the
// first decoder goes on alone.
var (
	errNoBlock = errors.New("inflate: no block start found past the split point")
	errStopped = errors.New("inflate: second part no longer needed")
)

// startPart starts the goroutine that searches src (arriving through
// wait, when not nil; see InflateArriving) from byte plan.at for a block start
// and decodes from there to the end of the stream, for output of at most
// room bytes.
func startPart(plan splitPlan, src []byte, wait func(int) int, room int) *part {
	p := &part{from: 8 * plan.at, patient: plan.patient, start: -1, found: make(chan struct{}), done: make(chan struct{})}
	go p.run(src, wait, room)
	return p
}

// end stops the goroutine and waits for it, so that it no longer reads
// the input when the caller returns.
func (p *part) end() {
	p.stop.Store(true)
	<-p.done
}

func (p *part) run(src []byte, wait func(int) int, room int) {
	published := false
	defer func() {
		if r := recover(); r != nil {
			p.err = fmt.Errorf("inflate: second part failed: %v", r)
		}
		if !published {
			close(p.found)
		}
		close(p.done)
	}()
	d := &p.d
	*d = decoder{src: src, in: src, wait: wait, out: hugemem.Slice[byte](Window + room), n: Window, nextReport: math.MaxInt}
	if wait != nil {
		d.in = src[:0]
	}
	d.taint = make([]uint64, (len(d.out)+63)/64)
	setBits(d.taint, 0, Window)
	d.taintEnd = Window

	first := p.from >> 3
	d.need(first + searchSpan + 16)
	last := min(first+searchSpan, len(d.in)-16) // headerBits reads 16 bytes
	for bit := p.from; bit < 8*last; bit++ {
		if bit&4095 == 0 && p.stop.Load() {
			p.err = errStopped
			return
		}
		if !headerBits(d.in, bit) {
			continue
		}
		err := p.decode(bit, &published)
		if published {
			p.err = err
			return
		}
		p.reset()
	}
	p.err = errNoBlock
}

// reset clears what a decoding from bits that were no block start left.
func (p *part) reset() {
	d := &p.d
	clear(d.taint[Window/64 : min(len(d.taint), d.taintEnd/64+1)]) // the window's own bits stay set
	d.n, d.taintEnd, d.fixes = Window, Window, d.fixes[:0]
}

// decode decodes the part from the block at bit to the end of the
// stream. Once its first two blocks (or a last first block) have decoded
// within trialOutput bytes it publishes bit as the part's start (and sets
// *published); bits that only look like a header rarely get that far.
func (p *part) decode(bit int, published *bool) error {
	d := &p.d
	full := d.out
	defer func() { d.out = full }()
	d.out = full[:min(len(full), Window+trialOutput)]
	d.pos, d.bits, d.nb = bit>>3, 0, 0
	if _, err := d.take(uint(bit & 7)); err != nil {
		return err
	}
	for blocks := 1; ; blocks++ {
		if p.stop.Load() {
			return errStopped
		}
		head, err := d.take(3)
		if err != nil {
			return err
		}
		if blocks == 1 && head>>1 != 2 {
			return errNoBlock
		}
		if err := d.block(head); err != nil {
			return err
		}
		if !*published && (blocks == 2 || head&1 != 0) {
			p.start, *published = bit, true
			d.out = full
			close(p.found)
		}
		if head&1 != 0 {
			d.align()
			return nil
		}
	}
}

// headerBits reports whether the bits of in from bit on can begin a
// dynamic block (RFC 1951, section 3.2.7): block type 2, at most 286
// literal/length and 30 distance codes, and code-length code lengths that
// make a complete code (or one code of length 1, which zlib accepts). It
// reads in[bit/8 : bit/8+16].
func headerBits(in []byte, bit int) bool {
	v := binary.LittleEndian.Uint64(in[bit>>3:]) >> (bit & 7) // at least 57 bits
	if v>>1&3 != 2 || v>>3&31 > 29 || v>>8&31 > 29 {
		return false
	}
	nclen := int(v>>13&15) + 4
	b := bit + 17
	w := binary.LittleEndian.Uint64(in[b>>3:]) >> (b & 7) // 19 lengths of 3 bits
	kraft, codes := 0, 0
	for i := range nclen {
		if l := w >> (3 * i) & 7; l != 0 {
			kraft += 128 >> l
			codes++
		}
	}
	return kraft == 128 || (kraft == 64 && codes == 1)
}

// taintMatch is called for a match whose source starts before taintEnd:
// when any byte it copies is marked, the match is listed and its output
// marked.
func (d *decoder) taintMatch(n, distance, length int) {
	src := n - distance
	if !anyBit(d.taint, src, min(src+length, n)) {
		return
	}
	d.fixes = append(d.fixes, fixup{at: n, dist: uint16(distance), n: uint16(length)})
	setBits(d.taint, n, n+length)
	d.taintEnd = n + length
}

// anyBit reports whether any bit in [lo, hi) of bm is set.
func anyBit(bm []uint64, lo, hi int) bool {
	for lo < hi {
		w := bm[lo>>6] >> (lo & 63)
		span := min(64-lo&63, hi-lo)
		if span < 64 {
			w &= 1<<span - 1
		}
		if w != 0 {
			return true
		}
		lo += span
	}
	return false
}

// setBits sets the bits [lo, hi) of bm.
func setBits(bm []uint64, lo, hi int) {
	for lo < hi {
		span := min(64-lo&63, hi-lo)
		m := ^uint64(0)
		if span < 64 {
			m = 1<<span - 1
		}
		bm[lo>>6] |= m << (lo & 63)
		lo += span
	}
}

// join is called by the first decoder before each block. It reports
// whether it joined the second part: the part started at the bit d is at,
// decoded to the end of the stream, and its output, with the matches that
// reached into the window copied again, fits after d's. d is then at the
// end of the stream. Otherwise the part is dropped as soon as d has passed
// its start, and d decodes on alone. Unless the plan is patient it never
// waits for the search: a part whose start is found only once d is past
// it is dropped.
func (d *decoder) join() bool {
	p := d.split
	at := d.pos*8 - int(d.nb)
	if at < p.from {
		return false
	}
	if p.patient {
		<-p.found
	}
	select {
	case <-p.found:
	default: // the search is still going on: go on, and look again at the next block
		return false
	}
	switch {
	case p.start < 0:
		d.split = nil
		return false
	case at < p.start:
		return false
	case at > p.start:
		p.stop.Store(true)
		d.split = nil
		return false
	}
	<-p.done
	d.split = nil
	q := &p.d
	if p.err != nil || q.n-Window > len(d.out)-d.n {
		return false
	}
	shift := d.n - Window // the part's buffer index of an output byte, less shift
	for _, f := range q.fixes {
		if f.at+shift < int(f.dist) { // before the start of the output: decoding on alone reports it
			return false
		}
	}
	// The part's output is copied in pieces of step bytes (longer where a
	// listed match would be cut), its listed matches copied again, and
	// each piece reported as final, so that the consumer starts on it
	// while the rest is copied. A listed match reaches at most Window
	// bytes back, where the consumer, a Window behind, has not been.
	end, fixes := q.n+shift, q.fixes
	for d.n < end {
		to := min(d.n+d.step, end)
		for _, f := range fixes {
			if f.at+shift >= to {
				break
			}
			to = max(to, f.at+shift+int(f.n))
		}
		copy(d.out[d.n:to], q.out[d.n-shift:to-shift])
		for len(fixes) > 0 && fixes[0].at+shift < to {
			f := fixes[0]
			copyExact(d.out, f.at+shift, int(f.dist), int(f.n))
			fixes = fixes[1:]
		}
		d.n = to
		d.report()
	}
	d.in = q.in
	d.pos, d.bits, d.nb = q.pos, 0, 0
	d.info.joined, d.info.fixes = true, len(q.fixes)
	return true
}

// copyExact copies length bytes from distance bytes back to out[n:] byte
// by byte in effect, as copyMatch does, but writing nothing past the
// match: the bytes after it are already final.
func copyExact(out []byte, n, distance, length int) {
	src := n - distance
	for i := 0; i < length; {
		i += copy(out[n+i:n+length], out[src+i:n+i])
	}
}
