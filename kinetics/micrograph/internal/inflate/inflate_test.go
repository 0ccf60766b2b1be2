package inflate

import (
	"bytes"
	"compress/flate"
	"compress/zlib"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/adler32"
	"io"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"testing"
)

// The reference for every test here is the standard library's
// compress/zlib, an independent implementation of RFC 1950/1951: our
// output must equal its output byte for byte, and we must fail where it
// fails.

// reference inflates src with compress/zlib, reading at most limit bytes.
func reference(src []byte, limit int) ([]byte, error) {
	z, err := zlib.NewReader(bytes.NewReader(src))
	if err != nil {
		return nil, err
	}
	out, err := io.ReadAll(io.LimitReader(z, int64(limit)))
	if err != nil {
		return out, err
	}
	if len(out) == limit {
		return out, ErrTooLong
	}
	return out, nil
}

// agree checks that Zlib gives exactly compress/zlib's output for a
// stream zlib accepts, and refuses a buffer one byte short.
func agree(t *testing.T, src []byte) {
	t.Helper()
	want, err := reference(src, 1<<26)
	if err != nil {
		t.Fatalf("compress/zlib refuses the stream (%v); the case tests nothing", err)
	}
	got := make([]byte, len(want))
	res, err := Zlib(got, src, 1, nil)
	if err != nil {
		t.Fatalf("got error %v, want %d bytes", err, len(want))
	}
	if res.N != len(want) || !bytes.Equal(got, want) {
		t.Fatalf("got %d bytes, want compress/zlib's %d (first difference at %d)", res.N, len(want), firstDiff(got, want))
	}
	if res.Used > len(src) {
		t.Fatalf("got %d bytes used, input has %d", res.Used, len(src))
	}
	if res2, sum, err := Inflate(got, src, 1, nil); err != nil || res2 != res || sum != adler32.Checksum(want) {
		t.Fatalf("Inflate: got %+v, checksum %08x, error %v; want %+v, hash/adler32's %08x", res2, sum, err, res, adler32.Checksum(want))
	}
	for _, a := range arrivals(len(src)) {
		got2 := make([]byte, len(want))
		res2, sum, err := InflateArriving(got2, src, a.wait, 1, nil)
		if err != nil || res2 != res || sum != adler32.Checksum(want) || !bytes.Equal(got2, want) {
			t.Fatalf("arriving %s: got %+v, checksum %08x, error %v; want %+v, hash/adler32's %08x", a.name, res2, sum, err, res, adler32.Checksum(want))
		}
	}
	if len(want) > 0 {
		if _, err := Zlib(make([]byte, len(want)-1), src, 1, nil); !errors.Is(err, ErrTooLong) {
			t.Fatalf("buffer one byte short: got %v, want ErrTooLong", err)
		}
	}
}

func firstDiff(a, b []byte) int {
	for i := range min(len(a), len(b)) {
		if a[i] != b[i] {
			return i
		}
	}
	return min(len(a), len(b))
}

func compress(t testing.TB, data []byte, level int) []byte {
	var b bytes.Buffer
	w, err := zlib.NewWriterLevel(&b, level)
	if err != nil {
		t.Fatal(err)
	}
	w.Write(data)
	w.Close()
	return b.Bytes()
}

// inputs are varied data: random bytes, runs, text, image-like rows, and
// data whose repeats are 32768 bytes apart.
func inputs() map[string][]byte {
	r := rand.New(rand.NewPCG(1, 2))
	random := make([]byte, 100_000)
	for i := range random {
		random[i] = byte(r.Uint32())
	}
	var runs []byte
	for len(runs) < 200_000 {
		runs = append(runs, bytes.Repeat([]byte{byte(r.IntN(4))}, 1+r.IntN(600))...)
	}
	text := []byte(strings.Repeat("Graphene grows on copper foil at 1000 °C in hydrogen and methane; ", 3000))
	var rows []byte
	for y := range 300 {
		rows = append(rows, byte(y%5))
		for x := range 1000 {
			rows = append(rows, byte(128+40*((x/37+y/29)%2)+r.IntN(9)))
		}
	}
	far := make([]byte, 32768)
	for i := range far {
		far[i] = byte(r.Uint32())
	}
	far = append(far, far[:5000]...)
	return map[string][]byte{
		"empty": {}, "one byte": {42}, "258 bytes": bytes.Repeat([]byte("ab"), 129),
		"random": random, "runs": runs, "text": text, "image rows": rows, "distance 32768": far,
	}
}

// TestZlibLevels: streams compress/zlib makes at every level (0 is stored
// blocks only, HuffmanOnly literal codes only) over varied data.
func TestZlibLevels(t *testing.T) {
	t.Parallel()
	levels := []int{zlib.HuffmanOnly, 0, 1, 2, 3, 4, 5, 6, 7, 8, 9}
	for name, data := range inputs() {
		for _, level := range levels {
			t.Run(name+"/"+levelName(level), func(t *testing.T) {
				t.Parallel()
				agree(t, compress(t, data, level))
			})
		}
	}
}

func levelName(l int) string {
	if l == zlib.HuffmanOnly {
		return "huffman-only"
	}
	return "level" + string(rune('0'+l))
}

// TestZlibRepoPNGs: the image data (all IDAT chunks) of every PNG file in
// the repository.
func TestZlibRepoPNGs(t *testing.T) {
	t.Parallel()
	root := filepath.Join("..", "..", "..", "..")
	var files []string
	filepath.WalkDir(root, func(p string, e fs.DirEntry, err error) error {
		if err == nil && !e.IsDir() && strings.HasSuffix(p, ".png") {
			files = append(files, p)
		}
		return nil
	})
	if len(files) == 0 {
		t.Fatal("no PNG files found in the repository")
	}
	for _, f := range files {
		t.Run(f, func(t *testing.T) {
			data, err := os.ReadFile(f)
			if err != nil {
				t.Fatal(err)
			}
			agree(t, idat(t, data))
		})
	}
}

// idat joins the data of a PNG's IDAT chunks.
func idat(t testing.TB, png []byte) []byte {
	var out []byte
	for p := 8; p+12 <= len(png); {
		n := int(binary.BigEndian.Uint32(png[p:]))
		if p+12+n > len(png) {
			break
		}
		if string(png[p+4:p+8]) == "IDAT" {
			out = append(out, png[p+8:p+8+n]...)
		}
		p += 12 + n
	}
	if len(out) == 0 {
		t.Fatal("no IDAT chunk")
	}
	return out
}

// TestFixedHuffman: hand-made fixed-Huffman blocks with the extreme
// lengths and distances.
func TestFixedHuffman(t *testing.T) {
	t.Parallel()
	cases := []struct {
		name   string
		tokens []token
	}{
		{"empty", nil},
		{"one literal", []token{{lit: 'x'}}},
		{"length 258 distance 1", []token{{lit: 'a'}, {length: 258, dist: 1}}},
		{"length 3 distance 2", []token{{lit: 'a'}, {lit: 'b'}, {length: 3, dist: 2}}},
		{"every length", everyLength()},
		{"distance 32768", far32768()},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			agree(t, fixedStream(c.tokens, true))
		})
	}
}

func everyLength() []token {
	tk := []token{{lit: 1}, {lit: 2}, {lit: 3}, {lit: 4}, {lit: 5}, {lit: 6}, {lit: 7}, {lit: 8}, {lit: 9}}
	for l := 3; l <= 258; l++ {
		tk = append(tk, token{length: l, dist: 1 + l%9}, token{lit: byte(l)})
	}
	return tk
}

func far32768() []token {
	var tk []token
	for i := range 32768 {
		tk = append(tk, token{lit: byte(i * 7 >> 3)})
	}
	return append(tk, token{length: 100, dist: 32768})
}

// TestCorrupt: damaged streams are refused, as compress/zlib refuses them.
func TestCorrupt(t *testing.T) {
	t.Parallel()
	good := compress(t, []byte(strings.Repeat("copper foil, ", 500)), 6)
	trunc := func(n int) []byte { return good[:len(good)-n] }
	flip := func(i int) []byte { b := bytes.Clone(good); b[i] ^= 0x10; return b }
	cases := []struct {
		name string
		src  []byte
		want error // nil: any *CorruptError
	}{
		{"empty", nil, ErrTruncated},
		{"bad header check", []byte{0x78, 0x9d, 3, 0}, nil},
		{"not deflate", []byte{0x79, 0x18, 3, 0}, nil},
		{"no checksum", trunc(4), ErrTruncated},
		{"half a checksum", trunc(2), ErrTruncated},
		{"bad checksum", flip(len(good) - 1), ErrChecksum},
		{"cut in the data", good[:len(good)/2], ErrTruncated},
		{"block type 3", append([]byte{0x78, 0x9c}, 0x07), nil},
		{"stored length complement", []byte{0x78, 0x9c, 0x01, 0x05, 0x00, 0xfa, 0xfe}, nil},
		{"distance before the start", fixedStream([]token{{lit: 'a'}, {length: 3, dist: 2}}, true), nil},
		{"literal/length symbol 286", fixedStream([]token{{sym: 286}}, false), nil},
		{"distance symbol 30", fixedStream([]token{{lit: 'a'}, {length: 3, dist: 1, dsym: 30}}, false), nil},
		{"over-subscribed code lengths", dynamicHeader([19]uint8{1, 1, 1}), nil},
		{"incomplete code lengths", dynamicHeader([19]uint8{2, 2, 2}), nil},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			t.Parallel()
			if _, refErr := reference(c.src, 1<<20); refErr == nil {
				t.Fatal("compress/zlib accepts the stream; the case tests nothing")
			}
			_, err := Zlib(make([]byte, 1<<16), c.src, 1, nil)
			var ce *CorruptError
			switch {
			case c.want == nil && !errors.As(err, &ce):
				t.Fatalf("got %v, want a *CorruptError", err)
			case c.want != nil && !errors.Is(err, c.want):
				t.Fatalf("got %v, want %v", err, c.want)
			}
		})
	}
}

// TestMutations: random bit flips and cuts of valid streams; our decoder
// fails exactly when compress/zlib fails, and agrees with it otherwise.
func TestMutations(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	var seeds [][]byte
	for _, data := range inputs() {
		if len(data) > 5000 {
			data = data[:5000]
		}
		for _, level := range []int{zlib.HuffmanOnly, 0, 1, 6, 9} {
			seeds = append(seeds, compress(t, data, level))
		}
	}
	for i := range 3000 {
		src := bytes.Clone(seeds[i%len(seeds)])
		for range 1 + r.IntN(3) {
			if len(src) > 0 {
				src[r.IntN(len(src))] ^= 1 << r.IntN(8)
			}
		}
		if r.IntN(4) == 0 {
			src = src[:r.IntN(len(src)+1)]
		}
		compare(t, src)
	}
}

// arrival is a way for the input of InflateArriving to come in.
type arrival struct {
	name string
	wait func(n int) int
}

// arrivals are ways for n bytes of input to come in: exactly the bytes
// asked for, in pieces of 1, 7 and 4096 bytes at least, and all at once.
// Each is safe for concurrent use, as a split stream needs.
func arrivals(n int) []arrival {
	var out []arrival
	out = append(out, arrival{"as asked", func(k int) int { return min(k, n) }})
	for _, step := range []int{1, 7, 4096} {
		var mu sync.Mutex
		got := 0
		out = append(out, arrival{fmt.Sprintf("in pieces of %d", step), func(k int) int {
			mu.Lock()
			defer mu.Unlock()
			for got < k && got < n {
				got = min(got+step, n)
			}
			return got
		}})
	}
	return append(out, arrival{"at once", func(int) int { return n }})
}

// scratch is compare's output buffer, shared: callers are not parallel.
var scratch [1 << 18]byte

// compare is the fuzz property: with the same output room, our decoder
// fails exactly when compress/zlib does, and otherwise writes what it
// writes.
func compare(t *testing.T, src []byte) {
	t.Helper()
	want, refErr := reference(src, len(scratch)+1)
	got := scratch[:]
	res, err := Zlib(got, src, 1, nil)
	switch {
	case refErr != nil && err == nil:
		t.Fatalf("stream % x: got %d bytes, want an error as compress/zlib gives (%v)", src, res.N, refErr)
	case refErr == nil && err != nil:
		t.Fatalf("stream % x: got error %v, want compress/zlib's %d bytes", src, err, len(want))
	case refErr == nil && !bytes.Equal(got[:res.N], want):
		t.Fatalf("stream % x: got %d bytes, want compress/zlib's %d", src, res.N, len(want))
	}
	// The same stream arriving in pieces gives the same answer: one way
	// of arriving for each stream, in turn by its length.
	whole := slices.Clone(got[:res.N])
	// Split in the middle, the same answer: the second part either
	// starts at a real block or is dropped, and never changes the result.
	if len(src) > 8 {
		res2, sum, _, err2 := inflateSplit(got, src, nil, 1, nil, splitPlan{len(src) / 2, true})
		if err2 == nil && sum != Adler32(got[:res2.N]) {
			res2, err2 = Result{N: res2.N}, ErrChecksum // as Zlib reports it
		}
		if res2 != res || fmt.Sprint(err2) != fmt.Sprint(err) || (err == nil && !bytes.Equal(got[:res.N], whole)) {
			t.Fatalf("stream % x split at %d: got %+v, %v; want %+v, %v", src, len(src)/2, res2, err2, res, err)
		}
	}
	ways := arrivals(len(src))
	for _, a := range ways[len(src)%len(ways):][:1] {
		res2, err2 := zlibArriving(got, src, a.wait)
		if res2 != res || fmt.Sprint(err2) != fmt.Sprint(err) || (err == nil && !bytes.Equal(got[:res.N], whole)) {
			t.Fatalf("stream % x arriving %s: got %+v, %v; want %+v, %v", src, a.name, res2, err2, res, err)
		}
	}
}

// zlibArriving is Zlib of an arriving stream.
func zlibArriving(dst, src []byte, wait func(int) int) (Result, error) {
	res, sum, err := InflateArriving(dst, src, wait, 1, nil)
	if err == nil && sum != Adler32(dst[:res.N]) {
		return Result{N: res.N}, ErrChecksum
	}
	return res, err
}

// FuzzZlib: never panics; the same answer as compress/zlib on any input.
func FuzzZlib(f *testing.F) {
	for _, level := range []int{zlib.HuffmanOnly, 0, 1, 9} {
		f.Add(compress(f, []byte("graphene on copper, graphene on copper"), level))
	}
	f.Add(fixedStream(everyLength(), true))
	f.Add([]byte{0x78, 0x9c, 0x03, 0x00, 0x00, 0x00, 0x00, 0x01})
	f.Fuzz(func(t *testing.T, src []byte) {
		compare(t, src)
	})
}

// BenchmarkZlibOurs and BenchmarkZlibStd inflate the same stream: the
// image data of the PNG file named by $FOILRUN_BENCH_PNG (for the 4096²
// benchmark micrograph: go run ./cmd/foilrun/internal/benchdata
// micrograph FILE), or else image-like rows compressed as a PNG encoder
// does (default level).
func benchStream(b *testing.B) ([]byte, int) {
	if f := os.Getenv("FOILRUN_BENCH_PNG"); f != "" {
		data, err := os.ReadFile(f)
		if err != nil {
			b.Fatal(err)
		}
		src := idat(b, data)
		out, err := reference(src, 1<<30)
		if err != nil {
			b.Fatal(err)
		}
		return src, len(out)
	}
	data := inputs()["image rows"]
	for len(data) < 8<<20 {
		data = append(data, data...)
	}
	return compress(b, data, flate.DefaultCompression), len(data)
}

func BenchmarkZlibOurs(b *testing.B) {
	src, n := benchStream(b)
	dst := make([]byte, n)
	b.SetBytes(int64(n))
	for b.Loop() {
		if _, err := Zlib(dst, src, 64<<10, nil); err != nil {
			b.Fatal(err)
		}
	}
}

func BenchmarkZlibStd(b *testing.B) {
	src, n := benchStream(b)
	dst := make([]byte, n)
	b.SetBytes(int64(n))
	for b.Loop() {
		z, err := zlib.NewReader(bytes.NewReader(src))
		if err != nil {
			b.Fatal(err)
		}
		if _, err := io.ReadFull(z, dst); err != nil {
			b.Fatal(err)
		}
	}
}

// TestAdler32: against the standard library's hash/adler32 (an
// independent implementation of RFC 1950, section 8.2) on random bytes and
// on all-0xff bytes (the largest sums), at every length up to 100, around
// the 5552-byte reduction interval and over a few MB.
func TestAdler32(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(7, 8))
	random := make([]byte, 3<<20+5)
	for i := range random {
		random[i] = byte(r.Uint32())
	}
	ones := bytes.Repeat([]byte{0xff}, len(random))
	lengths := []int{5551, 5552, 5553, 5552*3 + 7, 1 << 20, len(random)}
	for n := range 101 {
		lengths = append(lengths, n)
	}
	for name, data := range map[string][]byte{"random": random, "0xff": ones} {
		for _, n := range lengths {
			want := adler32.Checksum(data[:n])
			if got := Adler32(data[:n]); got != want {
				t.Errorf("%s, %d bytes: got %08x, want hash/adler32's %08x", name, n, got, want)
			}
			// In two pieces, split anywhere: the sums chain.
			if cut := n / 3; Adler32Update(Adler32(data[:cut]), data[cut:n]) != want {
				t.Errorf("%s, %d bytes cut at %d: got %08x, want hash/adler32's %08x", name, n, cut,
					Adler32Update(Adler32(data[:cut]), data[cut:n]), want)
			}
		}
	}
}
