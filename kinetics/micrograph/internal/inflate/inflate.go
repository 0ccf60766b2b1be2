// Package inflate decompresses zlib streams (RFC 1950) holding DEFLATE
// data (RFC 1951) into a buffer the caller sized in advance, as a PNG
// decoder can: the image header gives the exact size of the inflated
// image data, so the whole output lives in one slice, back-references read
// it directly and no sliding window is kept.
//
// The decoder keeps up to 64 bits of input in a register refilled eight
// bytes at a time; each Huffman code is decoded by one look-up in a table
// indexed by the next 10 (literal/length) or 8 (distance) bits, with a
// second look-up only for longer codes, and a table entry gives both the
// symbol's meaning and the number of extra bits that follow it, so a
// length or distance with its extra bits is read in one step. Matches
// whose distance is at least 8 are copied 8 bytes at a time. Away from the
// ends of the input and the output a fast loop (fast.go) decodes without
// any end checks, up to six literals per refill (two a look-up in a table
// of literal pairs); the careful loop (huffman.go) takes over near the
// ends and reports damage.
//
// Corrupt input gives an error, never a panic or a read outside the
// input: bad code lengths, unknown symbols, a distance before the start
// of the output, output longer than the buffer, truncated input and a
// wrong Adler-32 checksum. The decoder accepts exactly the streams
// compress/zlib accepts (tested and fuzzed against it).
//
// References:
//   - P. Deutsch, J.-L. Gailly, "ZLIB Compressed Data Format Specification
//     version 3.3", RFC 1950, 1996.
//   - P. Deutsch, "DEFLATE Compressed Data Format Specification version
//     1.3", RFC 1951, 1996.
package inflate

import (
	"encoding/binary"
	"errors"
	"fmt"
)

// Errors of a stream that ends early, makes more output than the buffer
// holds, or fails its checksum; other damage is a *CorruptError.
var (
	ErrTruncated = errors.New("inflate: compressed data ends early")
	ErrTooLong   = errors.New("inflate: more data than expected")
	ErrChecksum  = errors.New("inflate: Adler-32 checksum mismatch")
)

// CorruptError reports invalid compressed data at a byte offset of the
// input.
type CorruptError struct {
	Offset int    // input byte at which the damage was seen
	What   string // what is wrong
}

func (e *CorruptError) Error() string {
	return fmt.Sprintf("inflate: %s at input byte %d", e.What, e.Offset)
}

// Result is what a call to Zlib produced.
type Result struct {
	N    int // bytes written to the buffer
	Used int // bytes of input read, up to and including the checksum
}

// Zlib inflates the zlib stream at the start of src into dst and returns
// how much it wrote and read. It fails with ErrTooLong if the stream holds
// more than len(dst) bytes. When progress is not nil it is called, on the
// calling goroutine, each time at least step more bytes of dst are final
// (dst[:n] will not change again), and once with the total after the last
// block, before the checksum is checked.
func Zlib(dst, src []byte, step int, progress func(n int)) (Result, error) {
	res, sum, err := Inflate(dst, src, step, progress)
	if err == nil && sum != Adler32(dst[:res.N]) {
		return Result{N: res.N}, ErrChecksum
	}
	return res, err
}

// Inflate is Zlib without the checksum test: it returns the Adler-32 the
// stream ends with, for a caller that sums the output itself while it
// consumes it (Adler32Update over dst[:Result.N], in order), say on another
// goroutine, and compares. Back-references reach at most Window bytes
// back, so once progress has reported n, dst[:n−Window] is never read
// again and the caller may overwrite it (after summing it).
func Inflate(dst, src []byte, step int, progress func(n int)) (Result, uint32, error) {
	return InflateArriving(dst, src, nil, step, progress)
}

// InflateArriving is Inflate of a stream that is still arriving in src:
// when wait is not nil only src[:wait(n)] holds data, wait(n) blocking
// until at least n bytes are there, or returning fewer when no more will
// come. The decoder asks for more only when it has used what it has.
//
// A stream of a megabyte or more is decoded on two goroutines when two
// cores are there (split.go), with the same result; wait is then called
// from both, so it must be safe for concurrent use.
func InflateArriving(dst, src []byte, wait func(n int) int, step int, progress func(n int)) (Result, uint32, error) {
	res, sum, _, err := inflateSplit(dst, src, wait, step, progress, planFor(len(src)))
	return res, sum, err
}

// splitInfo says, for the tests, what became of a second part.
type splitInfo struct {
	joined bool // the second part was joined
	fixes  int  // matches of the joined part copied again
}

// inflateSplit is InflateArriving with the given split plan.
func inflateSplit(dst, src []byte, wait func(n int) int, step int, progress func(n int), plan splitPlan) (Result, uint32, splitInfo, error) {
	d := decoder{src: src, in: src, wait: wait, out: dst, step: max(step, 1), progress: progress}
	if wait != nil {
		d.in = src[:0]
	}
	d.need(2)
	if len(d.in) < 2 {
		return Result{}, 0, splitInfo{}, ErrTruncated
	}
	cmf, flg := d.in[0], d.in[1]
	if cmf&0x0f != 8 || cmf>>4 > 7 || (uint(cmf)<<8|uint(flg))%31 != 0 {
		return Result{}, 0, splitInfo{}, &CorruptError{0, "invalid zlib header"}
	}
	d.pos = 2
	if flg&0x20 != 0 {
		// A preset dictionary: none is given, so only the identifier of the
		// empty dictionary (its Adler-32, 1) can be satisfied, as in
		// compress/zlib.
		if d.need(6); len(d.in) < 6 {
			return Result{}, 0, splitInfo{}, ErrTruncated
		}
		if binary.BigEndian.Uint32(d.in[2:]) != 1 {
			return Result{}, 0, splitInfo{}, &CorruptError{2, "stream needs a preset dictionary"}
		}
		d.pos = 6
	}
	d.nextReport = d.step
	var info splitInfo
	if plan.at > d.pos {
		p := startPart(plan, src, wait, len(dst))
		defer p.end()
		d.split, d.info = p, &info
	}
	if err := d.run(); err != nil {
		return Result{N: d.n}, 0, info, err
	}
	if progress != nil {
		progress(d.n)
	}
	end := d.pos
	if d.need(end + 4); end+4 > len(d.in) {
		return Result{N: d.n}, 0, info, ErrTruncated
	}
	return Result{N: d.n, Used: end + 4}, binary.BigEndian.Uint32(d.in[end:]), info, nil
}

// Window is the DEFLATE window: the farthest back a match may reach
// (RFC 1951, section 3.2.5: distances 1 to 32768).
const Window = 32768

// decoder is the state of one DEFLATE stream.
type decoder struct {
	src  []byte        // the whole input buffer
	wait func(int) int // nil, or how much of src has arrived (InflateArriving)
	in   []byte        // the input that has arrived: src[:wait(…)]
	pos  int           // next input byte not yet in bits
	bits uint64        // input bits, least significant first; bits above nb are zero or the next input bits
	nb   uint          // number of valid bits in bits

	out []byte
	n   int // output bytes written

	step, nextReport int
	progress         func(int)

	lit, dist, clen *table
	lengths         [286 + 30]uint8

	// Splitting (split.go). split: the second part, being decoded on
	// another goroutine, that this decoder joins when it reaches the
	// block that part starts at. taint, taintEnd and fixes belong to the
	// decoder of a second part: the bitmap of its output bytes that
	// depend on the window it does not know, the end of the last of
	// them (0 for a decoder that knows its whole window, so that the
	// test in the loops never holds), and the matches to copy again once
	// the window is known.
	split    *part
	info     *splitInfo // what became of split
	taint    []uint64
	taintEnd int
	fixes    []fixup
}

// need waits, for an arriving stream, until n bytes of input are there
// or no more will come, and reports whether more input arrived.
func (d *decoder) need(n int) bool {
	if n <= len(d.in) || d.wait == nil || len(d.in) == len(d.src) {
		return false
	}
	had := len(d.in)
	d.in = d.src[:min(d.wait(n), len(d.src))]
	return len(d.in) > had
}

// refill tops the bit buffer up to at least 56 bits, or to all the input
// that is left, waiting for an arriving stream's next bytes.
func (d *decoder) refill() {
	d.need(d.pos + 8)
	if d.pos+8 <= len(d.in) {
		d.bits |= binary.LittleEndian.Uint64(d.in[d.pos:]) << d.nb
		d.pos += int(63-d.nb) >> 3
		d.nb |= 56
		return
	}
	for d.nb <= 56 && d.pos < len(d.in) {
		d.bits |= uint64(d.in[d.pos]) << d.nb
		d.pos++
		d.nb += 8
	}
}

// take removes and returns the next n ≤ 32 bits.
func (d *decoder) take(n uint) (uint32, error) {
	if d.nb < n {
		d.refill()
		if d.nb < n {
			return 0, ErrTruncated
		}
	}
	v := uint32(d.bits & (1<<n - 1))
	d.bits >>= n
	d.nb -= n
	return v, nil
}

// align drops the bits up to the next byte boundary and gives the whole
// bytes still in the buffer back to the input.
func (d *decoder) align() {
	d.pos -= int(d.nb >> 3)
	d.bits, d.nb = 0, 0
}

func (d *decoder) corrupt(what string) error {
	return &CorruptError{Offset: d.pos - int(d.nb>>3), What: what}
}

// run decodes blocks until the last one (RFC 1951, section 3.2.3) and
// leaves pos at the byte after it.
// When d.split is set, at each block it first looks whether the second
// part decoded on another goroutine starts there (split.go), and if so ends
// with that part joined on.
func (d *decoder) run() error {
	for {
		if d.split != nil && d.join() {
			return nil
		}
		head, err := d.take(3)
		if err != nil {
			return err
		}
		if err := d.block(head); err != nil {
			return err
		}
		if head&1 != 0 {
			d.align()
			return nil
		}
	}
}

// block decodes the block whose 3 header bits are head.
func (d *decoder) block(head uint32) error {
	var err error
	switch head >> 1 {
	case 0:
		err = d.stored()
	case 1:
		err = d.huffman(fixedLit, fixedDist)
	case 2:
		if err = d.readCodes(); err == nil {
			err = d.huffman(d.lit, d.dist)
		}
	default:
		err = d.corrupt("invalid block type")
	}
	if err == nil {
		d.report()
	}
	return err
}

// stored copies a block of uncompressed data (section 3.2.4).
func (d *decoder) stored() error {
	d.align()
	if d.need(d.pos + 4); d.pos+4 > len(d.in) {
		return ErrTruncated
	}
	n := int(binary.LittleEndian.Uint16(d.in[d.pos:]))
	if binary.LittleEndian.Uint16(d.in[d.pos+2:]) != ^uint16(n) {
		return d.corrupt("stored block length and its complement disagree")
	}
	d.pos += 4
	if d.n+n > len(d.out) {
		return ErrTooLong
	}
	if d.need(d.pos + n); d.pos+n > len(d.in) {
		return ErrTruncated
	}
	copy(d.out[d.n:], d.in[d.pos:d.pos+n])
	d.pos += n
	d.n += n
	d.report()
	return nil
}

// reportAt is report for a loop that keeps the output count n in a local
// variable.
func (d *decoder) reportAt(n int) {
	if n >= d.nextReport {
		d.n = n
		d.report()
	}
}

// report calls progress when step more bytes are final.
func (d *decoder) report() {
	if d.n >= d.nextReport {
		if d.progress != nil {
			d.progress(d.n)
		}
		d.nextReport = d.n + d.step
	}
}

// clenOrder is the order in which code-length code lengths are sent
// (section 3.2.7).
var clenOrder = [19]uint8{16, 17, 18, 0, 8, 7, 9, 6, 10, 5, 11, 4, 12, 3, 13, 2, 14, 1, 15}

// readCodes reads a dynamic block's code lengths and builds its tables
// (section 3.2.7).
func (d *decoder) readCodes() error {
	if d.lit == nil {
		d.lit, d.dist, d.clen = newTable(litRootBits), newTable(distRootBits), newTable(clenRootBits)
	}
	h, err := d.take(14)
	if err != nil {
		return err
	}
	nlit, ndist, nclen := int(h&0x1f)+257, int(h>>5&0x1f)+1, int(h>>10)+4
	if nlit > 286 || ndist > 30 {
		return d.corrupt(fmt.Sprintf("%d literal/length or %d distance codes", nlit, ndist))
	}
	var cl [19]uint8
	for _, s := range clenOrder[:nclen] {
		v, err := d.take(3)
		if err != nil {
			return err
		}
		cl[s] = uint8(v)
	}
	if !d.clen.build(cl[:], clenMeaning[:]) {
		return d.corrupt("invalid code-length code")
	}
	lengths := d.lengths[:nlit+ndist]
	if err := d.readLengths(lengths); err != nil {
		return err
	}
	if !d.lit.build(lengths[:nlit], litMeaning[:]) {
		return d.corrupt("invalid literal/length code lengths")
	}
	d.lit.buildPairs()
	if !d.dist.build(lengths[nlit:], distMeaning[:]) {
		return d.corrupt("invalid distance code lengths")
	}
	return nil
}

// readLengths decodes the code lengths with the code-length code: 0–15
// literally, 16 repeats the previous length 3–6 times, 17 and 18 repeat
// zero 3–10 and 11–138 times.
func (d *decoder) readLengths(lengths []uint8) error {
	for i := 0; i < len(lengths); {
		sym, err := d.symbol(d.clen)
		if err != nil {
			return err
		}
		if sym < 16 {
			lengths[i] = uint8(sym)
			i++
			continue
		}
		var rep uint32
		var v uint8
		switch sym {
		case 16:
			if i == 0 {
				return d.corrupt("repeat of a code length before the first")
			}
			v = lengths[i-1]
			rep, err = d.take(2)
			rep += 3
		case 17:
			rep, err = d.take(3)
			rep += 3
		default:
			rep, err = d.take(7)
			rep += 11
		}
		if err != nil {
			return err
		}
		if i+int(rep) > len(lengths) {
			return d.corrupt("code length repeat past the last code")
		}
		for range rep {
			lengths[i] = v
			i++
		}
	}
	return nil
}

// symbol decodes one symbol of a code whose entries carry the symbol as
// their value and no extra bits.
func (d *decoder) symbol(t *table) (uint32, error) {
	if d.nb < maxCodeLength {
		d.refill()
	}
	e := t.lookup(d.bits)
	if entryKind(e) == kindInvalid {
		return 0, d.invalidCode(e)
	}
	n := entryLen(e)
	if n > d.nb {
		return 0, ErrTruncated
	}
	d.bits >>= n
	d.nb -= n
	return entryValue(e), nil
}

// invalidCode is the error for bits that decode to no symbol, or to a
// symbol DEFLATE does not define; running out of input first is
// truncation.
func (d *decoder) invalidCode(e uint32) error {
	if n := entryLen(e); (n > 0 && n <= d.nb) || (n == 0 && d.nb >= maxCodeLength) || d.pos < len(d.in) {
		return d.corrupt("invalid Huffman code")
	}
	return ErrTruncated
}
