package micrograph

import (
	"fmt"
	"image"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestPrepareWorkers: the one pass (prepare) on 1 to 5 bands gives exactly
// the plane and histogram of the steps done one after the other on one
// goroutine: every row converted and divided by the illumination, then
// smoothed (smooth, checked against scipy in TestSmoothAgainstScipy), then
// counted. Images of three types (8-bit gray, converted as flattened; 16-bit
// gray; RGBA) and radii 0 to 3 take every path; 23 rows over 5 bands give
// bands shorter than the kernel.
func TestPrepareWorkers(t *testing.T) {
	t.Parallel()
	ds, _ := separated(61, 23, 3, 2, 41, true)
	s := scene{w: 61, h: 23, domains: ds, bare: 150, contrast: 0.75, gradient: 0.5, texture: 0.04, noise: 4, seed: 42}
	g8, _ := s.gray8()
	g16, _ := s.gray16()
	rgba, _ := s.rgba()
	for name, img := range map[string]image.Image{"gray8": g8, "gray16": g16, "rgba": rgba} {
		bg := fitBackground(img, DefaultDegree)
		if bg == nil {
			t.Fatalf("%s: the illumination fit failed", name)
		}
		for _, withBg := range []*background{nil, bg} {
			for r := range 4 {
				want, wantHist := stepByStep(img, withBg, r)
				for workers := 1; workers <= 5; workers++ {
					t.Run(fmt.Sprintf("%s/flattened=%v/r=%d/workers=%d", name, withBg != nil, r, workers), func(t *testing.T) {
						p, hist := prepare(img, withBg, r, workers)
						if i := firstDifference(p.pix, want); i >= 0 {
							t.Fatalf("pixel (%d, %d): got %d, want %d", i%p.w, i/p.w, p.pix[i], want[i])
						}
						if !slices.Equal(hist, wantHist) {
							t.Fatalf("histogram differs from the counts of the plane")
						}
					})
				}
			}
		}
	}
}

// stepByStep is the pass of prepare done in separate steps on one
// goroutine.
func stepByStep(img image.Image, bg *background, r int) ([]uint16, []uint64) {
	b := img.Bounds()
	p := &plane{w: b.Dx(), h: b.Dy(), pix: make([]uint16, b.Dx()*b.Dy())}
	for y := range p.h {
		row := p.row(y)
		convertRow(img, b.Min.X, b.Min.Y+y, row)
		if bg != nil {
			knots := make([]float32, bg.nkx)
			applyRow(bg, y, row, 1, row, knots)
		}
	}
	smooth(p, r, 1)
	hist := make([]uint64, 1<<16)
	for _, v := range p.pix {
		hist[v]++
	}
	return p.pix, hist
}

// TestSolveLeastSquaresSplit: the normal equations built from the
// surface's sums and the step's sums give bit for bit the solution of the
// equations summed over the full design matrix (the surface's columns and
// a 0/1 column for m) sample by sample, for every degree.
func TestSolveLeastSquaresSplit(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(9, 10))
	for deg := 1; deg <= MaxDegree; deg++ {
		bg := &background{deg: deg, scaleU: 2.0 / 99, scaleV: 2.0 / 79}
		var xs, ys, zs []float64
		m := make([]bool, 0, 2000)
		for range 2000 {
			xs, ys = append(xs, 100*r.Float64()), append(ys, 80*r.Float64())
			zs = append(zs, 5+r.NormFloat64())
			m = append(m, r.IntN(3) == 0)
		}
		rows := scatteredDesign(bg, xs, ys)
		surf := surfaceSums(rows, zs)
		for _, withStep := range []bool{false, true} {
			got := solveLeastSquares(surf, rows, zs, m, withStep)
			want := fullDesignSolve(rows, zs, m, withStep)
			if got == nil || !slices.Equal(got, want) {
				t.Errorf("degree %d, step %v: got %v, want %v", deg, withStep, got, want)
			}
		}
	}
}

// scatteredDesign is the design matrix of the samples at (xs[i], ys[i]),
// which need not lie on a grid.
func scatteredDesign(bg *background, xs, ys []float64) designMatrix {
	nt := numTerms(bg.deg)
	d := designMatrix{nt: nt, a: make([]float64, len(xs)*nt)}
	for i := range xs {
		u, v := bg.uv(xs[i], ys[i])
		basis(bg.deg, u, v, d.row(i))
	}
	return d
}

// fullDesignSolve solves the normal equations summed sample by sample over
// the full design matrix.
func fullDesignSolve(d designMatrix, z []float64, m []bool, withStep bool) []float64 {
	nt := d.nt
	np := nt
	if withStep {
		np++
	}
	acc, bacc := make([]float64, np*np), make([]float64, np)
	a := make([]float64, np)
	for i := range z {
		copy(a, d.row(i))
		if withStep {
			a[nt] = 0
			if m[i] {
				a[nt] = 1
			}
		}
		for j := range np {
			bacc[j] += a[j] * z[i]
			for k := j; k < np; k++ {
				acc[j*np+k] += a[j] * a[k]
			}
		}
	}
	ata, atb := mat.NewSymDense(np, nil), mat.NewVecDense(np, bacc)
	for j := range np {
		for k := j; k < np; k++ {
			ata.SetSym(j, k, acc[j*np+k])
		}
	}
	var ch mat.Cholesky
	var x mat.VecDense
	if !ch.Factorize(ata) || ch.SolveVecTo(&x, atb) != nil {
		return nil
	}
	return slices.Clone(x.RawVector().Data)
}

// TestPairSmoother: the smoother on lane pairs (r = 2) writes and counts
// exactly what the general one writes with the taps 1 4 6 4 1, at odd and
// even widths down to one pixel and heights down to one row.
func TestPairSmoother(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(11, 12))
	for _, w := range []int{1, 2, 3, 4, 5, 8, 9, 4101} {
		for _, h := range []int{1, 2, 3, 6} {
			src := &plane{w: w, h: h, pix: make([]uint16, w*h)}
			for i := range src.pix {
				src.pix[i] = uint16(r.Uint32())
				if r.IntN(4) == 0 {
					src.pix[i] = 65535 // the largest sums
				}
			}
			read := func(y int, dst []uint16) { copy(dst, src.row(y)) }
			got, want := &plane{w: w, h: h, pix: make([]uint16, w*h)}, &plane{w: w, h: h, pix: make([]uint16, w*h)}
			gotHist, wantHist := new([1 << 16]uint32), new([1 << 16]uint32)
			newPairSmoother(got, 0, h, read).run(gotHist)
			newBandSmoother(want, 2, 0, h, read).run(wantHist)
			if i := firstDifference(got.pix, want.pix); i >= 0 {
				t.Errorf("%d×%d: pixel (%d, %d): got %d, want %d", w, h, i%w, i/w, got.pix[i], want.pix[i])
			}
			if *gotHist != *wantHist {
				t.Errorf("%d×%d: histograms differ", w, h)
			}
		}
	}
}
