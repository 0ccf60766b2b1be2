package main

import (
	"image"
	"math"
	"math/rand/v2"
)

// synthMicrograph draws an invented optical micrograph of graphene
// domains on copper for the demo: n hexagonal domains of circumradius r
// pixels at random places (fixed seed), darker than the copper, on a grain
// texture with a brightness gradient and noise. It returns the image and
// the true covered fraction.
func synthMicrograph(w, h, n int, r float64, seed uint64) (*image.Gray, float64) {
	rng := rand.New(rand.NewPCG(seed, 0xc0ffee))
	type hex struct{ x, y, rot float64 }
	hs := make([]hex, n)
	for i := range hs {
		hs[i] = hex{rng.Float64() * float64(w), rng.Float64() * float64(h), rng.Float64() * math.Pi / 3}
	}
	covered := make([]bool, w*h)
	ap := r * math.Sqrt(3) / 2
	for _, d := range hs {
		var nx, ny [3]float64
		for k := range 3 {
			a := d.rot + math.Pi/6 + float64(k)*math.Pi/3
			nx[k], ny[k] = math.Cos(a), math.Sin(a)
		}
		for y := max(0, int(d.y-r)-1); y < min(h, int(d.y+r)+2); y++ {
			for x := max(0, int(d.x-r)-1); x < min(w, int(d.x+r)+2); x++ {
				dx, dy := float64(x)+0.5-d.x, float64(y)+0.5-d.y
				in := true
				for k := range 3 {
					if math.Abs(dx*nx[k]+dy*ny[k]) > ap {
						in = false
						break
					}
				}
				if in {
					covered[y*w+x] = true
				}
			}
		}
	}
	img := image.NewGray(image.Rect(0, 0, w, h))
	count := 0
	for y := range h {
		for x := range w {
			light := 1 + 0.2*(float64(x)/float64(w)-0.5) + 0.1*(float64(y)/float64(h)-0.5)
			tex := 1 + 0.03*math.Sin(float64(x)/17+float64(y)/29) + 0.02*math.Sin(float64(y)/7)
			v := 180.0
			if covered[y*w+x] {
				v, count = 120, count+1
			}
			g := v*light*tex + 4*rng.NormFloat64()
			img.Pix[y*w+x] = uint8(math.Max(0, math.Min(255, math.Round(g))))
		}
	}
	return img, float64(count) / float64(w*h)
}
