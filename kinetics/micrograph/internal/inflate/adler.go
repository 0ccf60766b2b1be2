package inflate

import "encoding/binary"

// Adler32 is the Adler-32 checksum of p (RFC 1950, section 8.2): with
// A = 1 + Σ p[i] and B = Σ A after each byte, both mod 65521, it is
// B·65536 + A. The sums are reduced only every 5552 bytes, the most that
// cannot overflow 32 bits.
//
// Eight bytes v0 … v7 are taken at a time: they add
//
//	A += v0 + … + v7,   B += 8·A + 8·v0 + 7·v1 + … + 1·v7
//
// (A before the step), exactly what the byte-by-byte sums add. The two sums
// of a word are formed in 16-bit lanes (SWAR): the even and the odd bytes
// are masked into four lanes each, and one multiplication by a constant
// of four lane weights leaves the weighted sum of the lanes in the top
// lane (each lane sum stays below 2¹⁶, so no lane carries into the next).
//
// References:
//   - P. Deutsch, J.-L. Gailly, "ZLIB Compressed Data Format Specification
//     version 3.3", RFC 1950, 1996, section 8.2.
//   - H. S. Warren, Jr., "Hacker's Delight", 2nd ed., Addison-Wesley, 2012,
//     section 5-1 (summing the fields of a word by multiplication).
func Adler32(p []byte) uint32 { return Adler32Update(1, p) }

// Adler32Update returns the Adler-32 of the bytes whose checksum is sum
// followed by p (the checksum of no bytes is 1): Adler-32 is computed in
// one pass, so the sums of consecutive pieces chain.
func Adler32Update(sum uint32, p []byte) uint32 {
	const mod, nmax = 65521, 5552 // nmax is a multiple of 8
	a, b := sum&0xffff, sum>>16
	for len(p) > 0 {
		chunk := p[:min(len(p), nmax)]
		p = p[len(chunk):]
		for len(chunk) >= 8 {
			x := binary.LittleEndian.Uint64(chunk)
			chunk = chunk[8:]
			const lanes = 0x00ff00ff00ff00ff
			even, odd := x&lanes, x>>8&lanes // v0 v2 v4 v6 and v1 v3 v5 v7, lowest lane first
			sum := uint32((even + odd) * 0x0001000100010001 >> 48)
			// Weights 8 6 4 2 for the even bytes and 7 5 3 1 for the odd,
			// in reverse lane order so that lane k meets the weight of byte k.
			w := uint32(even*0x0008000600040002>>48) + uint32(odd*0x0007000500030001>>48)
			b += 8*a + w
			a += sum
		}
		for _, v := range chunk {
			a += uint32(v)
			b += a
		}
		a %= mod
		b %= mod
	}
	return b<<16 | a
}
