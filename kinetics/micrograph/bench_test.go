package micrograph

import (
	"image"
	"os"
	"runtime"
	"sync"
	"testing"
)

var (
	benchOnce sync.Once
	benchImg  *image.Gray
)

// benchImage is a 4096×4096 8-bit field with 64×64 separated domains
// (about 17 % coverage), gradient, texture and noise as in the tests.
func benchImage() *image.Gray {
	benchOnce.Do(func() {
		ds, _ := separated(4096, 4096, 64, 64, 71, true)
		s := scene{w: 4096, h: 4096, domains: ds, bare: 150, contrast: 0.75, gradient: 0.5, texture: 0.04, noise: 4, seed: 72}
		benchImg, _ = s.gray8()
	})
	return benchImg
}

// BenchmarkAnalyze4096 times Analyze on a decoded 4096×4096 8-bit image
// and reports the bytes it allocates per pixel (all allocations, an upper
// bound on what it holds at once).
func BenchmarkAnalyze4096(b *testing.B) {
	img := benchImage()
	pixels := float64(img.Bounds().Dx() * img.Bounds().Dy())
	s := Settings{PixelSize: testPixel}
	b.ReportAllocs()
	var before, after runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&before)
	b.ResetTimer()
	for b.Loop() {
		if _, err := Analyze(img, s); err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	runtime.ReadMemStats(&after)
	b.ReportMetric(float64(after.TotalAlloc-before.TotalAlloc)/float64(b.N)/pixels, "bytes/pixel")
}

func BenchmarkSmooth4096(b *testing.B) {
	p := toPlane(benchImage(), nil)
	for b.Loop() {
		smooth(p, DefaultSmoothRadius, numWorkers(p.h))
	}
}

// BenchmarkFlatten4096: fit of the illumination surface plus conversion
// to the flattened 16-bit plane.
func BenchmarkFlatten4096(b *testing.B) {
	img := benchImage()
	for b.Loop() {
		toPlane(img, fitBackground(img, DefaultDegree))
	}
}

// BenchmarkFitBackground4096: the fit of the illumination surface alone.
func BenchmarkFitBackground4096(b *testing.B) {
	img := benchImage()
	for b.Loop() {
		if fitBackground(img, DefaultDegree) == nil {
			b.Fatal("the fit failed")
		}
	}
}

// BenchmarkRunsOf4096: the runs of the domains (darker than Otsu's
// threshold) of the plane as Analyze makes it (flattened and smoothed),
// without labelling them.
func BenchmarkRunsOf4096(b *testing.B) {
	img := benchImage()
	p, hist := prepare(img, fitBackground(img, DefaultDegree), DefaultSmoothRadius, numWorkers(img.Bounds().Dy()))
	t, _ := Otsu(hist)
	for b.Loop() {
		runsOf(p, uint16(t), false)
	}
}

func BenchmarkLabel4096(b *testing.B) {
	p := toPlane(benchImage(), nil)
	t, _ := Otsu(histogram(p))
	for b.Loop() {
		runs, rowStart := runsOf(p, uint16(t), false)
		labelRuns(runs, rowStart, p.h)
	}
}

// averageRows are 64 rows of 4096 one-byte pixels for the unfiltering
// benchmarks (their values do not change the work).
func averageRows() [][]byte {
	rows := make([][]byte, 65)
	for i := range rows {
		rows[i] = make([]byte, 4096)
		for j := range rows[i] {
			rows[i][j] = byte(i*7 + j*13)
		}
	}
	return rows
}

// BenchmarkUnAverage and BenchmarkUnAverage2 reverse the Average filter
// on the same 64 rows below a first one, a row at a time and two at a
// time (pngrows.go), reporting nanoseconds a byte.
func BenchmarkUnAverage(b *testing.B) {
	rows := averageRows()
	for b.Loop() {
		for i := 1; i < len(rows); i++ {
			unAverage(rows[i], rows[i-1], 1)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/(64*4096), "ns/byte")
}

func BenchmarkUnAverage2(b *testing.B) {
	rows := averageRows()
	for b.Loop() {
		for i := 1; i+1 < len(rows); i += 2 {
			unAverage2(rows[i], rows[i+1], rows[i-1])
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/(64*4096), "ns/byte")
}

// benchFile is the PNG named by $FOILRUN_BENCH_PNG (the 4096² benchmark
// micrograph: go run ./cmd/foilrun/internal/benchdata micrograph FILE);
// without it the file benchmarks are skipped.
func benchFile(b *testing.B) string {
	f := os.Getenv("FOILRUN_BENCH_PNG")
	if f == "" {
		b.Skip("set FOILRUN_BENCH_PNG to a PNG file")
	}
	return f
}

// BenchmarkLoadFile times Load (read, inflate, unfilter) of the file.
func BenchmarkLoadFile(b *testing.B) {
	f := benchFile(b)
	for b.Loop() {
		if _, _, err := Load(f, Limits{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkLoadAnalyzeFile times Load then Analyze of the file, as
// `foilrun measure image FILE --pixel 0.5um` does.
func BenchmarkLoadAnalyzeFile(b *testing.B) {
	f := benchFile(b)
	for b.Loop() {
		img, _, err := Load(f, Limits{})
		if err != nil {
			b.Fatal(err)
		}
		if _, err := Analyze(img, Settings{PixelSize: 0.5e-6}); err != nil {
			b.Fatal(err)
		}
	}
}
