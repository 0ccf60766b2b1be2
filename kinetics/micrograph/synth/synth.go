// Package synth draws synthetic optical micrographs of graphene domains on
// copper foil, with the true covered fraction known from the geometry. The
// micrograph tests measure these images against their ground truth, and the
// demo draws its invented foil with them.
//
// A Scene is a field of regular hexagonal domains on copper, lit with a
// linear brightness gradient, modulated by a texture, with Gaussian noise
// added. Rendering is deterministic: every random draw comes from
// the *rand.Rand the caller passes in. Lengths are in pixels; pixel (i, j)
// covers [i, i+1) × [j, j+1). Gray levels are on the 0–255 scale.
//
// Entry points: Scene with Render, Gray8, Gray16 and RGBA; the layouts
// Scatter and Separated; the textures Grain and Ripples; WithInfoBar adds
// an instrument's data band beside a rendered field. Darker domains have
// Graphene < Copper, brighter ones Graphene > Copper.
//
// The package imports nothing of foilrun, so the micrograph package's own
// tests can use it.
package synth

import (
	"image"
	"image/color"
	"math"
	"math/rand/v2"
)

// Hexagon is a regular hexagonal domain: centre (X, Y) and circumradius R
// in pixels, rotated by Theta radians.
type Hexagon struct {
	X, Y  float64
	R     float64
	Theta float64
}

// Area returns the hexagon's area in pixels²,
//
//	A = (3√3/2)·R²
//
// References:
//   - elementary geometry: six equilateral triangles of side R.
func (h Hexagon) Area() float64 { return 1.5 * math.Sqrt(3) * h.R * h.R }

// Contains reports whether the point (x, y) lies inside the hexagon: its
// distance from the centre along each of the three edge normals is within
// the apothem R·√3/2.
func (h Hexagon) Contains(x, y float64) bool {
	return h.contains(x, y, h.normals())
}

func (h Hexagon) contains(x, y float64, normals [3][2]float64) bool {
	dx, dy := x-h.X, y-h.Y
	ap := h.R * math.Sqrt(3) / 2
	for _, n := range normals {
		if math.Abs(dx*n[0]+dy*n[1]) > ap {
			return false
		}
	}
	return true
}

// normals returns the unit normals of the three pairs of edges.
func (h Hexagon) normals() (n [3][2]float64) {
	for k := range 3 {
		a := h.Theta + math.Pi/6 + float64(k)*math.Pi/3
		n[k] = [2]float64{math.Cos(a), math.Sin(a)}
	}
	return n
}

// Gradient is a linear brightness gradient: the light at pixel (x, y) of a
// w×h field is
//
//	L = 1 + X·(x/w − ½) + Y·(y/h − ½)
//
// so X is the relative rise from the left edge to the right, Y from the
// top to the bottom. The zero value is even lighting.
type Gradient struct {
	X, Y float64
}

// Texture is the copper's reflectance factor at a pixel, near 1 (grain,
// rolling lines). It must not draw random numbers: the noise that follows
// shares the caller's generator.
type Texture func(x, y int) float64

// Scene is a synthetic micrograph. The zero value of each optional field
// works: no domains, black copper, even light, no texture, no noise, 4×4
// samples per pixel.
type Scene struct {
	// Width and Height are the image size in pixels, > 0.
	Width, Height int
	// Domains are the graphene domains; they may overlap and may stick
	// out of the field.
	Domains []Hexagon
	// Copper and Graphene are the gray levels of bare and covered foil
	// at even light and texture 1. Darker domains: Graphene < Copper.
	Copper, Graphene float64
	// Light is the brightness gradient across the field.
	Light Gradient
	// Texture modulates the level of every pixel; nil is none.
	Texture Texture
	// Noise is the standard deviation of the Gaussian noise added to each
	// pixel, in gray levels, ≥ 0.
	Noise float64
	// Samples is the number of samples per pixel along each axis used to
	// integrate the covered area (Samples² per pixel); 0 means 4, 1
	// samples the pixel centre only.
	Samples int
}

// Render returns every pixel's gray level (row-major, not clamped) and the
// true covered fraction of the field. The covered fraction of a pixel is
// the share of its Samples² sample points inside some domain; a pixel's
// level is
//
//	v = (Copper·(1 − f) + Graphene·f) · L · T + Noise·n
//
// with f its covered fraction, L the light, T the texture and n a standard
// normal draw from rng (one per pixel, row by row, drawn even when Noise
// is 0). The coverage is the mean of f over the field.
func (s Scene) Render(rng *rand.Rand) (levels []float64, coverage float64) {
	w, h := s.Width, s.Height
	frac := s.covered()
	levels = make([]float64, w*h)
	sum := 0.0
	for y := range h {
		for x := range w {
			f := float64(frac[y*w+x])
			sum += f
			light := 1 + s.Light.X*(float64(x)/float64(w)-0.5) + s.Light.Y*(float64(y)/float64(h)-0.5)
			tex := 1.0
			if s.Texture != nil {
				tex = s.Texture(x, y)
			}
			mix := s.Copper*(1-f) + s.Graphene*f
			levels[y*w+x] = mix*light*tex + s.Noise*rng.NormFloat64()
		}
	}
	return levels, sum / float64(w*h)
}

// covered returns each pixel's covered fraction.
func (s Scene) covered() []float32 {
	w, h := s.Width, s.Height
	n := s.Samples
	if n <= 0 {
		n = 4
	}
	frac := make([]float32, w*h)
	for _, d := range s.Domains {
		nd := d.normals()
		x0, x1 := max(0, int(d.X-d.R)-1), min(w, int(d.X+d.R)+2)
		y0, y1 := max(0, int(d.Y-d.R)-1), min(h, int(d.Y+d.R)+2)
		for y := y0; y < y1; y++ {
			for x := x0; x < x1; x++ {
				in := d.samplesIn(x, y, n, nd)
				f := &frac[y*w+x]
				*f = min(1, *f+float32(in)/float32(n*n))
			}
		}
	}
	return frac
}

// samplesIn counts the n×n sample points of pixel (x, y) inside the
// hexagon. A pixel whose whole square lies inside every pair of edges
// (centre distance plus half the square's extent along the normal, at
// most the apothem) has all its points inside, and one wholly beyond a
// pair has none, so only pixels on an edge are sampled; the counts are
// those of sampling every pixel.
func (h Hexagon) samplesIn(x, y, n int, normals [3][2]float64) int {
	dx, dy := float64(x)+0.5-h.X, float64(y)+0.5-h.Y
	ap := h.R * math.Sqrt(3) / 2
	inside := true
	for _, nv := range normals {
		c, half := math.Abs(dx*nv[0]+dy*nv[1]), 0.5*(math.Abs(nv[0])+math.Abs(nv[1]))
		if c-half > ap {
			return 0
		}
		inside = inside && c+half < ap
	}
	if inside {
		return n * n
	}
	in := 0
	for j := range n {
		for i := range n {
			if h.contains(float64(x)+(float64(i)+0.5)/float64(n), float64(y)+(float64(j)+0.5)/float64(n), normals) {
				in++
			}
		}
	}
	return in
}

// clamp rounds v to the nearest integer within [0, hi].
func clamp(v, hi float64) float64 { return math.Max(0, math.Min(hi, math.Round(v))) }

// Gray8 renders the scene as an 8-bit gray image and returns it with the
// true coverage.
func (s Scene) Gray8(rng *rand.Rand) (*image.Gray, float64) {
	lev, cov := s.Render(rng)
	img := image.NewGray(image.Rect(0, 0, s.Width, s.Height))
	for i, v := range lev {
		img.Pix[i] = uint8(clamp(v, 255))
	}
	return img, cov
}

// Gray16 renders the scene as a 16-bit gray image (levels × 257) and
// returns it with the true coverage.
func (s Scene) Gray16(rng *rand.Rand) (*image.Gray16, float64) {
	lev, cov := s.Render(rng)
	img := image.NewGray16(image.Rect(0, 0, s.Width, s.Height))
	for i, v := range lev {
		u := uint16(clamp(v*257, 65535))
		img.Pix[2*i], img.Pix[2*i+1] = uint8(u>>8), uint8(u)
	}
	return img, cov
}

// RGBA renders the scene tinted like copper (red 1.25, green 0.95, blue
// 0.7 times the level) and returns it with the true coverage.
func (s Scene) RGBA(rng *rand.Rand) (*image.RGBA, float64) {
	lev, cov := s.Render(rng)
	img := image.NewRGBA(image.Rect(0, 0, s.Width, s.Height))
	for i, v := range lev {
		img.Set(i%s.Width, i/s.Width, color.RGBA{uint8(clamp(v*1.25, 255)), uint8(clamp(v*0.95, 255)), uint8(clamp(v*0.7, 255)), 255})
	}
	return img, cov
}
