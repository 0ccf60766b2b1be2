package inflate

import "encoding/binary"

// The fast loop decodes while the input has at least fastInMargin bytes
// left and the output at least fastOutMargin bytes of room: enough for one
// 8-byte refill, six literals (and a seventh byte written over) and a
// match of 258 bytes copied in 8-byte words (up to 7 bytes past its end),
// so nothing inside it checks for the end of either. Near the ends, and at any damage, it stops and the
// careful loop (huffman) decodes the rest of the block.
const (
	fastInMargin  = 8
	fastOutMargin = 6 + 258 + 8
	kindMask      = 0xf << 12
)

// fast decodes symbols of a compressed block (tables lit and dist) from
// d's state for as long as it is far from both ends and the data is
// sound, and reports whether it reached the end of the block. After each
// refill the bit buffer holds at least 56 bits: room for three look-ups of
// the pair table (at most 10 bits each, one or two literals each), or for
// a literal of a sub-table (15), or
// for a length code with its extra bits (20) followed by a distance code
// with its extra bits (28). A symbol it cannot take (an invalid code, a
// distance before the start of the output) is left unread, for the
// careful loop to report.
func (d *decoder) fast(lit, dist *table) bool {
	in, out := d.in, d.out
	inEnd, outEnd := len(in)-fastInMargin, len(out)-fastOutMargin
	pos, n, bits, nb := d.pos, d.n, d.bits, d.nb
	lroot, pairs := &lit.root, lit.pairs
	droot := (*[1 << distRootBits]uint32)(dist.root[:1<<distRootBits])
	lsub, dsub := lit.sub, dist.sub
	taintEnd := d.taintEnd
	end := false
	for pos <= inEnd && n <= outEnd {
		bits |= binary.LittleEndian.Uint64(in[pos:]) << (nb & 63)
		pos += int(63-nb) >> 3
		nb |= 56

		// Literals, two a look-up where their codes fit in the root's
		// bits: both bytes are written, and the second is written over
		// when there is one literal (the margin leaves room).
		if p := pairs[bits&(1<<litRootBits-1)]; p&pairCount != 0 {
			bits >>= p & 63
			nb -= uint(p & 63)
			out[n], out[n+1] = byte(p>>16), byte(p>>24)
			n += int(p >> 8 & 3)
			if p = pairs[bits&(1<<litRootBits-1)]; p&pairCount != 0 {
				bits >>= p & 63
				nb -= uint(p & 63)
				out[n], out[n+1] = byte(p>>16), byte(p>>24)
				n += int(p >> 8 & 3)
				if p = pairs[bits&(1<<litRootBits-1)]; p&pairCount != 0 {
					bits >>= p & 63
					nb -= uint(p & 63)
					out[n], out[n+1] = byte(p>>16), byte(p>>24)
					n += int(p >> 8 & 3)
				}
			}
			continue
		}
		e := lroot[bits&(1<<litRootBits-1)]
		if e&kindMask == kindLink<<12 {
			e = lsub[entryValue(e)+uint32(bits>>litRootBits)&(1<<entryExtra(e)-1)]
			if e&kindMask == kindLiteral<<12 {
				cl := uint(e & 63)
				bits >>= cl
				nb -= cl
				out[n] = byte(e >> 16)
				n++
				continue
			}
		}
		if e&kindMask != kindLength<<12 {
			if e&kindMask == kindEnd<<12 {
				cl := uint(e & 63)
				bits >>= cl
				nb -= cl
				end = true
			}
			break
		}
		length, lt := withExtra(e, bits)
		b := bits >> (lt & 63)
		de := droot[b&(1<<distRootBits-1)]
		if de&kindMask == kindLink<<12 {
			de = dsub[entryValue(de)+uint32(b>>distRootBits)&(1<<entryExtra(de)-1)]
		}
		if de&kindMask != kindLength<<12 {
			break
		}
		distance, dt := withExtra(de, b)
		if distance > n {
			break
		}
		bits = b >> (dt & 63)
		nb -= lt + dt
		if n-distance < taintEnd {
			d.taintMatch(n, distance, length)
			taintEnd = d.taintEnd
		}
		copyMatch(out, n, distance, length)
		n += length
		d.reportAt(n)
	}
	d.n, d.pos, d.bits, d.nb = n, pos, bits, nb
	return end
}
