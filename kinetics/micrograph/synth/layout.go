package synth

import (
	"math"
	"math/rand/v2"
)

// Scatter places n hexagons of circumradius r at uniformly random centres
// in a w×h field, each rotated uniformly in [0, π/3). Domains may overlap
// and stick out of the field. It draws three numbers from rng per domain
// (x, y, rotation), in order.
func Scatter(w, h, n int, r float64, rng *rand.Rand) []Hexagon {
	ds := make([]Hexagon, n)
	for i := range ds {
		ds[i] = Hexagon{X: rng.Float64() * float64(w), Y: rng.Float64() * float64(h), R: r, Theta: rng.Float64() * math.Pi / 3}
	}
	return ds
}

// Separated lays out well-separated hexagons on a jittered grid of
// cols×rows cells that fill a w×h field: one per cell, its circumradius
// 20–34 % of the cell, at least 8 pixels from its neighbours and 4 from
// the border. With edges set, one more domain is centred on each of the
// four borders (cut in half by it) and the cells next to them stay empty;
// those four come last. It returns the layout and how many domains touch
// the border (4 with edges, else 0). Needs cols, rows ≥ 3 with edges.
func Separated(w, h, cols, rows int, rng *rand.Rand, edges bool) (ds []Hexagon, edge int) {
	cw, ch := float64(w)/float64(cols), float64(h)/float64(rows)
	c := math.Min(cw, ch)
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
			ds = append(ds, Hexagon{
				X:     (float64(i)+0.5)*cw + slack*(2*rng.Float64()-1),
				Y:     (float64(j)+0.5)*ch + slack*(2*rng.Float64()-1),
				R:     r,
				Theta: rng.Float64() * math.Pi / 3,
			})
		}
	}
	if edges {
		// Cut in half by the left, top, right and bottom borders, on the
		// grid lines between the empty cells.
		r := c * 0.2
		ds = append(ds,
			Hexagon{X: 0, Y: ch, R: r, Theta: 0.1},
			Hexagon{X: cw, Y: 0, R: r, Theta: 0.2},
			Hexagon{X: float64(w), Y: 2 * ch, R: r, Theta: 0.3},
			Hexagon{X: 2 * cw, Y: float64(h), R: r, Theta: 0.4},
		)
		edge = 4
	}
	return ds, edge
}

// Grain returns a copper grain texture for a w×h field with the given
// relative amplitude: random values in [−1, 1) on a 48-pixel grid,
// interpolated bilinearly, plus rolling lines of period 23 pixels,
//
//	T = 1 + amplitude·(g(x, y) + 0.4·sin(2πy/23))
//
// It draws the grid, (w/48 + 2)·(h/48 + 2) numbers, from rng now.
func Grain(w, h int, amplitude float64, rng *rand.Rand) Texture {
	const cell = 48
	gw, gh := w/cell+2, h/cell+2
	grid := make([]float64, gw*gh)
	for i := range grid {
		grid[i] = rng.Float64()*2 - 1
	}
	lines := make([]float64, h) // the rolling lines, one value a row
	for y := range lines {
		lines[y] = 0.4 * math.Sin(2*math.Pi*float64(y)/23)
	}
	return func(x, y int) float64 {
		gy := float64(y) / cell
		iy := int(gy)
		fy := gy - float64(iy)
		gx := float64(x) / cell
		ix := int(gx)
		fx := gx - float64(ix)
		t := (1-fy)*((1-fx)*grid[iy*gw+ix]+fx*grid[iy*gw+ix+1]) +
			fy*((1-fx)*grid[(iy+1)*gw+ix]+fx*grid[(iy+1)*gw+ix+1])
		line := 0.4 * math.Sin(2*math.Pi*float64(y)/23)
		if y >= 0 && y < len(lines) {
			line = lines[y]
		}
		return 1 + amplitude*(t+line)
	}
}

// Ripples returns a texture of two families of rolling lines, one oblique
// and one along x,
//
//	T = 1 + a·sin(x/17 + y/29) + b·sin(y/7)
//
// with no randomness.
func Ripples(a, b float64) Texture {
	return func(x, y int) float64 {
		return 1 + a*math.Sin(float64(x)/17+float64(y)/29) + b*math.Sin(float64(y)/7)
	}
}
