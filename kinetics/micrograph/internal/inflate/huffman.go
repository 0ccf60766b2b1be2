package inflate

import "encoding/binary"

// huffman decodes one compressed block with the literal/length table lit
// and the distance table dist (RFC 1951, section 3.2.5) until its end of
// block code. This is the hot loop, with the bit buffer in local
// variables: after a refill the buffer holds at least 56 bits unless the
// input is ending, enough for a literal/length code with its extra bits
// (at most 15 + 5) and a distance code with its extra bits (at most
// 15 + 13), so one refill serves a whole match; the length checks against
// nb only fail near the end of the input.
func (d *decoder) huffman(lit, dist *table) (err error) {
	out, n := d.out, d.n
	in, pos, bits, nb := d.in, d.pos, d.bits, d.nb
	defer func() { d.n, d.pos, d.bits, d.nb = n, pos, bits, nb }()
	for {
		if nb < 48 {
			if pos+8 <= len(in) {
				bits |= binary.LittleEndian.Uint64(in[pos:]) << nb
				pos += int(63-nb) >> 3
				nb |= 56
			} else {
				d.pos, d.bits, d.nb = pos, bits, nb
				d.refill()
				pos, bits, nb = d.pos, d.bits, d.nb
			}
		}
		e := lit.root[bits&(1<<litRootBits-1)]
		if entryKind(e) == kindLink {
			e = lit.sub[entryValue(e)+uint32(bits>>litRootBits)&(1<<entryExtra(e)-1)]
		}
		cl := entryLen(e)
		if entryKind(e) == kindLiteral {
			if cl > nb {
				return ErrTruncated
			}
			bits >>= cl
			nb -= cl
			if n >= len(out) {
				return ErrTooLong
			}
			out[n] = byte(entryValue(e))
			n++
			if n >= d.nextReport {
				d.n = n
				d.report()
			}
			continue
		}
		if entryKind(e) != kindLength {
			if entryKind(e) == kindEnd && cl <= nb {
				bits >>= cl
				nb -= cl
				return nil
			}
			d.pos, d.bits, d.nb = pos, bits, nb
			if entryKind(e) == kindEnd {
				return ErrTruncated
			}
			return d.invalidCode(e)
		}
		total := cl + entryExtra(e)
		if total > nb {
			return ErrTruncated
		}
		length := int(entryValue(e) + uint32(bits>>cl)&(1<<entryExtra(e)-1))
		bits >>= total
		nb -= total

		e = dist.root[bits&(1<<distRootBits-1)]
		if entryKind(e) == kindLink {
			e = dist.sub[entryValue(e)+uint32(bits>>distRootBits)&(1<<entryExtra(e)-1)]
		}
		if entryKind(e) != kindLength {
			d.pos, d.bits, d.nb = pos, bits, nb
			return d.invalidCode(e)
		}
		cl = entryLen(e)
		total = cl + entryExtra(e)
		if total > nb {
			return ErrTruncated
		}
		distance := int(entryValue(e) + uint32(bits>>cl)&(1<<entryExtra(e)-1))
		bits >>= total
		nb -= total

		if distance > n {
			d.pos, d.bits, d.nb = pos, bits, nb
			return d.corrupt("distance too far back")
		}
		if n+length > len(out) {
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
