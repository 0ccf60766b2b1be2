package demolab

import (
	"image"
	"image/png"
	"math"
	"math/rand/v2"
	"os"

	"github.com/foilrun/foilrun/kinetics/micrograph/synth"
)

// Micrograph draws an invented optical micrograph of graphene domains on
// copper: n hexagonal domains of circumradius r pixels at random places
// (synth.Scatter, seeded by seed), darker than the copper (gray 120 on
// 180), on rolling-line texture with a brightness gradient and noise of 4
// gray levels, coverage sampled at pixel centres. It returns the image and
// the true covered fraction.
func Micrograph(w, h, n int, r float64, seed uint64) (*image.Gray, float64) {
	rng := rand.New(rand.NewPCG(seed, 0xc0ffee))
	s := synth.Scene{
		Width: w, Height: h,
		Domains:  synth.Scatter(w, h, n, r, rng),
		Copper:   180,
		Graphene: 120,
		Light:    synth.Gradient{X: 0.2, Y: 0.1},
		Texture:  synth.Ripples(0.03, 0.02),
		Noise:    4,
		Samples:  1,
	}
	return s.Gray8(rng)
}

// WriteMicrograph writes an 800×600 PNG micrograph of a partly grown film
// at the nuclei density (1/m²) and coverage the model predicts, with
// square pixels of the given size (m), and returns the drawn coverage.
// With n domains of hexagon area a = (3√3/2)r² on a field of area A the
// expected coverage is 1 − exp(−n·a/A) (Kolmogorov–Johnson–Mehl–Avrami
// for random placement), solved for r; coverage is capped at 0.9.
func WriteMicrograph(path string, pixel float64, density, coverage float64) (float64, error) {
	const w, h = 800, 600
	area := float64(w*h) * pixel * pixel
	n := max(3, int(math.Round(density*area)))
	r := math.Sqrt(-math.Log(1-math.Min(coverage, 0.9)) * float64(w*h) / float64(n) / (1.5 * math.Sqrt(3)))
	img, truth := Micrograph(w, h, n, r, 11)
	fh, err := os.Create(path)
	if err != nil {
		return 0, err
	}
	if err := png.Encode(fh, img); err != nil {
		fh.Close()
		return 0, err
	}
	return truth, fh.Close()
}
