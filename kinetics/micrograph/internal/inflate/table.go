package inflate

import "math/bits"

// A table entry is one uint32:
//
//	bits 0–7    code length in bits (for a link: unused)
//	bits 8–11   extra bits after the code (for a link: the sub-table's index bits)
//	bits 12–15  kind: literal, length, end of block, link, invalid
//	bits 16–31  literal byte, length or distance base, or the sub-table's offset
//
// so that one look-up gives the symbol's meaning and how many bits it and
// its extra bits take.
const (
	kindLiteral = iota
	kindLength  // a length code in a literal/length table, any code in a distance table
	kindEnd
	kindLink
	kindInvalid
)

func entry(kind, extra, value uint32) uint32 { return kind<<12 | extra<<8 | value<<16 }

func entryLen(e uint32) uint   { return uint(e & 0xff) }
func entryExtra(e uint32) uint { return uint(e>>8) & 0xf }
func entryKind(e uint32) uint32 {
	return (e >> 12) & 0xf
}
func entryValue(e uint32) uint32 { return e >> 16 }

var invalidEntry = entry(kindInvalid, 0, 0)

// Root sizes of the look-up tables: a code no longer than this is decoded
// by one look-up, a longer one by a second look-up in a sub-table.
const (
	litRootBits   = 10
	distRootBits  = 8
	clenRootBits  = 7
	maxCodeLength = 15
)

// Literal/length and distance meanings (RFC 1951, section 3.2.5).
var (
	lengthBase  = [29]uint32{3, 4, 5, 6, 7, 8, 9, 10, 11, 13, 15, 17, 19, 23, 27, 31, 35, 43, 51, 59, 67, 83, 99, 115, 131, 163, 195, 227, 258}
	lengthExtra = [29]uint32{0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2, 3, 3, 3, 3, 4, 4, 4, 4, 5, 5, 5, 5, 0}
	distBase    = [30]uint32{1, 2, 3, 4, 5, 7, 9, 13, 17, 25, 33, 49, 65, 97, 129, 193, 257, 385, 513, 769, 1025, 1537, 2049, 3073, 4097, 6145, 8193, 12289, 16385, 24577}
	distExtra   = [30]uint32{0, 0, 0, 0, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6, 6, 7, 7, 8, 8, 9, 9, 10, 10, 11, 11, 12, 12, 13, 13}
)

// Symbol meanings without their code lengths: litMeaning for the 288
// literal/length symbols (286 and 287 are invalid), distMeaning for the 32
// distance symbols (30 and 31 are invalid), clenMeaning for the 19
// code-length symbols.
var litMeaning, distMeaning, clenMeaning = func() (lit [288]uint32, dist [32]uint32, clen [19]uint32) {
	for i := range 256 {
		lit[i] = entry(kindLiteral, 0, uint32(i))
	}
	lit[256] = entry(kindEnd, 0, 0)
	for i := range 29 {
		lit[257+i] = entry(kindLength, lengthExtra[i], lengthBase[i])
	}
	lit[286], lit[287] = invalidEntry, invalidEntry
	for i := range 30 {
		dist[i] = entry(kindLength, distExtra[i], distBase[i])
	}
	dist[30], dist[31] = invalidEntry, invalidEntry
	for i := range clen {
		clen[i] = entry(kindLiteral, 0, uint32(i))
	}
	return
}()

// table is a two-level Huffman decoding table: root is indexed by the
// next rootBits bits of input (codes are stored bit-reversed, as DEFLATE
// sends them), and a root entry of kind link points into sub.
type table struct {
	rootBits uint
	root     [1 << litRootBits]uint32 // the first 1<<rootBits entries are used
	sub      []uint32
	pairs    *[1 << litRootBits]uint32 // literal/length tables: see buildPairs
}

// A pair entry (buildPairs) is one uint32:
//
//	bits 0–7    bits taken by the literals
//	bits 8–9    number of literals, 0 to 2
//	bits 16–23  the first literal
//	bits 24–31  the second literal
const pairCount = 3 << 8

// buildPairs fills t.pairs, for a literal/length table built by build: the
// entry for the next litRootBits bits of input gives the literals they
// begin with when the first is a literal of a root entry, and the second
// too when it is one whose code ends within the same bits, so that the
// fast loop takes two literals with one look-up.
func (t *table) buildPairs() {
	if t.pairs == nil {
		t.pairs = new([1 << litRootBits]uint32)
	}
	for i := range t.pairs {
		e := t.root[i]
		if entryKind(e) != kindLiteral {
			t.pairs[i] = 0
			continue
		}
		l1 := entryLen(e)
		p := uint32(l1) | 1<<8 | entryValue(e)<<16
		// The bits after the first code; those beyond the root's are not
		// known, so the second code must end within them.
		if e2 := t.root[i>>l1]; entryKind(e2) == kindLiteral && l1+entryLen(e2) <= litRootBits {
			p = uint32(l1+entryLen(e2)) | 2<<8 | entryValue(e)<<16 | entryValue(e2)<<24
		}
		t.pairs[i] = p
	}
}

func newTable(rootBits uint) *table {
	return &table{rootBits: rootBits}
}

// build makes the canonical Huffman code of the code lengths (RFC 1951,
// section 3.2.2) and fills the table with meaning[symbol] | length. It
// reports false for a code that is over-subscribed or incomplete; like
// zlib it accepts an empty code (every look-up is then invalid) and a code
// of one symbol of length 1 (the other bit is invalid).
func (t *table) build(lengths []uint8, meaning []uint32) bool {
	var count [maxCodeLength + 1]int
	longest := 0
	for _, l := range lengths {
		count[l]++
		longest = max(longest, int(l))
	}
	count[0] = 0
	for i := range 1 << t.rootBits {
		t.root[i] = invalidEntry
	}
	t.sub = t.sub[:0]
	if longest == 0 {
		return true
	}
	var next [maxCodeLength + 1]int
	code := 0
	for l := 1; l <= longest; l++ {
		code = (code + count[l-1]) << 1
		next[l] = code
	}
	if total := next[longest] + count[longest]; total != 1<<longest && (total != 1 || longest != 1) {
		return false
	}
	var codes [288]uint16
	var subLen [1 << litRootBits]uint8 // longest code under each root index
	rootMask := 1<<t.rootBits - 1
	for s, l := range lengths {
		if l == 0 {
			continue
		}
		c := next[l]
		next[l]++
		codes[s] = uint16(bits.Reverse16(uint16(c)) >> (16 - l))
		if uint(l) > t.rootBits {
			p := int(codes[s]) & rootMask
			subLen[p] = max(subLen[p], l)
		}
	}
	for s, l := range lengths {
		if l == 0 {
			continue
		}
		t.place(int(codes[s]), uint(l), meaning[s]|uint32(l), &subLen)
	}
	return true
}

// place writes entry e of the reversed code r of length l into every slot
// it decodes, making the sub-table of r's root index on first use.
func (t *table) place(r int, l uint, e uint32, subLen *[1 << litRootBits]uint8) {
	if l <= t.rootBits {
		for i := r; i < 1<<t.rootBits; i += 1 << l {
			t.root[i] = e
		}
		return
	}
	p := r & (1<<t.rootBits - 1)
	link := t.root[p]
	if entryKind(link) != kindLink {
		subBits := uint32(subLen[p]) - uint32(t.rootBits)
		link = entry(kindLink, subBits, uint32(len(t.sub)))
		t.root[p] = link
		for range 1 << subBits {
			t.sub = append(t.sub, invalidEntry)
		}
	}
	sub := t.sub[entryValue(link) : int(entryValue(link))+1<<entryExtra(link)]
	for i := r >> t.rootBits; i < len(sub); i += 1 << (l - t.rootBits) {
		sub[i] = e
	}
}

// lookup decodes the entry for the next bits of input.
func (t *table) lookup(b uint64) uint32 {
	e := t.root[b&(1<<t.rootBits-1)&(1<<litRootBits-1)]
	if entryKind(e) == kindLink {
		e = t.sub[entryValue(e)+uint32(b>>t.rootBits)&(1<<entryExtra(e)-1)]
	}
	return e
}

// Fixed Huffman codes (RFC 1951, section 3.2.6), built once.
var fixedLit, fixedDist = func() (*table, *table) {
	var lengths [288]uint8
	for i := range lengths {
		switch {
		case i < 144:
			lengths[i] = 8
		case i < 256:
			lengths[i] = 9
		case i < 280:
			lengths[i] = 7
		default:
			lengths[i] = 8
		}
	}
	lit := newTable(litRootBits)
	lit.build(lengths[:], litMeaning[:])
	lit.buildPairs()
	var dl [32]uint8
	for i := range dl {
		dl[i] = 5
	}
	dist := newTable(distRootBits)
	dist.build(dl[:], distMeaning[:])
	return lit, dist
}()
