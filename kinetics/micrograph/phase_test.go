package micrograph

import (
	"errors"
	"image"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/foilrun/foilrun/kinetics/micrograph/synth"
)

// TestOnePeak: a field with no domains, or one fully covered, has a
// one-peaked histogram. Without a reference Analyze must refuse; with one
// it must say which phase fills the field.
func TestOnePeak(t *testing.T) {
	t.Parallel()
	bareOnly := scene{w: 320, h: 240, bare: 150, contrast: 0.75, gradient: 0.5, texture: 0.04, noise: 4, seed: 21}
	covered := bareOnly
	covered.domains = []synth.Hexagon{{X: 160, Y: 120, R: 1000}} // covers everything
	bareImg, _ := bareOnly.gray8()
	covImg, cov := covered.gray8()
	if cov != 1 {
		t.Fatalf("generator: covered field has coverage %g, want 1", cov)
	}
	if _, err := Analyze(bareImg, Settings{PixelSize: testPixel}); !errors.Is(err, ErrOnePeak) {
		t.Fatalf("bare, no reference: got %v, want ErrOnePeak", err)
	} else {
		var op *OnePeakError
		if !errors.As(err, &op) || math.Abs(op.Peak-150) > 10 {
			t.Errorf("peak: got %+v, want near the copper level 150 (±10, texture and gradient)", op)
		}
	}
	if _, err := Analyze(covImg, Settings{PixelSize: testPixel}); !errors.Is(err, ErrOnePeak) {
		t.Fatalf("covered, no reference: got %v, want ErrOnePeak", err)
	}
	bare := 150.0
	cases := []struct {
		name string
		img  image.Image
		s    Settings
		want Phase
		cov  float64
	}{
		{"bare by region", bareImg, Settings{BareRegion: image.Rect(10, 10, 60, 60)}, PhaseBare, 0},
		{"bare by gray", bareImg, Settings{BareGray: &bare}, PhaseBare, 0},
		{"covered by gray", covImg, Settings{BareGray: &bare}, PhaseCovered, 1},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			c.s.PixelSize = testPixel
			res, err := Analyze(c.img, c.s)
			if err != nil {
				t.Fatal(err)
			}
			if res.Phase != c.want || res.Coverage != c.cov {
				t.Errorf("got phase %q coverage %g, want %q %g (%s)", res.Phase, res.Coverage, c.want, c.cov, res.PolarityReason)
			}
		})
	}
}

// TestBareRegionFixesAutoPolarity: at 60–70 % coverage the smaller class is
// copper, so the plain automatic rule picks the wrong class; a bare region
// resolves it. Domains overlap here, so only coverage is checked (±0.01).
func TestBareRegionFixesAutoPolarity(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(31, 1))
	var ds []synth.Hexagon
	for len(ds) < 260 {
		d := synth.Hexagon{X: rng.Float64() * 640, Y: rng.Float64() * 480, R: 18 + 10*rng.Float64(), Theta: rng.Float64()}
		if d.X < 120 && d.Y < 120 { // keep the top-left corner bare
			continue
		}
		ds = append(ds, d)
	}
	s := scene{w: 640, h: 480, domains: ds, bare: 150, contrast: 1.3, gradient: 0.5, texture: 0.04, noise: 4, seed: 32}
	img, truth := s.gray8()
	if truth < 0.55 {
		t.Fatalf("generator: coverage %g, want above 0.55 for this test", truth)
	}
	auto, err := Analyze(img, Settings{PixelSize: testPixel})
	if err != nil {
		t.Fatal(err)
	}
	if auto.Polarity != DomainsDarker || math.Abs(auto.Coverage-(1-truth)) > 0.02 {
		t.Errorf("plain auto: got %v coverage %.3f, want the copper class (darker) at about %.3f", auto.Polarity, auto.Coverage, 1-truth)
	}
	if len(auto.Notes) == 0 {
		t.Errorf("plain auto: want a note warning about coverage near one half")
	}
	res, err := Analyze(img, Settings{PixelSize: testPixel, BareRegion: image.Rect(5, 5, 90, 90)})
	if err != nil {
		t.Fatal(err)
	}
	if res.Polarity != DomainsBrighter || math.Abs(res.Coverage-truth) > 0.01 {
		t.Errorf("with bare region: got %v coverage %.4f, want brighter %.4f ± 0.01 (%s)", res.Polarity, res.Coverage, truth, res.PolarityReason)
	}
}

// TestFlatteningMatters shows that the test images are hard: without the
// illumination surface the ±25 % gradient spoils the measurement, with it
// coverage is within 0.01.
func TestFlatteningMatters(t *testing.T) {
	t.Parallel()
	s, _ := baseSynth(0.8, 41)
	s.gradient = 0.9
	img, truth := s.gray8()
	flat, err := Analyze(img, Settings{PixelSize: testPixel, Polarity: DomainsDarker})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(flat.Coverage-truth) > 0.01 {
		t.Errorf("flattened: coverage %.4f, want %.4f ± 0.01", flat.Coverage, truth)
	}
	raw, err := Analyze(img, Settings{PixelSize: testPixel, Polarity: DomainsDarker, BackgroundDegree: -1})
	if err == nil && math.Abs(raw.Coverage-truth) < 0.03 {
		t.Errorf("unflattened: coverage %.4f is within 0.03 of %.4f; the gradient should spoil it", raw.Coverage, truth)
	}
}

// TestSizesAndDensity checks interior diameters against the hexagon
// geometry, d = 2·√((3√3/2)R²/π), and the density against the counting
// frame: (interior + left + top domains) / field area.
func TestSizesAndDensity(t *testing.T) {
	t.Parallel()
	s, edge := baseSynth(0.75, 51)
	img, _ := s.gray8()
	res, err := Analyze(img, Settings{PixelSize: testPixel})
	if err != nil {
		t.Fatal(err)
	}
	var want []float64
	for _, d := range s.domains[:len(s.domains)-edge] {
		want = append(want, 2*math.Sqrt(d.Area()/math.Pi)*testPixel)
	}
	ws := summarise(want)
	for _, q := range []struct {
		name      string
		got, want float64
	}{{"mean", res.Sizes.Mean, ws.Mean}, {"median", res.Sizes.Median, ws.Median}, {"p10", res.Sizes.P10, ws.P10}, {"p90", res.Sizes.P90, ws.P90}} {
		// Tolerance 2 %: a boundary pixel more or less on a 40-px domain.
		if math.Abs(q.got-q.want) > 0.02*q.want {
			t.Errorf("%s diameter: got %.4g m want %.4g m ± 2 %%", q.name, q.got, q.want)
		}
	}
	area := float64(s.w*s.h) * testPixel * testPixel
	wantDensity := float64(len(s.domains)-edge+2) / area
	if math.Abs(res.Density-wantDensity) > 1e-12*wantDensity {
		t.Errorf("density: got %g /m² want %g /m²", res.Density, wantDensity)
	}
	if got, w := res.DensityPerMM2(), wantDensity*1e-6; math.Abs(got-w) > 1e-9*w {
		t.Errorf("density per mm²: got %g want %g", got, w)
	}
}

// TestSpecks: isolated dots smaller than MinAreaPixels are dropped.
func TestSpecks(t *testing.T) {
	t.Parallel()
	img := image.NewGray(image.Rect(0, 0, 64, 64))
	for i := range img.Pix {
		img.Pix[i] = 200
	}
	fill := func(x0, y0, x1, y1 int) {
		for y := y0; y < y1; y++ {
			for x := x0; x < x1; x++ {
				img.Pix[y*64+x] = 50
			}
		}
	}
	fill(10, 10, 30, 30) // 400 px domain
	fill(40, 40, 43, 43) // 9 px speck
	fill(50, 10, 52, 12) // 4 px speck
	noFilter := Settings{PixelSize: testPixel, SmoothRadius: -1, BackgroundDegree: -1, Polarity: DomainsDarker}
	for _, c := range []struct {
		minArea, count, specks int
		cov                    float64
	}{{1, 3, 0, 413.0 / 4096}, {5, 2, 1, 409.0 / 4096}, {16, 1, 2, 400.0 / 4096}} {
		s := noFilter
		s.MinAreaPixels = c.minArea
		res, err := Analyze(img, s)
		if err != nil {
			t.Fatal(err)
		}
		if res.Count != c.count || res.Specks != c.specks || res.Coverage != c.cov {
			t.Errorf("min area %d: got %d domains %d specks coverage %g, want %d %d %g",
				c.minArea, res.Count, res.Specks, res.Coverage, c.count, c.specks, c.cov)
		}
	}
}
