package inflate

// Adler32 is the Adler-32 checksum of p (RFC 1950, section 8.2): with
// A = 1 + Σ p[i] and B = Σ A after each byte, both mod 65521, it is
// B·65536 + A. The sums are reduced only every 5552 bytes, the most that
// cannot overflow 32 bits.
//
// References:
//   - P. Deutsch, J.-L. Gailly, "ZLIB Compressed Data Format Specification
//     version 3.3", RFC 1950, 1996, section 8.2.
func Adler32(p []byte) uint32 {
	const mod, nmax = 65521, 5552
	a, b := uint32(1), uint32(0)
	for len(p) > 0 {
		chunk := p[:min(len(p), nmax)]
		p = p[len(chunk):]
		for _, v := range chunk {
			a += uint32(v)
			b += a
		}
		a %= mod
		b %= mod
	}
	return b<<16 | a
}
