package micrograph

import (
	"image"
	"image/color"
	"math"
	"math/rand/v2"
)

// A synthetic micrograph: regular hexagonal domains on copper with a grain
// texture, rolling lines, a linear brightness gradient and Gaussian noise.
// The ground truth comes from the geometry itself: the covered area is
// integrated with 4×4 samples per pixel, and a regular hexagon of
// circumradius R has area (3√3/2)·R² (elementary geometry).

type hex struct {
	cx, cy float64 // centre, pixels (pixel i covers [i, i+1))
	r      float64 // circumradius, pixels
	theta  float64 // rotation, radians
}

func (h hex) area() float64 { return 1.5 * math.Sqrt(3) * h.r * h.r }

// inside reports whether (x, y) lies inside the hexagon: its distance
// along each of the three edge normals is within the apothem R·√3/2.
func (h hex) inside(x, y float64, normals [3][2]float64) bool {
	dx, dy := x-h.cx, y-h.cy
	if dx*dx+dy*dy > h.r*h.r {
		return false
	}
	ap := h.r * math.Sqrt(3) / 2
	for _, n := range normals {
		if math.Abs(dx*n[0]+dy*n[1]) > ap {
			return false
		}
	}
	return true
}

// normals returns the unit normals of the three pairs of edges.
func (h hex) normals() (n [3][2]float64) {
	for k := range 3 {
		a := h.theta + math.Pi/6 + float64(k)*math.Pi/3
		n[k] = [2]float64{math.Cos(a), math.Sin(a)}
	}
	return n
}

type synth struct {
	w, h     int
	domains  []hex
	bare     float64 // copper gray level at mid brightness, 0–255 scale
	contrast float64 // domain reflectance / copper reflectance
	gradient float64 // brightness rises by this fraction from one corner to the other
	texture  float64 // relative amplitude of the grain texture
	noise    float64 // standard deviation of the noise, 0–255 scale
	seed     uint64
}

// render returns the 0–255 scale gray levels (float) and the covered
// fraction of every pixel.
func (s synth) render() (lev []float64, frac []float32) {
	rng := rand.New(rand.NewPCG(s.seed, 0x5eed))
	// Grain texture: random values on a 48-px grid, bilinearly interpolated.
	const cell = 48
	gw, gh := s.w/cell+2, s.h/cell+2
	grid := make([]float64, gw*gh)
	for i := range grid {
		grid[i] = rng.Float64()*2 - 1
	}
	frac = make([]float32, s.w*s.h)
	for _, d := range s.domains {
		nd := d.normals()
		x0, x1 := max(0, int(d.cx-d.r)-1), min(s.w, int(d.cx+d.r)+2)
		y0, y1 := max(0, int(d.cy-d.r)-1), min(s.h, int(d.cy+d.r)+2)
		for y := y0; y < y1; y++ {
			for x := x0; x < x1; x++ {
				n := 0
				for j := range 4 {
					for i := range 4 {
						if d.inside(float64(x)+(float64(i)+0.5)/4, float64(y)+(float64(j)+0.5)/4, nd) {
							n++
						}
					}
				}
				f := &frac[y*s.w+x]
				*f = min(1, *f+float32(n)/16)
			}
		}
	}
	lev = make([]float64, s.w*s.h)
	for y := range s.h {
		gy := float64(y) / cell
		iy := int(gy)
		fy := gy - float64(iy)
		for x := range s.w {
			gx := float64(x) / cell
			ix := int(gx)
			fx := gx - float64(ix)
			t := (1-fy)*((1-fx)*grid[iy*gw+ix]+fx*grid[iy*gw+ix+1]) +
				fy*((1-fx)*grid[(iy+1)*gw+ix]+fx*grid[(iy+1)*gw+ix+1])
			tex := 1 + s.texture*(t+0.4*math.Sin(2*math.Pi*float64(y)/23))
			light := 1 + s.gradient*((float64(x)/float64(s.w)-0.5)*0.6+(float64(y)/float64(s.h)-0.5)*0.4)
			f := float64(frac[y*s.w+x])
			refl := s.bare * tex * (1 - f + f*s.contrast)
			lev[y*s.w+x] = refl*light + s.noise*rng.NormFloat64()
		}
	}
	return lev, frac
}

func (s synth) coverage(frac []float32) float64 {
	sum := 0.0
	for _, f := range frac {
		sum += float64(f)
	}
	return sum / float64(len(frac))
}

func clamp(v, hi float64) float64 { return math.Max(0, math.Min(hi, math.Round(v))) }

func (s synth) gray8() (*image.Gray, float64) {
	lev, frac := s.render()
	img := image.NewGray(image.Rect(0, 0, s.w, s.h))
	for i, v := range lev {
		img.Pix[i] = uint8(clamp(v, 255))
	}
	return img, s.coverage(frac)
}

func (s synth) gray16() (*image.Gray16, float64) {
	lev, frac := s.render()
	img := image.NewGray16(image.Rect(0, 0, s.w, s.h))
	for i, v := range lev {
		u := uint16(clamp(v*257, 65535))
		img.Pix[2*i], img.Pix[2*i+1] = uint8(u>>8), uint8(u)
	}
	return img, s.coverage(frac)
}

// rgba tints the levels like copper (red > green > blue).
func (s synth) rgba() (*image.RGBA, float64) {
	lev, frac := s.render()
	img := image.NewRGBA(image.Rect(0, 0, s.w, s.h))
	for i, v := range lev {
		img.Set(i%s.w, i/s.w, color.RGBA{uint8(clamp(v*1.25, 255)), uint8(clamp(v*0.95, 255)), uint8(clamp(v*0.7, 255)), 255})
	}
	return img, s.coverage(frac)
}

// separated lays out well-separated hexagons on a jittered grid of
// cols×rows cells that fill the image; each radius is 20–34 % of the cell.
// With edges set, one more domain is centred on each of the four borders.
// It returns the layout and how many domains touch the border.
func separated(w, h, cols, rows int, seed uint64, edges bool) (ds []hex, edge int) {
	rng := rand.New(rand.NewPCG(seed, 7))
	cw, ch := float64(w)/float64(cols), float64(h)/float64(rows)
	c := math.Min(cw, ch)
	// With edges, the cells next to the four border domains stay empty.
	skip := map[[2]int]bool{}
	if edges {
		for _, k := range [][2]int{{0, 0}, {0, 1}, {1, 0}, {cols - 1, 1}, {cols - 1, 2}, {1, rows - 1}, {2, rows - 1}} {
			skip[k] = true
		}
	}
	for j := range rows {
		for i := range cols {
			if skip[[2]int{i, j}] {
				continue
			}
			r := c * (0.20 + 0.14*rng.Float64())
			slack := c/2 - r - 4 // keep ≥ 8 px between domains and 4 px from borders
			ds = append(ds, hex{
				cx:    (float64(i)+0.5)*cw + slack*(2*rng.Float64()-1),
				cy:    (float64(j)+0.5)*ch + slack*(2*rng.Float64()-1),
				r:     r,
				theta: rng.Float64() * math.Pi / 3,
			})
		}
	}
	if edges {
		// Cut in half by the left, top, right and bottom borders, on the
		// grid lines between the empty cells.
		r := c * 0.2
		ds = append(ds,
			hex{cx: 0, cy: ch, r: r, theta: 0.1},
			hex{cx: cw, cy: 0, r: r, theta: 0.2},
			hex{cx: float64(w), cy: 2 * ch, r: r, theta: 0.3},
			hex{cx: 2 * cw, cy: float64(h), r: r, theta: 0.4},
		)
		edge = 4
	}
	return ds, edge
}
