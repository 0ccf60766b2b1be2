package micrograph

import (
	"bytes"
	"compress/zlib"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/adler32"
	"hash/crc32"
	"image/png"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// The reference for the PNG decoder is the path it replaced: image/png's
// image converted by toPlane (convertRow), kept here. Every check below
// compares the two level for level.

// referencePlane decodes data with image/png and converts it to the
// working plane the old way. ok is false when image/png refuses the data.
func referencePlane(data []byte) (levels []uint16, depth int, err error) {
	img, err := png.Decode(bytes.NewReader(data))
	if err != nil {
		return nil, 0, err
	}
	p := toPlane(img, nil)
	return p.pix, bitDepth(img), nil
}

// decodedPlane decodes data with Decode and returns its levels.
func decodedPlane(data []byte, lim Limits) ([]uint16, int, error) {
	img, info, err := Decode(bytes.NewReader(data), lim)
	if err != nil {
		return nil, 0, err
	}
	p := toPlane(img, nil)
	return p.pix, info.BitDepth, nil
}

// pngSpec is one generated PNG: colour type and bit depth (PNG
// specification ISO/IEC 15948:2004, Table 11.1), the filter of every row
// (0–4, or 5 for a different filter on each row in turn) and the optional
// chunks.
type pngSpec struct {
	ctype, depth int
	filter       int
	w, h         int
	palette      int  // PLTE entries (colour type 3)
	trns         bool // a tRNS chunk
	idatSize     int  // split the image data into IDAT chunks of this size; 0 is one chunk
	interlaced   bool // Adam7
}

func (s pngSpec) String() string {
	name := fmt.Sprintf("type%d_depth%d_filter%d_%dx%d", s.ctype, s.depth, s.filter, s.w, s.h)
	if s.trns {
		name += "_trns"
	}
	if s.interlaced {
		name += "_adam7"
	}
	return name
}

func (s pngSpec) channels() int {
	return map[int]int{0: 1, 2: 3, 3: 1, 4: 2, 6: 4}[s.ctype]
}

// writeChunk appends a chunk: length, type, data, CRC-32 of type and data
// (section 5.3).
func writeChunk(b *bytes.Buffer, typ string, data []byte) {
	binary.Write(b, binary.BigEndian, uint32(len(data)))
	c := append([]byte(typ), data...)
	b.Write(c)
	binary.Write(b, binary.BigEndian, crc32.ChecksumIEEE(c))
}

// paeth is the Paeth predictor (section 9.4), written out as the
// specification's pseudocode.
func paeth(a, b, c byte) byte {
	p := int(a) + int(b) - int(c)
	pa, pb, pc := p-int(a), p-int(b), p-int(c)
	if pa < 0 {
		pa = -pa
	}
	if pb < 0 {
		pb = -pb
	}
	if pc < 0 {
		pc = -pc
	}
	if pa <= pb && pa <= pc {
		return a
	}
	if pb <= pc {
		return b
	}
	return c
}

// filterRow applies filter ft to raw given the raw row above (section
// 9.2, the forward direction the decoder undoes) and returns the filtered
// row led by its type byte.
func filterRow(ft int, raw, prior []byte, bpp int) []byte {
	out := []byte{byte(ft)}
	for i, x := range raw {
		var a, b, c byte
		if i >= bpp {
			a, c = raw[i-bpp], prior[i-bpp]
		}
		b = prior[i]
		switch ft {
		case 1:
			x -= a
		case 2:
			x -= b
		case 3:
			x -= byte((int(a) + int(b)) / 2)
		case 4:
			x -= paeth(a, b, c)
		}
		out = append(out, x)
	}
	return out
}

// encode writes the spec's PNG with random samples from rng.
func (s pngSpec) encode(rng *rand.Rand) []byte {
	var b bytes.Buffer
	b.WriteString(pngSignature)
	ihdr := make([]byte, 13)
	binary.BigEndian.PutUint32(ihdr[0:], uint32(s.w))
	binary.BigEndian.PutUint32(ihdr[4:], uint32(s.h))
	ihdr[8], ihdr[9] = byte(s.depth), byte(s.ctype)
	if s.interlaced {
		ihdr[12] = 1
	}
	writeChunk(&b, "IHDR", ihdr)
	bits := s.channels() * s.depth
	bpp := max(1, bits/8)
	rowBytes := (bits*s.w + 7) / 8
	pixels := func(w, h int) [][]byte {
		rows := make([][]byte, h)
		for y := range rows {
			rows[y] = make([]byte, (bits*w+7)/8)
			for i := range rows[y] {
				rows[y][i] = byte(rng.UintN(256))
			}
		}
		return rows
	}
	full := pixels(s.w, s.h)
	if s.ctype == 3 {
		pal := make([]byte, 3*s.palette)
		for i := range pal {
			pal[i] = byte(rng.UintN(256))
		}
		writeChunk(&b, "PLTE", pal)
	}
	if s.trns {
		var t []byte
		switch s.ctype {
		case 3:
			for range s.palette {
				t = append(t, byte(rng.UintN(256)))
			}
		case 0, 2:
			// the colour of a pixel that occurs, so that some pixels match
			n := 2 * s.channels()
			if s.depth == 16 {
				t = append(t, full[0][:n]...)
			} else {
				t = make([]byte, n)
				t[1] = full[0][0] >> (8 - s.depth)
			}
		}
		writeChunk(&b, "tRNS", t)
	}
	var raw bytes.Buffer
	z := zlib.NewWriter(&raw)
	n := 0
	emit := func(rows [][]byte) {
		prior := make([]byte, len(rows[0]))
		for _, r := range rows {
			ft := s.filter
			if ft == 5 {
				ft = n % 5
			}
			n++
			z.Write(filterRow(ft, r, prior, bpp))
			prior = r
		}
	}
	if s.interlaced {
		for _, p := range adam7 {
			pw := (s.w - p.x0 + p.dx - 1) / p.dx
			ph := (s.h - p.y0 + p.dy - 1) / p.dy
			if pw > 0 && ph > 0 {
				emit(pixels(pw, ph))
			}
		}
	} else {
		_ = rowBytes
		emit(full)
	}
	z.Close()
	data := raw.Bytes()
	step := s.idatSize
	if step <= 0 {
		step = len(data)
	}
	for len(data) > 0 {
		k := min(step, len(data))
		writeChunk(&b, "IDAT", data[:k])
		data = data[k:]
	}
	writeChunk(&b, "tEXt", []byte("Comment\x00generated for the decoder test"))
	writeChunk(&b, "IEND", nil)
	return b.Bytes()
}

// adam7 are the seven passes of Adam7 interlacing (section 8.2).
var adam7 = []struct{ x0, y0, dx, dy int }{
	{0, 0, 8, 8}, {4, 0, 8, 8}, {0, 4, 4, 8}, {2, 0, 4, 4}, {0, 2, 2, 4}, {1, 0, 2, 2}, {0, 1, 1, 2},
}

// generatedSpecs is every colour type × allowed bit depth × filter (each
// of the five and all five mixed), with and without tRNS where the colour
// type allows one, at an odd width so that packed rows end mid-byte.
func generatedSpecs() []pngSpec {
	depths := map[int][]int{0: {1, 2, 4, 8, 16}, 2: {8, 16}, 3: {1, 2, 4, 8}, 4: {8, 16}, 6: {8, 16}}
	var specs []pngSpec
	for _, ct := range []int{0, 2, 3, 4, 6} {
		for _, d := range depths[ct] {
			for f := range 6 {
				for _, trns := range []bool{false, true} {
					if trns && (ct == 4 || ct == 6) {
						continue // no tRNS with an alpha channel (section 11.3.2.1)
					}
					s := pngSpec{ctype: ct, depth: d, filter: f, w: 13, h: 9, trns: trns, idatSize: 50}
					if ct == 3 {
						s.palette = max(1, (1<<d)*3/4) // some indices beyond the palette
					}
					specs = append(specs, s)
				}
			}
		}
	}
	// Several batches of rows through the pipeline, and a 1-pixel image.
	specs = append(specs,
		pngSpec{ctype: 6, depth: 16, filter: 5, w: 300, h: 700, idatSize: 8192},
		pngSpec{ctype: 0, depth: 8, filter: 5, w: 4100, h: 40},
		pngSpec{ctype: 0, depth: 1, filter: 4, w: 1, h: 1})
	return specs
}

// TestDecodePNGMatchesReference: every generated PNG decodes to exactly
// the levels and bit depth image/png + convertRow give.
func TestDecodePNGMatchesReference(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(19, 1))
	for _, s := range generatedSpecs() {
		data := s.encode(rng) // in turn: the files come from one stream
		t.Run(s.String(), func(t *testing.T) {
			t.Parallel()
			comparePlanes(t, data)
		})
	}
}

// TestDecodePNGInterlaced: an Adam7 image goes through image/png and
// gives the same plane.
func TestDecodePNGInterlaced(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(19, 2))
	for _, s := range []pngSpec{
		{ctype: 0, depth: 8, filter: 5, w: 21, h: 17, interlaced: true},
		{ctype: 2, depth: 16, filter: 4, w: 9, h: 3, interlaced: true},
	} {
		t.Run(s.String(), func(t *testing.T) { comparePlanes(t, s.encode(rng)) })
	}
}

// TestDecodeTestdataPNGs: every PNG in the repository's testdata decodes
// to the reference plane.
func TestDecodeTestdataPNGs(t *testing.T) {
	t.Parallel()
	var files []string
	for _, pat := range []string{"testdata/*/*.png", "testdata/*.png", "../../testdata/*/*.png", "../../testdata/*/*/*.png", "../../cmd/foilrun/testdata/*.png"} {
		m, _ := filepath.Glob(pat)
		files = append(files, m...)
	}
	if len(files) < 4 {
		t.Fatalf("got %d PNG files under testdata, want at least the 4 Otsu images", len(files))
	}
	for _, f := range files {
		t.Run(f, func(t *testing.T) {
			data, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			comparePlanes(t, data)
		})
	}
}

// comparePlanes fails t unless Decode gives the reference plane for data.
func comparePlanes(t *testing.T, data []byte) {
	t.Helper()
	want, wantDepth, err := referencePlane(data)
	if err != nil {
		t.Fatalf("image/png refuses the test image: %v", err)
	}
	got, gotDepth, err := decodedPlane(data, Limits{})
	if err != nil {
		t.Fatalf("got error %v, want the image/png plane", err)
	}
	if gotDepth != wantDepth {
		t.Errorf("got bit depth %d, want %d", gotDepth, wantDepth)
	}
	if i := firstDifference(got, want); i >= 0 {
		t.Fatalf("got %d levels, level %d = %d, want %d levels, level %d = %d", len(got), i, at(got, i), len(want), i, at(want, i))
	}
}

func firstDifference(a, b []uint16) int {
	if slices.Equal(a, b) {
		return -1
	}
	for i := range min(len(a), len(b)) {
		if a[i] != b[i] {
			return i
		}
	}
	return min(len(a), len(b))
}

func at(v []uint16, i int) int {
	if i < len(v) {
		return int(v[i])
	}
	return -1
}

// TestDecodePNGCorrupt: damaged files are refused with an error wrapping
// ErrUnreadable that names the damage as image/png would, and never
// decoded.
func TestDecodePNGCorrupt(t *testing.T) {
	t.Parallel()
	good := pngSpec{ctype: 0, depth: 8, filter: 5, w: 40, h: 30, idatSize: 100}.encode(rand.New(rand.NewPCG(3, 3)))
	idat := bytes.Index(good, []byte("IDAT"))
	iend := bytes.Index(good, []byte("IEND"))
	idatCRC := idat + 4 + int(binary.BigEndian.Uint32(good[idat-4:])) // the first IDAT's CRC
	set := func(i int, v byte) []byte { b := slices.Clone(good); b[i] = v; return b }
	cases := []struct {
		name string
		data []byte
		text string
	}{
		{"IHDR checksum", set(29, good[29]^1), "decode image header: unreadable image: png: invalid format: invalid checksum"},
		{"bit depth 3", func() []byte {
			b := slices.Clone(good)
			b[24] = 3
			binary.BigEndian.PutUint32(b[29:], crc32.ChecksumIEEE(b[12:29]))
			return b
		}(), "png: unsupported feature: bit depth 3, color type 0"},
		{"IDAT checksum", set(idatCRC, good[idatCRC]^0x55), "decode png image: unreadable image: png: invalid format: invalid checksum"},
		{"truncated in the pixels", good[:idat+60], "decode png image: unreadable image"},
		{"no IEND", good[:iend-4], "decode png image: unreadable image: unexpected EOF"},
		{"pixels cut short", pngSpec{ctype: 0, depth: 8, w: 40, h: 30}.withRows(29), "not enough pixel data"},
		{"rows left over", pngSpec{ctype: 0, depth: 8, w: 40, h: 30}.withRows(31), "too much pixel data"},
		{"bad filter", pngSpec{ctype: 0, depth: 8, w: 40, h: 30, filter: 7}.withRows(30), "bad filter type"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, _, refErr := referencePlane(c.data)
			if refErr == nil {
				t.Fatalf("image/png accepts the damaged file; the case tests nothing")
			}
			_, _, err := Decode(bytes.NewReader(c.data), Limits{})
			if !errors.Is(err, ErrUnreadable) {
				t.Fatalf("got %v, want ErrUnreadable (image/png says %v)", err, refErr)
			}
			if !strings.Contains(err.Error(), c.text) {
				t.Errorf("got %q, want it to contain %q", err, c.text)
			}
		})
	}
}

// withRows writes an 8-bit gray PNG of the spec's size whose image data
// holds n rows, each of filter type s.filter (which may be invalid).
func (s pngSpec) withRows(n int) []byte {
	var b bytes.Buffer
	b.WriteString(pngSignature)
	ihdr := make([]byte, 13)
	binary.BigEndian.PutUint32(ihdr[0:], uint32(s.w))
	binary.BigEndian.PutUint32(ihdr[4:], uint32(s.h))
	ihdr[8] = 8
	writeChunk(&b, "IHDR", ihdr)
	var raw bytes.Buffer
	z := zlib.NewWriter(&raw)
	for range n {
		z.Write(append([]byte{byte(s.filter)}, make([]byte, s.w)...))
	}
	z.Close()
	writeChunk(&b, "IDAT", raw.Bytes())
	writeChunk(&b, "IEND", nil)
	return b.Bytes()
}

// TestDecodePNGOutgrown: image data longer than the room the decoder
// makes for it from the header (a stored-block stream's size) is read on
// and inflated again whole: here thousands of empty stored blocks (RFC
// 1951, section 3.2.4) come before the one holding the rows.
func TestDecodePNGOutgrown(t *testing.T) {
	t.Parallel()
	const w, h = 40, 30
	rng := rand.New(rand.NewPCG(23, 1))
	rows := make([]byte, h*(w+1)) // filter type 0 on every row
	for y := range h {
		for x := range w {
			rows[y*(w+1)+1+x] = byte(rng.Uint32())
		}
	}
	z := []byte{0x78, 0x01}
	for range 2 * len(rows) / 5 {
		z = append(z, 0x00, 0x00, 0x00, 0xff, 0xff) // an empty, not final, stored block
	}
	z = append(z, 0x01, byte(len(rows)), byte(len(rows)>>8), ^byte(len(rows)), ^byte(len(rows)>>8))
	z = append(z, rows...)
	z = binary.BigEndian.AppendUint32(z, adler32.Checksum(rows))
	var b bytes.Buffer
	b.WriteString(pngSignature)
	ihdr := make([]byte, 13)
	binary.BigEndian.PutUint32(ihdr[0:], w)
	binary.BigEndian.PutUint32(ihdr[4:], h)
	ihdr[8] = 8
	writeChunk(&b, "IHDR", ihdr)
	for len(z) > 0 {
		n := min(len(z), 1000)
		writeChunk(&b, "IDAT", z[:n])
		z = z[n:]
	}
	writeChunk(&b, "IEND", nil)
	comparePlanes(t, b.Bytes())
}
