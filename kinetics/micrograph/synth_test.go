package micrograph

import (
	"image"
	"math/rand/v2"

	"github.com/foilrun/foilrun/kinetics/micrograph/synth"
)

// The tests' micrographs come from the shared generator (package synth):
// regular hexagonal domains on copper with a grain texture, rolling lines,
// a linear brightness gradient and Gaussian noise, the covered area
// integrated with 4×4 samples per pixel. The ground truth comes from the
// geometry itself; a regular hexagon of circumradius R has area
// (3√3/2)·R² (elementary geometry).

// scene is a test field in the terms the tests vary: the copper level,
// the domain/copper contrast, the corner-to-corner gradient, the texture
// amplitude, the noise and one seed for texture and noise.
type scene struct {
	w, h     int
	domains  []synth.Hexagon
	bare     float64 // copper gray level at mid brightness, 0–255 scale
	contrast float64 // domain reflectance / copper reflectance
	gradient float64 // brightness rises by this fraction from one corner to the other
	texture  float64 // relative amplitude of the grain texture
	noise    float64 // standard deviation of the noise, 0–255 scale
	seed     uint64
}

// synth returns the generator's scene and the generator it draws from;
// every call starts the same stream, so an image can be drawn again.
func (s scene) synth() (synth.Scene, *rand.Rand) {
	rng := rand.New(rand.NewPCG(s.seed, 0x5eed))
	return synth.Scene{
		Width: s.w, Height: s.h, Domains: s.domains,
		Copper: s.bare, Graphene: s.bare * s.contrast,
		Light:   synth.Gradient{X: 0.6 * s.gradient, Y: 0.4 * s.gradient},
		Texture: synth.Grain(s.w, s.h, s.texture, rng),
		Noise:   s.noise,
	}, rng
}

func (s scene) gray8() (*image.Gray, float64)    { sc, rng := s.synth(); return sc.Gray8(rng) }
func (s scene) gray16() (*image.Gray16, float64) { sc, rng := s.synth(); return sc.Gray16(rng) }
func (s scene) rgba() (*image.RGBA, float64)     { sc, rng := s.synth(); return sc.RGBA(rng) }

// separated is synth.Separated with the layout drawn from its own stream.
func separated(w, h, cols, rows int, seed uint64, edges bool) ([]synth.Hexagon, int) {
	return synth.Separated(w, h, cols, rows, rand.New(rand.NewPCG(seed, 7)), edges)
}
