package synth

import (
	"image"
	"math"
	"math/rand/v2"
	"testing"
)

// hexArea is the area of a regular hexagon of circumradius r: six
// equilateral triangles of side r, (3√3/2)·r² (elementary geometry).
func hexArea(r float64) float64 { return 6 * math.Sqrt(3) / 4 * r * r }

func TestHexagonContains(t *testing.T) {
	h := Hexagon{X: 50, Y: 40, R: 20, Theta: 0.3}
	// A regular hexagon's vertices lie at distance R along θ + k·60°, its
	// edge midpoints at the apothem R·√3/2 along θ + 30° + k·60°
	// (elementary geometry). Tolerance: 0.1 % of R either side.
	cases := []struct {
		name  string
		angle float64
		dist  float64
		want  bool
	}{
		{"centre", 0, 0, true},
		{"just inside a vertex", 0.3, 0.999 * 20, true},
		{"just outside a vertex", 0.3 + math.Pi/3, 1.001 * 20, false},
		{"just inside an edge", 0.3 + math.Pi/6, 0.999 * 20 * math.Sqrt(3) / 2, true},
		{"just outside an edge", 0.3 + math.Pi/6 + 2*math.Pi/3, 1.001 * 20 * math.Sqrt(3) / 2, false},
		{"inside the circumcircle, outside the edge", 0.3 + math.Pi/6, 0.95 * 20, false},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			x, y := h.X+c.dist*math.Cos(c.angle), h.Y+c.dist*math.Sin(c.angle)
			if got := h.Contains(x, y); got != c.want {
				t.Errorf("Contains(%.3f, %.3f): got %v, want %v", x, y, got, c.want)
			}
		})
	}
}

// TestCoverageIsGeometry: the covered fraction a scene reports matches the
// area of the hexagons drawn, (3√3/2)·R² each, for domains fully inside
// the field and apart from each other.
func TestCoverageIsGeometry(t *testing.T) {
	cases := []struct {
		name    string
		domains []Hexagon
		samples int
		tol     float64 // relative; sampling error along the perimeter
	}{
		{"one hexagon, 4×4 samples", []Hexagon{{X: 100, Y: 80, R: 40, Theta: 0.2}}, 0, 0.005},
		{"one hexagon, 8×8 samples", []Hexagon{{X: 100, Y: 80, R: 40, Theta: 0.7}}, 8, 0.002},
		{"one hexagon, pixel centres", []Hexagon{{X: 100.3, Y: 79.6, R: 40, Theta: 1.0}}, 1, 0.01},
		{"three small hexagons", []Hexagon{{X: 30, Y: 30, R: 12}, {X: 100, Y: 40, R: 15, Theta: 0.5}, {X: 160, Y: 120, R: 20, Theta: 0.9}}, 0, 0.01},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			s := Scene{Width: 200, Height: 160, Domains: c.domains, Copper: 150, Graphene: 100, Samples: c.samples}
			_, got := s.Render(rand.New(rand.NewPCG(1, 2)))
			want := 0.0
			for _, d := range c.domains {
				want += hexArea(d.R)
			}
			want /= 200 * 160
			if math.Abs(got-want) > c.tol*want {
				t.Errorf("coverage: got %.6f, want %.6f ± %.1f %%", got, want, c.tol*100)
			}
		})
	}
}

// TestLevels: without noise, texture or gradient a pixel is the copper
// level, the graphene level, or their mix by the covered fraction; with a
// gradient the light is 1 + X·(x/w − ½) + Y·(y/h − ½).
func TestLevels(t *testing.T) {
	all := []Hexagon{{X: 20, Y: 20, R: 1000}}
	cases := []struct {
		name    string
		scene   Scene
		x, y    int
		want    float64
		wantCov float64
	}{
		{"bare", Scene{Width: 40, Height: 30, Copper: 150, Graphene: 90}, 7, 9, 150, 0},
		{"covered", Scene{Width: 40, Height: 30, Domains: all, Copper: 150, Graphene: 90}, 7, 9, 90, 1},
		{"gradient at the first pixel", Scene{Width: 40, Height: 30, Copper: 100, Light: Gradient{X: 0.2, Y: 0.1}}, 0, 0, 100 * (1 - 0.1 - 0.05), 0},
		{"gradient at mid field", Scene{Width: 40, Height: 30, Copper: 100, Light: Gradient{X: 0.2, Y: 0.1}}, 20, 15, 100, 0},
		{"texture", Scene{Width: 40, Height: 30, Copper: 100, Texture: Ripples(0.03, 0.02)}, 17, 7,
			100 * (1 + 0.03*math.Sin(1+7.0/29) + 0.02*math.Sin(1)), 0},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			lev, cov := c.scene.Render(rand.New(rand.NewPCG(3, 4)))
			if got := lev[c.y*c.scene.Width+c.x]; math.Abs(got-c.want) > 1e-9 {
				t.Errorf("level at (%d, %d): got %.12g, want %.12g", c.x, c.y, got, c.want)
			}
			if cov != c.wantCov {
				t.Errorf("coverage: got %g, want %g", cov, c.wantCov)
			}
		})
	}
}

// TestHalfCoveredPixel: a hexagon edge through the middle of a pixel
// covers half of its 4×4 samples, and the level is the even mix.
func TestHalfCoveredPixel(t *testing.T) {
	// Theta 0 puts an edge normal at 30°; rotate by −30° so one normal
	// points along +x: the edge is the line x = X + R·√3/2.
	r := 100.0
	h := Hexagon{X: 5.5 - r*math.Sqrt(3)/2, Y: 5, R: r, Theta: -math.Pi / 6}
	s := Scene{Width: 10, Height: 10, Domains: []Hexagon{h}, Copper: 200, Graphene: 100}
	lev, _ := s.Render(rand.New(rand.NewPCG(5, 6)))
	for _, c := range []struct {
		name string
		x    int
		want float64
	}{{"covered", 4, 100}, {"half", 5, 150}, {"bare", 6, 200}} {
		if got := lev[5*10+c.x]; math.Abs(got-c.want) > 1e-9 {
			t.Errorf("%s pixel x=%d: got %g, want %g", c.name, c.x, got, c.want)
		}
	}
}

func TestDeterministic(t *testing.T) {
	ds, _ := Separated(160, 120, 4, 3, rand.New(rand.NewPCG(9, 9)), false)
	draw := func(seed uint64) []uint8 {
		rng := rand.New(rand.NewPCG(seed, 1))
		s := Scene{Width: 160, Height: 120, Domains: ds, Copper: 150, Graphene: 110, Light: Gradient{X: 0.3, Y: 0.2},
			Texture: Grain(160, 120, 0.04, rng), Noise: 4}
		img, _ := s.Gray8(rng)
		return img.Pix
	}
	a, b, c := draw(1), draw(1), draw(2)
	same, differ := true, false
	for i := range a {
		same = same && a[i] == b[i]
		differ = differ || a[i] != c[i]
	}
	if !same {
		t.Error("the same seed drew two different images")
	}
	if !differ {
		t.Error("two seeds drew the same image")
	}
}

// TestSeparated: the layout keeps every interior domain's circumcircle at
// least 8 px from its neighbours' and 4 px inside the field, as documented;
// the edge domains are centred on the borders.
func TestSeparated(t *testing.T) {
	const w, h = 640, 480
	ds, edge := Separated(w, h, 8, 6, rand.New(rand.NewPCG(51, 7)), true)
	if edge != 4 || len(ds) != 8*6-7+4 {
		t.Fatalf("got %d domains, %d on the border; want %d and 4", len(ds), edge, 8*6-7+4)
	}
	in := ds[:len(ds)-edge]
	for i, a := range in {
		if a.X-a.R < 4 || a.Y-a.R < 4 || a.X+a.R > w-4 || a.Y+a.R > h-4 {
			t.Errorf("domain %d at (%.1f, %.1f) r %.1f comes within 4 px of the border", i, a.X, a.Y, a.R)
		}
		for j, b := range in[:i] {
			if gap := math.Hypot(a.X-b.X, a.Y-b.Y) - a.R - b.R; gap < 8-1e-9 {
				t.Errorf("domains %d and %d: gap %.2f px, want ≥ 8", j, i, gap)
			}
		}
	}
	for _, d := range ds[len(ds)-edge:] {
		if d.X != 0 && d.Y != 0 && d.X != w && d.Y != h {
			t.Errorf("edge domain at (%g, %g) is not on a border", d.X, d.Y)
		}
	}
}

// TestScatter: domains land in the field and each takes three draws from
// the stream, so what follows (the noise) is the same as after 3n draws.
func TestScatter(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 0xc0ffee))
	ds := Scatter(800, 600, 25, 30, rng)
	if len(ds) != 25 {
		t.Fatalf("got %d domains, want 25", len(ds))
	}
	for i, d := range ds {
		if d.X < 0 || d.X >= 800 || d.Y < 0 || d.Y >= 600 || d.R != 30 || d.Theta < 0 || d.Theta >= math.Pi/3 {
			t.Errorf("domain %d: %+v outside the field or the rotation range", i, d)
		}
	}
	ref := rand.New(rand.NewPCG(11, 0xc0ffee))
	for range 3 * 25 {
		ref.Float64()
	}
	if got, want := rng.Uint64(), ref.Uint64(); got != want {
		t.Errorf("stream after Scatter: got %d, want %d (three draws per domain)", got, want)
	}
}

// TestGrainRange: the grain texture stays within 1 ± 1.4·amplitude (grid
// values in [−1, 1) plus lines of amplitude 0.4).
func TestGrainRange(t *testing.T) {
	const a = 0.05
	tex := Grain(300, 200, a, rand.New(rand.NewPCG(2, 3)))
	lo, hi := math.Inf(1), math.Inf(-1)
	for y := range 200 {
		for x := range 300 {
			v := tex(x, y)
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
	}
	if lo < 1-1.4*a || hi > 1+1.4*a {
		t.Errorf("texture range [%.4f, %.4f], want within [%.4f, %.4f]", lo, hi, 1-1.4*a, 1+1.4*a)
	}
	if hi-lo < a {
		t.Errorf("texture range [%.4f, %.4f] is flatter than the amplitude %g", lo, hi, a)
	}
}

// TestFormats: the 16-bit image holds the level × 257 and the colour image
// the copper tint of the same levels.
func TestFormats(t *testing.T) {
	s := Scene{Width: 8, Height: 4, Copper: 100, Graphene: 60, Domains: []Hexagon{{X: 0, Y: 0, R: 3}}}
	g8, c8 := s.Gray8(rand.New(rand.NewPCG(1, 1)))
	g16, c16 := s.Gray16(rand.New(rand.NewPCG(1, 1)))
	rgba, cc := s.RGBA(rand.New(rand.NewPCG(1, 1)))
	if c8 != c16 || c8 != cc {
		t.Errorf("coverage differs between formats: %g %g %g", c8, c16, cc)
	}
	for i, v := range g8.Pix {
		if got, want := uint16(g16.Pix[2*i])<<8|uint16(g16.Pix[2*i+1]), uint16(v)*257; got != want {
			t.Errorf("pixel %d: 16-bit %d, want %d", i, got, want)
		}
		if r, g, b := rgba.Pix[4*i], rgba.Pix[4*i+1], rgba.Pix[4*i+2]; r != uint8(math.Round(float64(v)*1.25)) || g != uint8(math.Round(float64(v)*0.95)) || b != uint8(math.Round(float64(v)*0.7)) {
			t.Errorf("pixel %d: colour %d %d %d, want the copper tint of %d", i, r, g, b, v)
		}
	}
}

func BenchmarkRender1024(b *testing.B) {
	ds, _ := Separated(1024, 1024, 16, 16, rand.New(rand.NewPCG(71, 7)), true)
	for b.Loop() {
		rng := rand.New(rand.NewPCG(72, 1))
		s := Scene{Width: 1024, Height: 1024, Domains: ds, Copper: 150, Graphene: 112.5, Light: Gradient{X: 0.3, Y: 0.2},
			Texture: Grain(1024, 1024, 0.04, rng), Noise: 4}
		s.Gray8(rng)
	}
}

// TestWithInfoBar: the field keeps every pixel, shifted below a top bar or
// above a bottom one, and the band holds only the background and the ink.
func TestWithInfoBar(t *testing.T) {
	s := Scene{Width: 64, Height: 40, Copper: 150, Graphene: 90, Domains: []Hexagon{{X: 30, Y: 20, R: 12}}, Noise: 3}
	img, _ := s.Gray8(rand.New(rand.NewPCG(1, 2)))
	for _, top := range []bool{false, true} {
		bar := InfoBar{Height: 12, Top: top, Background: 0, Ink: 255}
		out := WithInfoBar(img, bar)
		if got := out.Bounds(); got != image.Rect(0, 0, 64, 52) {
			t.Fatalf("top %v: bounds %v, want (0,0)-(64,52)", top, got)
		}
		field, band := 0, 40
		if top {
			field, band = 12, 0
		}
		for y := range 40 {
			for x := range 64 {
				if got, want := out.GrayAt(x, y+field).Y, img.GrayAt(x, y).Y; got != want {
					t.Fatalf("top %v: field pixel (%d, %d) got %d, want %d", top, x, y, got, want)
				}
			}
		}
		ink := 0
		for y := band; y < band+12; y++ {
			for x := range 64 {
				switch out.GrayAt(x, y).Y {
				case 255:
					ink++
				case 0:
				default:
					t.Fatalf("top %v: band pixel (%d, %d) is %d, want 0 or 255", top, x, y, out.GrayAt(x, y).Y)
				}
			}
		}
		if ink == 0 {
			t.Errorf("top %v: no marks drawn in the band", top)
		}
	}
}

// TestSamplesInShortcut: the count of sample points inside a hexagon,
// which skips sampling for pixels wholly inside or outside, equals the
// count made by testing every sample point, for pixels all around
// hexagons of varied size and turn.
func TestSamplesInShortcut(t *testing.T) {
	rng := rand.New(rand.NewPCG(4, 9))
	for k := range 200 {
		h := Hexagon{X: 20 + rng.Float64(), Y: 20 + rng.Float64(), R: 0.5 + 15*rng.Float64(), Theta: rng.Float64() * math.Pi}
		nd := h.normals()
		n := 1 + k%5
		for y := range 40 {
			for x := range 40 {
				want := 0
				for j := range n {
					for i := range n {
						if h.contains(float64(x)+(float64(i)+0.5)/float64(n), float64(y)+(float64(j)+0.5)/float64(n), nd) {
							want++
						}
					}
				}
				if got := h.samplesIn(x, y, n, nd); got != want {
					t.Fatalf("hexagon %+v, pixel (%d, %d), %d² samples: got %d inside, want %d", h, x, y, n, got, want)
				}
			}
		}
	}
}
