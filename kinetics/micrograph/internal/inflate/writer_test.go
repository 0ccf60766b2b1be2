package inflate

import (
	"encoding/binary"
	"hash/adler32"
	"math/bits"
)

// A tiny DEFLATE writer for hand-made streams: fixed-Huffman blocks of
// given tokens (RFC 1951, section 3.2.6) and dynamic block headers.

// token is a literal or a match; sym and dsym, when set, replace the
// symbol written for the literal/length or the distance (to write
// invalid ones).
type token struct {
	lit          byte
	length, dist int
	sym, dsym    int
}

type bitWriter struct {
	out  []byte
	acc  uint64
	nacc uint
}

func (w *bitWriter) bits(v uint64, n uint) {
	w.acc |= v << w.nacc
	w.nacc += n
	for w.nacc >= 8 {
		w.out = append(w.out, byte(w.acc))
		w.acc >>= 8
		w.nacc -= 8
	}
}

// code writes a Huffman code, most significant bit first.
func (w *bitWriter) code(c uint64, n uint) {
	w.bits(uint64(bits.Reverse16(uint16(c))>>(16-n)), n)
}

func (w *bitWriter) flush() []byte {
	if w.nacc > 0 {
		w.bits(0, 8-w.nacc)
	}
	return w.out
}

func (w *bitWriter) fixedSymbol(s int) {
	switch {
	case s < 144:
		w.code(uint64(0x30+s), 8)
	case s < 256:
		w.code(uint64(0x190+s-144), 9)
	case s < 280:
		w.code(uint64(s-256), 7)
	default:
		w.code(uint64(0xc0+s-280), 8)
	}
}

// fixedStream is a zlib stream of one fixed-Huffman block holding the
// tokens; with valid set, its checksum is that of the data the tokens
// stand for.
func fixedStream(tokens []token, valid bool) []byte {
	w := &bitWriter{out: []byte{0x78, 0x9c}}
	w.bits(1, 1) // last block
	w.bits(1, 2) // fixed Huffman
	var data []byte
	for _, tk := range tokens {
		switch {
		case tk.sym != 0:
			w.fixedSymbol(tk.sym)
		case tk.length == 0:
			w.fixedSymbol(int(tk.lit))
			data = append(data, tk.lit)
		default:
			i := 28
			for int(lengthBase[i]) > tk.length {
				i--
			}
			w.fixedSymbol(257 + i)
			w.bits(uint64(tk.length-int(lengthBase[i])), uint(lengthExtra[i]))
			j := 29
			for int(distBase[j]) > tk.dist {
				j--
			}
			if tk.dsym != 0 {
				w.code(uint64(tk.dsym), 5)
			} else {
				w.code(uint64(j), 5)
				w.bits(uint64(tk.dist-int(distBase[j])), uint(distExtra[j]))
			}
			for range tk.length {
				if len(data) >= tk.dist {
					data = append(data, data[len(data)-tk.dist])
				} else {
					data = append(data, 0)
				}
			}
		}
	}
	w.fixedSymbol(256)
	out := w.flush()
	sum := adler32.Checksum(data)
	if !valid {
		sum = 0
	}
	return binary.BigEndian.AppendUint32(out, sum)
}

// dynamicHeader is the start of a zlib stream whose one dynamic block
// has 257 literal/length and 1 distance codes and the given code-length
// code lengths, followed by some zero bytes.
func dynamicHeader(clen [19]uint8) []byte {
	w := &bitWriter{out: []byte{0x78, 0x9c}}
	w.bits(1, 1)
	w.bits(2, 2)
	w.bits(0, 5)
	w.bits(0, 5)
	w.bits(15, 4)
	for _, s := range clenOrder {
		w.bits(uint64(clen[s]), 3)
	}
	return append(w.flush(), make([]byte, 16)...)
}
