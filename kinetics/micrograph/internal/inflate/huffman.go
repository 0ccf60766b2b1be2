package inflate

import (
	"encoding/binary"
	"errors"
)

// huffman decodes one compressed block with the literal/length table lit
// and the distance table dist (RFC 1951, section 3.2.5) until its end of
// block code. The fast loop (fast) takes the block while it is far from
// the ends of input and output; this careful loop, with the bit buffer in
// local variables, decodes the rest and reports damage: after a refill the buffer holds at least 56 bits unless the
// input is ending, enough for a literal/length code with its extra bits
// (at most 15 + 5) and a distance code with its extra bits (at most
// 15 + 13), so one refill serves a whole match; the length checks against
// nb only fail near the end of the input.
func (d *decoder) huffman(lit, dist *table) error {
	for {
		if d.fast(lit, dist) {
			return nil
		}
		if err := d.careful(lit, dist); err != errMoreInput {
			return err
		}
	}
}

// errMoreInput tells huffman that more of an arriving stream came in
// while the careful loop ran: back to the fast loop.
var errMoreInput = errors.New("inflate: more input")

// careful is the careful loop of huffman, to the end of the block; it
// returns errMoreInput, with the state saved, as soon as more input of an
// arriving stream has come in.
func (d *decoder) careful(lit, dist *table) error {
	out, n := d.out, d.n
	in, pos, bits, nb := d.in, d.pos, d.bits, d.nb
	var err error
	var bad uint32 // the entry of an invalid code
	tooFar := false
loop:
	for {
		if nb < 48 {
			if pos+8 <= len(in) {
				bits |= binary.LittleEndian.Uint64(in[pos:]) << nb
				pos += int(63-nb) >> 3
				nb |= 56
			} else {
				had := len(in)
				d.pos, d.bits, d.nb = pos, bits, nb
				d.refill()
				pos, bits, nb = d.pos, d.bits, d.nb
				if in = d.in; len(in) > had+fastInMargin {
					err = errMoreInput
					break
				}
			}
		}
		e := lit.root[bits&(1<<litRootBits-1)]
		if entryKind(e) == kindLink {
			e = lit.sub[entryValue(e)+uint32(bits>>litRootBits)&(1<<entryExtra(e)-1)]
		}
		cl := entryLen(e)
		if entryKind(e) == kindLiteral {
			if cl > nb {
				err = ErrTruncated
				break
			}
			bits >>= cl
			nb -= cl
			if n >= len(out) {
				err = ErrTooLong
				break
			}
			out[n] = byte(entryValue(e))
			n++
			// Literals come in runs: a second one is taken without a refill
			// while the buffer has the bits (after a refill it always has).
			if e = lit.root[bits&(1<<litRootBits-1)]; entryKind(e) == kindLiteral && entryLen(e) <= nb && n < len(out) {
				bits >>= entryLen(e)
				nb -= entryLen(e)
				out[n] = byte(entryValue(e))
				n++
			}
			d.reportAt(n)
			continue
		}
		switch {
		case entryKind(e) == kindEnd && cl <= nb:
			bits >>= cl
			nb -= cl
			break loop
		case entryKind(e) == kindEnd:
			err = ErrTruncated
			break loop
		case entryKind(e) != kindLength:
			bad = e
			break loop
		}
		length, total := withExtra(e, bits)
		if total > nb {
			err = ErrTruncated
			break
		}
		bits >>= total
		nb -= total

		e = dist.root[bits&(1<<distRootBits-1)]
		if entryKind(e) == kindLink {
			e = dist.sub[entryValue(e)+uint32(bits>>distRootBits)&(1<<entryExtra(e)-1)]
		}
		if entryKind(e) != kindLength {
			bad = e
			break
		}
		distance, total := withExtra(e, bits)
		if total > nb {
			err = ErrTruncated
			break
		}
		bits >>= total
		nb -= total

		if distance > n {
			tooFar = true
			break
		}
		if n+length > len(out) {
			err = ErrTooLong
			break
		}
		if n-distance < d.taintEnd {
			d.taintMatch(n, distance, length)
		}
		copyMatch(out, n, distance, length)
		n += length
		d.reportAt(n)
	}
	d.n, d.pos, d.bits, d.nb = n, pos, bits, nb
	switch {
	case bad != 0:
		return d.invalidCode(bad)
	case tooFar:
		return d.corrupt("distance too far back")
	}
	return err
}

// withExtra is the value of a length or distance entry e, its base plus
// the extra bits that follow its code in b, and the number of bits the
// code and the extra bits take.
func withExtra(e uint32, b uint64) (int, uint) {
	cl, x := entryLen(e), entryExtra(e)
	return int(entryValue(e) + uint32(b>>cl)&(1<<x-1)), cl + x
}

// copyMatch copies length bytes from distance bytes back to out[n:],
// byte by byte in effect: a match may overlap its own output. Where the
// distance is at least 8 and there is room it copies whole 8-byte words
// (possibly writing up to 7 bytes past the match, which later output
// overwrites).
func copyMatch(out []byte, n, distance, length int) {
	src := n - distance
	switch {
	case distance >= 8 && n+length+8 <= len(out):
		for i := 0; i < length; i += 8 {
			binary.LittleEndian.PutUint64(out[n+i:], binary.LittleEndian.Uint64(out[src+i:]))
		}
	case distance == 1:
		b := out[src]
		for i := range out[n : n+length] {
			out[n+i] = b
		}
	default:
		for i := 0; i < length; {
			i += copy(out[n+i:n+length], out[src+i:n+i])
		}
	}
}
