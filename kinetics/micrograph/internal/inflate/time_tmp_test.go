package inflate

import (
	"bytes"
	"compress/zlib"
	"io"
	"os"
	"testing"
	"time"
)

func TestTimeTmp(t *testing.T) {
	f := os.Getenv("FOILRUN_BENCH_PNG")
	if f == "" {
		t.Skip()
	}
	data, _ := os.ReadFile(f)
	src := idat(t, data)
	out, _ := reference(src, 1<<30)
	dst := make([]byte, len(out))
	best, bestStd, bestA := time.Hour, time.Hour, time.Hour
	for range 15 {
		t0 := time.Now()
		if _, err := Zlib(dst, src, 64<<10, nil); err != nil {
			t.Fatal(err)
		}
		best = min(best, time.Since(t0))
		t0 = time.Now()
		Adler32(dst)
		bestA = min(bestA, time.Since(t0))
		t0 = time.Now()
		z, _ := zlib.NewReader(bytes.NewReader(src))
		io.ReadFull(z, dst)
		bestStd = min(bestStd, time.Since(t0))
	}
	mb := float64(len(out)) / 1e6
	t.Logf("ours %v (%.0f MB/s) adler %v std %v (%.0f MB/s)", best, mb/best.Seconds(), bestA, bestStd, mb/bestStd.Seconds())
}
