package inflate

import "encoding/binary"

// huffman decodes one compressed block with the literal/length table lit
// and the distance table dist (RFC 1951, section 3.2.5) until its end of
// block code. This is the hot loop: after a refill the buffer holds at
// least 56 bits unless the input is ending, enough for a literal/length
// code with its extra bits (at most 15 + 5) and a distance code with its
// extra bits (at most 15 + 13), so one refill serves a whole match; the
// length checks against nb only fail near the end of the input.
func (d *decoder) huffman(lit, dist *table) error {
	out, n := d.out, d.n
	for {
		if d.nb < 48 {
			d.refill()
		}
		e := lit.lookup(d.bits)
		cl := entryLen(e)
		switch entryKind(e) {
		case kindLiteral:
			if cl > d.nb {
				d.n = n
				return ErrTruncated
			}
			d.bits >>= cl
			d.nb -= cl
			if n >= len(out) {
				d.n = n
				return ErrTooLong
			}
			out[n] = byte(entryValue(e))
			n++
			if n >= d.nextReport {
				d.n = n
				d.report()
			}
			continue
		case kindLength:
		case kindEnd:
			if cl > d.nb {
				d.n = n
				return ErrTruncated
			}
			d.bits >>= cl
			d.nb -= cl
			d.n = n
			return nil
		default:
			d.n = n
			return d.invalidCode(e)
		}
		total := cl + entryExtra(e)
		if total > d.nb {
			d.n = n
			return ErrTruncated
		}
		length := int(entryValue(e) + uint32(d.bits>>cl)&(1<<entryExtra(e)-1))
		d.bits >>= total
		d.nb -= total

		e = dist.lookup(d.bits)
		if entryKind(e) != kindLength {
			d.n = n
			return d.invalidCode(e)
		}
		cl = entryLen(e)
		total = cl + entryExtra(e)
		if total > d.nb {
			d.n = n
			return ErrTruncated
		}
		distance := int(entryValue(e) + uint32(d.bits>>cl)&(1<<entryExtra(e)-1))
		d.bits >>= total
		d.nb -= total

		if distance > n {
			d.n = n
			return d.corrupt("distance too far back")
		}
		if n+length > len(out) {
			d.n = n
			return ErrTooLong
		}
		copyMatch(out, n, distance, length)
		n += length
		if n >= d.nextReport {
			d.n = n
			d.report()
		}
	}
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
