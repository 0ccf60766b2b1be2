package chart

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
)

// lowPressureSteps are the step spans (min) of templates/recipe-lowpressure.yaml
// as foilrun predict lays them out.
var lowPressureSteps = []Step{
	{"1 pump", 0, 0.208, false}, {"2 leak-check", 0.208, 5.208, false}, {"3 purge", 5.208, 15.208, false},
	{"4 ramp", 15.208, 63.958, false}, {"5 anneal", 63.958, 93.958, false}, {"6 grow", 93.958, 108.958, true},
	{"7 cool", 108.958, 200.958, false}, {"8 purge", 200.958, 210.958, false}, {"9 vent", 210.958, 211.31, false},
}

func TestZoomRange(t *testing.T) {
	tests := []struct {
		name   string
		steps  []Step
		lo, hi float64
		ok     bool
	}{
		// 15 min grow step widened by 15 % of 15 min = 2.25 min each side
		{"one grow step", lowPressureSteps, 91.708, 111.208, true},
		{"two carbon steps", []Step{{"1 a", 0, 100, false}, {"2 b", 100, 110, true}, {"3 c", 110, 120, true}, {"4 d", 120, 300, false}}, 97, 123, true},
		{"short step widened by at least 1 min", []Step{{"1 a", 0, 50, false}, {"2 b", 50, 52, true}, {"3 c", 52, 100, false}}, 49, 53, true},
		{"kept within the run", []Step{{"1 a", 0, 10, true}, {"2 b", 10, 100, false}}, 0, 11.5, true},
		{"no methane", []Step{{"1 a", 0, 10, false}}, 0, 0, false},
		{"methane nearly throughout", []Step{{"1 a", 0, 5, false}, {"2 b", 5, 95, true}, {"3 c", 95, 100, false}}, 0, 100, false},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			lo, hi, ok := ZoomRange(tc.steps)
			if ok != tc.ok || (ok && (math.Abs(lo-tc.lo) > 1e-9 || math.Abs(hi-tc.hi) > 1e-9)) {
				t.Errorf("got %g–%g %v, want %g–%g %v", lo, hi, ok, tc.lo, tc.hi, tc.ok)
			}
		})
	}
}

func TestPlaceNames(t *testing.T) {
	width := func(s string) vg.Length { return vg.Length(10 * len(s)) }
	tests := []struct {
		name  string
		names []string
		slots []nameSlot
		want  string // text@level, in order
	}{
		{"apart: all on the first row", []string{"1 a", "2 b"}, []nameSlot{{0, 50, 100}, {200, 250, 300}}, "1 a@0 2 b@0"},
		{"crowded: staggered", []string{"1 aa", "2 bb", "3 cc"}, []nameSlot{{0, 100, 100}, {100, 102, 104}, {104, 106, 108}}, "1 aa@0 2 bb@1 3 cc@2"},
		{"shifted beside a neighbour while over its step", []string{"1 pump", "4 ramp"}, []nameSlot{{0, 30, 60}, {60, 70, 200}}, "1 pump@0 4 ramp@0"},
		{"no room: cut to the number", []string{"1 aa", "2 bb", "3 cc", "4 dd"}, []nameSlot{{99, 100, 101}, {101, 102, 103}, {103, 104, 105}, {105, 106, 107}}, "1 aa@0 2 bb@1 3 cc@2 4@0"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			var got []string
			placed := placeNames(tc.names, tc.slots, width, 0, 1000)
			for _, q := range placed {
				got = append(got, q.text+"@"+string(rune('0'+q.level)))
			}
			if g := strings.Join(got, " "); g != tc.want {
				t.Errorf("got %s, want %s", g, tc.want)
			}
			for i, a := range placed {
				for _, b := range placed[i+1:] {
					if a.level == b.level && a.x0 < b.x1 && b.x0 < a.x1 && !strings.HasPrefix(tc.name, "no room") {
						t.Errorf("%q and %q overlap on row %d", a.text, b.text, a.level)
					}
				}
			}
		})
	}
}

func TestClip(t *testing.T) {
	xs, ys := clip([]float64{0, 10, 10, 20}, []float64{0, 100, 50, 50}, 5, 15)
	want := [][2]float64{{5, 50}, {10, 100}, {10, 50}, {15, 50}}
	if len(xs) != len(want) {
		t.Fatalf("got %d points %v %v, want %v", len(xs), xs, ys, want)
	}
	for i, w := range want {
		if xs[i] != w[0] || ys[i] != w[1] {
			t.Errorf("point %d: got (%g, %g), want (%g, %g)", i, xs[i], ys[i], w[0], w[1])
		}
	}
}

// ColorBrewer 2.0's 9-class YlGnBu runs from 255,255,217 to 8,29,88
// (colorbrewer2.org); the map must hit those ends and darken steadily.
func TestSequential(t *testing.T) {
	cm, err := Sequential(0, 100)
	if err != nil {
		t.Fatal(err)
	}
	ends := []struct {
		v    float64
		want color.RGBA
	}{{0, color.RGBA{255, 255, 217, 255}}, {100, color.RGBA{8, 29, 88, 255}}}
	for _, e := range ends {
		c, err := cm.At(e.v)
		if err != nil {
			t.Fatal(err)
		}
		r, g, b, _ := c.RGBA()
		if d := max(absDiff(r>>8, uint32(e.want.R)), absDiff(g>>8, uint32(e.want.G)), absDiff(b>>8, uint32(e.want.B))); d > 2 {
			t.Errorf("At(%g): got %d,%d,%d, want %v within 2", e.v, r>>8, g>>8, b>>8, e.want)
		}
	}
	prev := math.Inf(1)
	for v := 0.0; v <= 100; v += 5 {
		c, _ := cm.At(v)
		r, g, b, _ := c.RGBA()
		y := 0.2126*float64(r) + 0.7152*float64(g) + 0.0722*float64(b) // Rec. 709 luma
		if y >= prev {
			t.Errorf("At(%g) is not darker than the value before (luma %g ≥ %g)", v, y, prev)
		}
		prev = y
	}
}

func absDiff(a, b uint32) uint32 {
	if a > b {
		return a - b
	}
	return b - a
}

// writeFile creates path and lets write fill it.
func writeFile(path string, write func(io.Writer) error) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := write(f); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// decode reads a PNG and checks its size.
func decode(t *testing.T, path string, w, h int) image.Image {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("%s does not decode as PNG: %v", path, err)
	}
	if b := img.Bounds(); b.Dx() != w || b.Dy() != h {
		t.Errorf("%s: got %d×%d pixels, want %d×%d", filepath.Base(path), b.Dx(), b.Dy(), w, h)
	}
	return img
}

// count is the number of pixels of exactly colour c.
func count(img image.Image, c color.Color) int {
	n := 0
	r0, g0, b0, _ := c.RGBA()
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if r == r0 && g == g0 && bl == b0 {
				n++
			}
		}
	}
	return n
}

func profileFigure() TimeFigure {
	var ts, pc, ph, cov []float64
	for i, s := range lowPressureSteps {
		c, h := 0.0, 0.0
		if s.Carbon {
			c = 7.8
		}
		if i >= 3 && i <= 6 { // hydrogen from the ramp to the cool
			h = 4820
		}
		ts, pc, ph = append(ts, s.Start, s.End), append(pc, c, c), append(ph, h, h)
	}
	for t := 0.0; t <= 211.31; t += 0.1 {
		cov = append(cov, 100*(1-math.Exp(-math.Pow(math.Max(0, t-94)/1.2, 3))))
	}
	xs := make([]float64, len(cov))
	for i := range xs {
		xs[i] = float64(i) * 0.1
	}
	return TimeFigure{Title: "test", XLabel: "time (min)", Steps: lowPressureSteps, Rows: []Row{
		{YLabel: "partial pressure (Pa)", AutoLog: true, Unit: "Pa", Series: []Series{{"CH4", ts, pc}, {"H2", ts, ph}}},
		{YLabel: "coverage (%)", Range: [2]float64{0, 100}, Series: []Series{{"coverage", xs, cov}}},
	}}
}

// Sizes at DPI 120: 26 cm is 26 / 2.54 × 120 = 1228.3 px; the time figure
// of 2 rows is 2.8 + 2 × 5 = 12.8 cm = 604.7 px; the heat map 22 × 14 cm
// = 1039.4 × 661.4 px; a two-panel parity plot 2 × 12 + 3.2 = 27.2 cm by
// 12.9 cm = 1285.0 × 609.4 px. vgimg rounds to the nearest pixel.
func TestWritersPNG(t *testing.T) {
	dir := t.TempDir()
	t.Run("time figure", func(t *testing.T) {
		path := filepath.Join(dir, "profile.png")
		if err := writeFile(path, func(w io.Writer) error { return WriteTimeFigure(w, path, profileFigure()) }); err != nil {
			t.Fatal(err)
		}
		img := decode(t, path, 1228, 605)
		if n := count(img, carbonShade); n < 1000 {
			t.Errorf("got %d pixels of the methane shade, want the grow step shaded (> 1000)", n)
		}
	})
	t.Run("heat map", func(t *testing.T) {
		path := filepath.Join(dir, "map.png")
		m := HeatMap{Title: "test", XLabel: "T (C)", YLabel: "CH4 (sccm)", ZLabel: "coverage (%)",
			X: []float64{950, 1000, 1050}, Y: []float64{1, 2},
			Z:       [][]float64{{0, 50, math.NaN()}, {20, math.NaN(), 100}},
			Blocked: [][]bool{{false, false, true}, {false, false, false}}}
		if err := writeFile(path, func(w io.Writer) error { return WriteHeatMap(w, path, m) }); err != nil {
			t.Fatal(err)
		}
		img := decode(t, path, 1039, 661)
		if n := count(img, blockedColor); n < 10000 {
			t.Errorf("got %d pixels of the blocked grey, want a whole cell (> 10000)", n)
		}
		if n := count(img, missingColor); n < 10000 {
			t.Errorf("got %d pixels of the no-value grey, want a whole cell (> 10000)", n)
		}
	})
	t.Run("parity", func(t *testing.T) {
		path := filepath.Join(dir, "parity.png")
		f := Parity{Title: "test", Panels: []ParityPanel{
			{Quantity: "coverage (%)", Measured: []float64{10, 50, 99}, Predicted: []float64{12, 45, 98}, Range: [2]float64{0, 100}},
			{Quantity: "nuclei density (1/mm²)", Measured: []float64{1500, 0, 9e5}, Predicted: []float64{1700, 3e4, 8e5}},
		}}
		if err := writeFile(path, func(w io.Writer) error { return WriteParity(w, path, f) }); err != nil {
			t.Fatal(err)
		}
		decode(t, path, 1285, 609)
	})
}

func TestWritersSVGAndErrors(t *testing.T) {
	dir := t.TempDir()
	svg := filepath.Join(dir, "profile.svg")
	if err := writeFile(svg, func(w io.Writer) error { return WriteTimeFigure(w, svg, profileFigure()) }); err != nil {
		t.Fatal(err)
	}
	if data, err := os.ReadFile(svg); err != nil || !strings.Contains(string(data), "<svg") || !strings.Contains(string(data), "6 grow") {
		t.Errorf("not an SVG with the step names (%v)", err)
	}
	var written bytes.Buffer
	tests := []struct {
		name string
		err  error
		want string
	}{
		{"extension", WriteTimeFigure(&written, "a.pdf", profileFigure()), `want a file ending in .png or .svg`},
		{"no rows", WriteTimeFigure(&written, "b.png", TimeFigure{Title: "x"}), `time figure "x" has no rows`},
		{"ragged map", WriteHeatMap(&written, "c.png", HeatMap{Title: "m", X: []float64{1, 2}, Y: []float64{1}, Z: [][]float64{{1}}}), `a row has 1 values, want 2`},
		{"no panels", WriteParity(&written, "d.png", Parity{Title: "p"}), `parity plot "p" has no panels`},
		{"uneven parity", WriteParity(&written, "e.png", Parity{Panels: []ParityPanel{{Quantity: "q", Measured: []float64{1}}}}), `1 measured against 0 predicted`},
	}
	for _, tc := range tests {
		if tc.err == nil || !strings.Contains(tc.err.Error(), tc.want) {
			t.Errorf("%s: got %v, want an error containing %q", tc.name, tc.err, tc.want)
		}
	}
	if written.Len() != 0 {
		t.Errorf("the refused figures wrote %d bytes, want none", written.Len())
	}
}
