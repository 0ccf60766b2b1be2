package micrograph

import (
	"errors"
	"fmt"
	"image"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/foilrun/foilrun/kinetics/micrograph/synth"
)

// coverageScene draws a 512×512 field of hexagons of circumradius 12 px
// scattered at random, as many as give an expected coverage of target:
// n = −ln(1 − target)·A/a with a = (3√3/2)·12² (Kolmogorov–Johnson–Mehl–
// Avrami for random placement). The true coverage returned is the drawn
// geometry's, not the target. Domains are darker (graphene 0.7 of copper)
// or brighter (1.3 of copper), with gradient, grain texture and noise.
func coverageScene(target float64, brighter bool, seed uint64) (*image.Gray, float64) {
	const w, h, r = 512, 512, 12.0
	a := 1.5 * math.Sqrt(3) * r * r
	n := int(math.Round(-math.Log(1-target) * w * h / a))
	rng := rand.New(rand.NewPCG(seed, 0xba5))
	contrast := 0.7
	if brighter {
		contrast = 1.3
	}
	s := synth.Scene{
		Width: w, Height: h, Domains: synth.Scatter(w, h, n, r, rng),
		Copper: 150, Graphene: 150 * contrast,
		Light:   synth.Gradient{X: 0.15, Y: 0.1},
		Texture: synth.Grain(w, h, 0.03, rng),
		Noise:   4,
	}
	return s.Gray8(rng)
}

// TestCoverageWithInfoBar: with the polarity given, the coverage measured
// at 5, 50, 80 and 95 % lies within 0.015 of the drawn geometry's (the
// issue's tolerance), for darker and brighter domains, with no bar, a
// black bar with white marks along the bottom, and a white bar with black
// marks along the top; the bar is found and cut exactly.
func TestCoverageWithInfoBar(t *testing.T) {
	t.Parallel()
	bars := []barCase{
		{"no bar", nil},
		{"black bar at the bottom", &synth.InfoBar{Height: 48, Background: 0, Ink: 255}},
		{"white bar at the top", &synth.InfoBar{Height: 30, Top: true, Background: 255, Ink: 0}},
	}
	for _, target := range []float64{0.05, 0.50, 0.80, 0.95} {
		for _, brighter := range []bool{false, true} {
			pol := DomainsDarker
			if brighter {
				pol = DomainsBrighter
			}
			// Each scene is drawn in its own parallel subtest, and its bar
			// variants are measured inside it.
			t.Run(fmt.Sprintf("%.0f%% %v", 100*target, pol), func(t *testing.T) {
				t.Parallel()
				img, truth := coverageScene(target, brighter, uint64(1000*target))
				if math.Abs(truth-target) > 0.03 {
					t.Fatalf("drawn coverage %.4f is not near the target %.2f", truth, target)
				}
				for _, b := range bars {
					t.Run(b.name, func(t *testing.T) { b.check(t, img, truth, pol) })
				}
			})
		}
	}
}

// barCase is an info bar added to a scene of TestCoverageWithInfoBar, or
// none.
type barCase struct {
	name string
	bar  *synth.InfoBar
}

// check measures img with the bar added and polarity pol: the coverage
// must lie within 0.015 of truth and the bar must be cut exactly.
func (b barCase) check(t *testing.T, img *image.Gray, truth float64, pol Polarity) {
	in, want := image.Image(img), image.Rect(0, 0, 512, 512)
	if b.bar != nil {
		in = synth.WithInfoBar(img, *b.bar)
		if b.bar.Top {
			want = want.Add(image.Pt(0, b.bar.Height))
		}
	}
	res, err := Analyze(in, Settings{PixelSize: testPixel, Polarity: pol})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(res.Coverage-truth) > 0.015 {
		t.Errorf("coverage: got %.4f, want %.4f ± 0.015 (drawn geometry)", res.Coverage, truth)
	}
	if res.Region != want {
		t.Errorf("measured field: got %v, want %v; cuts %q", res.Region, want, res.Cuts)
	}
	if (b.bar != nil) != (len(res.Cuts) == 1) {
		t.Errorf("cuts: got %q, want one line for a bar and none without", res.Cuts)
	}
}

// TestInfoBarKept: with KeepInfoBar the bar is measured as sample and the
// coverage is off, which is what the detection is for.
func TestInfoBarKept(t *testing.T) {
	t.Parallel()
	img, truth := coverageScene(0.10, false, 7)
	in := synth.WithInfoBar(img, synth.InfoBar{Height: 96, Background: 0, Ink: 255})
	res, err := Analyze(in, Settings{PixelSize: testPixel, Polarity: DomainsDarker, KeepInfoBar: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Cuts) != 0 || res.Region != in.Bounds() {
		t.Errorf("KeepInfoBar: cuts %q, region %v; want none and the whole image", res.Cuts, res.Region)
	}
	if math.Abs(res.Coverage-truth) < 0.05 {
		t.Errorf("coverage with the bar kept: got %.4f, truth %.4f; want the bar to distort it by more than 0.05", res.Coverage, truth)
	}
}

// TestCrop: a crop measures only its rectangle; one outside the image or
// of zero area is refused with ErrSettings and the rectangle quoted.
func TestCrop(t *testing.T) {
	t.Parallel()
	img, _ := coverageScene(0.30, false, 3)
	res, err := Analyze(img, Settings{PixelSize: testPixel, Polarity: DomainsDarker, Crop: image.Rect(10, 20, 310, 220)})
	if err != nil {
		t.Fatal(err)
	}
	if res.Width != 300 || res.Height != 200 || len(res.Cuts) != 1 {
		t.Errorf("crop: got %d×%d, cuts %q; want 300×200 and one cut", res.Width, res.Height, res.Cuts)
	}
	if _, err := res.Overlay(img); err != nil {
		t.Errorf("overlay of the whole image for a cropped result: %v", err)
	}
	bad := []struct {
		name string
		crop image.Rectangle
		want string
	}{
		{"outside", image.Rect(400, 400, 600, 500), "crop 400,400,600,500 lies outside the image, which is 512×512 pixels"},
		{"zero area", image.Rectangle{Min: image.Pt(10, 10), Max: image.Pt(10, 50)}, "crop 10,10,10,50 has zero area"},
	}
	for _, c := range bad {
		t.Run(c.name, func(t *testing.T) {
			_, err := Analyze(img, Settings{PixelSize: testPixel, Crop: c.crop})
			if !errors.Is(err, ErrSettings) || !strings.Contains(err.Error(), c.want) {
				t.Errorf("got %v, want ErrSettings and %q", err, c.want)
			}
		})
	}
}

// TestNoBarInSamples: plain sample fields, bare or fully covered and
// noiseless, and a flat frame without marks, are not taken for a bar.
func TestNoBarInSamples(t *testing.T) {
	t.Parallel()
	flat := image.NewGray(image.Rect(0, 0, 100, 100))
	for i := range flat.Pix {
		flat.Pix[i] = 140
	}
	framed := image.NewGray(image.Rect(0, 0, 100, 100))
	for i := range framed.Pix {
		framed.Pix[i] = 140
		if i < 10*100 {
			framed.Pix[i] = 0 // a black strip with no marks
		}
	}
	img, _ := coverageScene(0.5, true, 11)
	for _, c := range []struct {
		name string
		img  image.Image
	}{{"uniform", flat}, {"black strip without marks", framed}, {"noisy sample", img}} {
		if got := FindInfoBars(c.img, c.img.Bounds()); len(got) != 0 {
			t.Errorf("%s: got bars %v, want none", c.name, got)
		}
	}
}
